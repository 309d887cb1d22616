"""The ``xtb`` tier for substituents: a computed Hammett-like scale.

Hammett's σ is defined by the ionisation of substituted benzoic acids in water
(L. P. Hammett, J. Am. Chem. Soc. 1937, 59, 96). The computed analogue: put the substituent
X at the meta or para position of benzoic acid; embed conformers (ETKDG) and relax them
with MMFF94; take the conformer of lowest GFN2-xTB energy in implicit water (ALPB); make
the carboxylate from that same conformer (acidic H removed, relaxed with the force field
within its basin) and compute ΔE(X) = E(ArCOO⁻) − E(ArCOOH); report ΔΔE(X) = ΔE(X) − ΔE(H)
in kcal/mol. Deriving the anion from the acid's conformer keeps conformational noise out of
the difference. Where no force field has parameters (SF5, say), both species are
optimised with GFN2-xTB instead. An electron-withdrawing group makes ΔΔE negative.

ΔΔE is put on the σ scale by a straight line fitted, per position, to the tabulated σm or
σp of a fixed set of neutral reference groups from the ``table`` tier (Hansch, Leo, Taft
1991). Charged groups stay out of the calibration: their tabulated σ depends on the medium
far more than a continuum model follows. The calibration is computed once and kept in the
descriptor cache. Columns ``sigma_m_xtb``, ``sigma_p_xtb`` (dimensionless, σ scale).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from rdkit import Chem

VERSION = "xtb-sigma-2"
SOLVENT = "water"

#: Probe cores: the substituent goes on [*:1]; the acidic oxygen carries map number 2.
PROBES = {"m": "[OH:2]C(=O)c1cccc([*:1])c1", "p": "[OH:2]C(=O)c1ccc([*:1])cc1"}

#: Neutral reference groups for the calibration (names in the table tier).
CALIBRATION_GROUPS = (
    "H", "CH3", "C2H5", "i-C3H7", "t-C4H9", "CF3", "CN", "NO2", "F", "Cl", "Br", "I", "OH", "OCH3",
    "NH2", "N(CH3)2", "NHCOCH3", "SCH3", "SO2CH3", "CHO", "COCH3", "COOCH3", "CONH2", "C6H5",
    "OCF3", "SCF3", "C≡CH", "CH=CH2",
)


def probe_acid(key: str, position: str) -> Chem.Mol:
    """The benzoic acid carrying substituent ``key`` at ``position`` ("m" or "p")."""
    core = Chem.MolFromSmiles(PROBES[position])
    sub = Chem.MolFromSmiles(key)
    for a in sub.GetAtoms():
        if a.GetAtomicNum() == 0:
            a.SetAtomMapNum(1)
    return Chem.RemoveHs(Chem.molzip(core, sub))


@lru_cache(maxsize=8192)
def deprotonation_energy(key: str, position: str) -> float:
    """ΔE = E(carboxylate) − E(acid), kcal/mol, GFN2-xTB/ALPB(water) electronic energies."""
    from ..semiempirical.conformers import build_ensemble, force_field_relax
    from ..semiempirical.gfn2 import optimize_geometry, singlepoint
    from ..units import factor_to_kcal

    ens = build_ensemble(probe_acid(key, position))
    oxygen = next(a.GetIdx() for a in ens.mol.GetAtoms() if a.GetAtomMapNum() == 2)
    proton = next(n.GetIdx() for n in ens.mol.GetAtomWithIdx(oxygen).GetNeighbors() if n.GetAtomicNum() == 1)
    energies = [singlepoint(ens.numbers, c.coordinates, ens.charge, 0, solvent=SOLVENT)[0] for c in ens.conformers]
    best = ens.conformers[int(np.argmin(energies))].coordinates
    e_acid = float(min(energies))
    if ens.force_field == "none":
        e_acid, best = optimize_geometry(ens.numbers, best, ens.charge, 0, solvent=SOLVENT)

    anion = Chem.RWMol(ens.mol)
    anion.RemoveAtom(proton)
    anion.GetAtomWithIdx(oxygen).SetFormalCharge(-1)
    anion = anion.GetMol()
    Chem.SanitizeMol(anion)
    xyz, ff = force_field_relax(anion, np.delete(best, proton, axis=0))
    numbers = np.array([a.GetAtomicNum() for a in anion.GetAtoms()], dtype=int)
    if ff == "none":
        e_anion, _ = optimize_geometry(numbers, xyz, ens.charge - 1, 0, solvent=SOLVENT)
    else:
        e_anion, _ = singlepoint(numbers, xyz, ens.charge - 1, 0, solvent=SOLVENT)
    return (e_anion - e_acid) * factor_to_kcal("hartree")


def deprotonation_shift(key: str, position: str) -> float:
    """ΔΔE(X) at ``position``, kcal/mol, relative to hydrogen."""
    return deprotonation_energy(key, position) - deprotonation_energy("*[H]", position)


def compute_calibration() -> dict:
    """Least-squares σ = a·ΔΔE + b per position over :data:`CALIBRATION_GROUPS`."""
    from ..structures.substituent import substituent_key
    from .hammett import ENTRIES

    by_name = {e.name: e for e in ENTRIES}
    out = {}
    for pos, attr in (("m", "sigma_m"), ("p", "sigma_p")):
        x = np.array([deprotonation_shift(substituent_key(by_name[n].smiles), pos) for n in CALIBRATION_GROUPS])
        y = np.array([getattr(by_name[n], attr) for n in CALIBRATION_GROUPS])
        a, b = np.polyfit(x, y, 1)
        out[pos] = {"slope": float(a), "intercept": float(b), "r": float(np.corrcoef(x, y)[0, 1]),
                    "n": int(x.size)}
    return out


_calibration: dict | None = None


def calibration(cache=None) -> dict:
    """The calibration, from memory, the descriptor cache, or computed (then stored)."""
    global _calibration
    if _calibration is not None:
        return _calibration
    from .cache import DescriptorCache

    cache = cache if cache is not None else DescriptorCache("default")
    stored = cache.get_many("xtb:calibration", VERSION, ["sigma"]).get("sigma")
    if stored is None:
        stored = compute_calibration()
        cache.put_many("xtb:calibration", VERSION, {"sigma": stored})
    _calibration = stored
    return stored


def xtb_sigma_descriptors(key: str, cal: dict | None = None) -> dict[str, float]:
    """σm and σp on the computed scale for the substituent ``key`` (``cal``: the calibration)."""
    cal = cal if cal is not None else calibration()
    return {
        "sigma_m_xtb": cal["m"]["slope"] * deprotonation_shift(key, "m") + cal["m"]["intercept"],
        "sigma_p_xtb": cal["p"]["slope"] * deprotonation_shift(key, "p") + cal["p"]["intercept"],
    }
