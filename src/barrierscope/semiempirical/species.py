"""The GFN2-xTB energy of one species: the lowest over a conformer ensemble.

Levels: ``sp`` — single points on force-field geometries, MMFF94 and UFF both (seconds per
species; see :func:`~.conformers.build_ensemble` on why both); ``opt`` —
GFN2-xTB optimisation of the ``n_opt`` lowest conformers by single-point energy, then the
lowest optimised energy. Implicit solvent (ALPB) when a solvent is named. Energies are
electronic energies in kcal/mol (absolute, so only differences mean anything).
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from ..units import factor_to_kcal
from .conformers import build_ensemble, distance_bonds, graph_bonds
from .gfn2 import XtbError, optimize_geometry, singlepoint

LEVELS = ("sp", "opt")
CODE_VERSION = "species-2"


@dataclass(frozen=True)
class XtbSettings:
    level: str = "sp"
    solvent: str | None = "water"
    n_conformers: int | None = None
    n_opt: int = 2
    seed: int = 0xB5
    time_limit: float = 600.0  # seconds per species

    def __post_init__(self):
        if self.level not in LEVELS:
            raise ValueError(f"unknown xTB level {self.level!r}; valid choices: {', '.join(LEVELS)}")

    def cache_version(self) -> str:
        solvent = self.solvent or "gas"
        return f"{CODE_VERSION}|{self.level}|{solvent}|{self.n_conformers or 'auto'}|{self.n_opt}|{self.seed}"


def species_energy(smiles: str, settings: XtbSettings = XtbSettings(), uhf: int | None = None) -> dict:
    """{"energy": kcal/mol, "n_conformers": int, "force_field": str} for one species."""
    deadline = time.monotonic() + settings.time_limit
    ens = build_ensemble(smiles, settings.n_conformers, seed=settings.seed, both_force_fields=True)
    if uhf is None:
        from rdkit.Chem import Descriptors

        uhf = Descriptors.NumRadicalElectrons(ens.mol)
    hartree = factor_to_kcal("hartree")
    energies = []
    for conf in ens.conformers:
        if time.monotonic() > deadline:
            raise XtbError("time limit reached", "time_limit")
        e, _ = singlepoint(ens.numbers, conf.coordinates, ens.charge, uhf, solvent=settings.solvent)
        energies.append(e)
    order = np.argsort(energies)
    best = float(energies[order[0]])
    if settings.level == "opt":
        best = np.inf
        bonds = graph_bonds(ens.mol)
        for i in order[: settings.n_opt]:
            e, xyz = optimize_geometry(ens.numbers, ens.conformers[i].coordinates, ens.charge, uhf,
                                       solvent=settings.solvent, deadline=deadline)
            # An optimisation that makes or breaks a bond has found another molecule.
            if distance_bonds(ens.numbers, xyz) != bonds:
                continue
            best = min(best, e)
        if not np.isfinite(best):
            raise XtbError("every GFN2-xTB optimisation changed the bonding (the species rearranged); "
                           "single points on the force-field geometry (level sp) avoid this; or check the structure", "rearranged")
    return {"energy": best * hartree, "n_conformers": float(len(ens.conformers))}
