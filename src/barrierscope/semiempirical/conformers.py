"""Conformer ensembles: ETKDG embedding with fixed seeds, then force-field optimisation.

ETKDG: S. Riniker, G. A. Landrum, J. Chem. Inf. Model. 2015, 55, 2562. MMFF94:
T. A. Halgren, J. Comput. Chem. 1996, 17, 490; UFF (A. K. Rappé et al., J. Am. Chem. Soc.
1992, 114, 10024) where MMFF has no parameters. Deterministic: the same molecule and
settings give the same coordinates.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from rdkit import Chem
from rdkit.Chem import AllChem

from ..structures.checks import StructureError, quietly


@dataclass
class Conformer:
    coordinates: np.ndarray     # (n_atoms, 3), Å
    ff_energy: float            # kcal/mol, force-field energy (for ranking only)


@dataclass
class Ensemble:
    mol: Chem.Mol               # with explicit hydrogens
    numbers: np.ndarray         # atomic numbers
    charge: int
    conformers: list[Conformer]
    force_field: str


def conformer_count(mol: Chem.Mol, requested: int | None = None) -> int:
    """Default ensemble size: more conformers for more rotatable bonds (capped)."""
    if requested:
        return int(requested)
    from rdkit.Chem import rdMolDescriptors

    rot = rdMolDescriptors.CalcNumRotatableBonds(mol)
    return int(min(3 + 2 * rot, 12))


@quietly
def build_ensemble(smiles_or_mol, n_conformers: int | None = None, seed: int = 0xB5,
                   max_iters: int = 2000, *, both_force_fields: bool = False) -> Ensemble:
    """Embed and force-field-optimise conformers, lowest force-field energy first.

    With ``both_force_fields`` every embedding is relaxed with MMFF94 and, separately, with
    UFF, and both geometries are kept: MMFF94 is poor for charge-separated species such as
    1,3-dipoles (measured here: a nitrile imine's MMFF94 geometry lies about 100 kcal/mol
    above its GFN2-xTB minimum, its UFF geometry about 26), so a later GFN2-xTB single
    point picks whichever is lower.
    """
    mol = Chem.MolFromSmiles(smiles_or_mol) if isinstance(smiles_or_mol, str) else Chem.Mol(smiles_or_mol)
    if mol is None:
        raise StructureError(f"cannot parse {smiles_or_mol!r}", "unparseable")
    mol = Chem.AddHs(mol)
    n = conformer_count(mol, n_conformers)
    params = AllChem.ETKDGv3()
    params.randomSeed = int(seed)
    params.pruneRmsThresh = 0.1
    params.numThreads = 1
    ids = list(AllChem.EmbedMultipleConfs(mol, numConfs=n, params=params))
    if not ids:
        params.useRandomCoords = True
        ids = list(AllChem.EmbedMultipleConfs(mol, numConfs=n, params=params))
    if not ids:
        raise StructureError("no 3D conformer could be embedded", "no_conformer")
    raw = Chem.Mol(mol) if both_force_fields else None
    if AllChem.MMFFHasAllMoleculeParams(mol):
        results = AllChem.MMFFOptimizeMoleculeConfs(mol, numThreads=1, maxIters=max_iters)
        ff = "MMFF94"
    elif AllChem.UFFHasAllMoleculeParams(mol):
        results = AllChem.UFFOptimizeMoleculeConfs(mol, numThreads=1, maxIters=max_iters)
        ff = "UFF"
    else:
        results = [(0, 0.0) for _ in ids]
        ff = "none"
    confs = []
    for cid, (_, energy) in zip(ids, results):
        xyz = mol.GetConformer(cid).GetPositions()
        confs.append(Conformer(np.array(xyz, dtype=float), float(energy)))
    confs.sort(key=lambda c: c.ff_energy)
    if both_force_fields and ff == "MMFF94" and AllChem.UFFHasAllMoleculeParams(raw):
        AllChem.UFFOptimizeMoleculeConfs(raw, numThreads=1, maxIters=max_iters)
        extra = [Conformer(np.array(raw.GetConformer(cid).GetPositions(), dtype=float), float("nan")) for cid in ids]
        confs = confs + extra
        ff = "MMFF94+UFF"
    numbers = np.array([a.GetAtomicNum() for a in mol.GetAtoms()], dtype=int)
    return Ensemble(mol=mol, numbers=numbers, charge=int(Chem.GetFormalCharge(mol)), conformers=confs,
                    force_field=ff)


def force_field_relax(mol: Chem.Mol, coordinates: np.ndarray, max_iters: int = 2000) -> tuple[np.ndarray, str]:
    """Relax ``coordinates`` (Å) of ``mol`` (explicit H) within their basin; (coordinates, force field).

    Returns the input unchanged, with force field "none", when neither MMFF94 nor UFF has
    parameters for the molecule.
    """
    m = Chem.Mol(mol)
    m.RemoveAllConformers()
    conf = Chem.Conformer(m.GetNumAtoms())
    for i, xyz in enumerate(np.asarray(coordinates, dtype=float)):
        conf.SetAtomPosition(i, xyz.tolist())
    m.AddConformer(conf, assignId=True)
    if AllChem.MMFFHasAllMoleculeParams(m):
        AllChem.MMFFOptimizeMolecule(m, maxIters=max_iters)
        ff = "MMFF94"
    elif AllChem.UFFHasAllMoleculeParams(m):
        AllChem.UFFOptimizeMolecule(m, maxIters=max_iters)
        ff = "UFF"
    else:
        return np.asarray(coordinates, dtype=float), "none"
    return np.array(m.GetConformer().GetPositions(), dtype=float), ff


def distance_bonds(numbers, coordinates, scale: float = 1.25) -> set[tuple[int, int]]:
    """Atom pairs closer than ``scale`` × the sum of their covalent radii (RDKit's table)."""
    from scipy.spatial.distance import pdist, squareform

    pt = Chem.GetPeriodicTable()
    radii = np.array([pt.GetRcovalent(int(z)) for z in numbers])
    d = squareform(pdist(np.asarray(coordinates, dtype=float)))
    limit = scale * (radii[:, None] + radii[None, :])
    i, j = np.nonzero(np.triu(d < limit, k=1))
    return set(zip(i.tolist(), j.tolist()))


def graph_bonds(mol: Chem.Mol) -> set[tuple[int, int]]:
    return {tuple(sorted((b.GetBeginAtomIdx(), b.GetEndAtomIdx()))) for b in mol.GetBonds()}
