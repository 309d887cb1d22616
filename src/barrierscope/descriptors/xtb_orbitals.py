"""The ``xtb`` tier for whole molecules: GFN2-xTB frontier-orbital energies and dipole.

Frontier orbitals govern many reaction families (K. Fukui, T. Yonezawa, H. Shingu, J. Chem.
Phys. 1952, 20, 722; for cycloadditions K. N. Houk, Acc. Chem. Res. 1975, 8, 361). For the
conformer of lowest GFN2-xTB energy in implicit water (ALPB), from an MMFF94 ensemble:

- ``homo_xtb``, ``lumo_xtb``: highest occupied and lowest unoccupied orbital energies, eV;
- ``gap_xtb``: their difference, eV;
- ``dipole_xtb``: dipole moment, debye.
"""

from __future__ import annotations

import numpy as np
from scipy import constants as _c

VERSION = "xtb-orbitals-1"
SOLVENT = "water"
EV_PER_HARTREE = _c.physical_constants["Hartree energy in eV"][0]
#: 1 e·bohr in debye (1 D = 1e-21 C·m²/s / c).
DEBYE_PER_AU = _c.e * _c.physical_constants["Bohr radius"][0] / (1e-21 / _c.c)


def xtb_molecule_descriptors(key: str) -> dict[str, float]:
    from rdkit.Chem import Descriptors

    from ..semiempirical.conformers import build_ensemble
    from ..semiempirical.gfn2 import singlepoint

    ens = build_ensemble(key)
    uhf = Descriptors.NumRadicalElectrons(ens.mol)
    best = None
    for conf in ens.conformers:
        energy, res = singlepoint(ens.numbers, conf.coordinates, ens.charge, uhf, solvent=SOLVENT)
        if best is None or energy < best[0]:
            best = (energy, res)
    res = best[1]
    eps = np.asarray(res.get("orbital-energies"), dtype=float).ravel()
    occ = np.asarray(res.get("orbital-occupations"), dtype=float).ravel()
    occupied = occ > 1e-3
    homo = float(eps[occupied].max()) * EV_PER_HARTREE
    lumo = float(eps[~occupied].min()) * EV_PER_HARTREE if (~occupied).any() else float("nan")
    dipole = float(np.linalg.norm(np.asarray(res.get("dipole"), dtype=float))) * DEBYE_PER_AU
    return {"homo_xtb": homo, "lumo_xtb": lumo, "gap_xtb": lumo - homo, "dipole_xtb": dipole}
