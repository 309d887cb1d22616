"""Readers for open reference data used to check barrierscope against the outside world.

The [3+2] dipolar cycloaddition set: T. Stuyver, K. Jorner, C. W. Coley, "Reaction
profiles for quantum chemistry-computed [3+2] cycloaddition reactions", Sci. Data 2023,
10, 66 (MIT licence). 5,269 atom-mapped reactions ``dipole.dipolarophile>>cycloadduct``
with DFT activation and reaction free energies (kcal/mol, implicit water, 298.15 K).
The file is read where it lies; barrierscope never copies it.

Roles are recovered from the atom maps: the two bonds present in the product but not in
the reactants join the dipole's two terminal atoms (which share a neighbour, the dipole's
middle atom) to the two atoms of the dipolarophile's reacting double or triple bond.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

#: Where the shared copy lives relative to the project root (``../shared/...``).
CYCLOADDITION_RELATIVE = Path("..") / "shared" / "datasets" / "cycloaddition-3plus2" / "full_dataset.csv"
CYCLOADDITION_CITATION = ("T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 "
                          "(doi:10.1038/s41597-023-01977-8)")


def cycloaddition_path(project_root: str | os.PathLike | None = None) -> Path:
    """The shared dataset's path: ``$BARRIERSCOPE_CYCLOADDITION`` or ``<root>/../shared/...``."""
    env = os.environ.get("BARRIERSCOPE_CYCLOADDITION")
    if env:
        return Path(env)
    root = Path(project_root) if project_root else Path.cwd()
    return (root / CYCLOADDITION_RELATIVE).resolve()


@dataclass(frozen=True)
class CycloadditionRoles:
    dipole: str            # SMILES without atom maps
    dipolarophile: str
    product: str
    dipole_class: str      # terminal–middle–terminal elements, terminals sorted, e.g. "C-N-N"
    partner_bond: str      # the dipolarophile's reacting bond, e.g. "C=C", "C#C", "C=O"


def _strip_maps(mol) -> str:
    from rdkit import Chem

    m = Chem.Mol(mol)
    for a in m.GetAtoms():
        a.SetAtomMapNum(0)
    return Chem.MolToSmiles(m)


def reaction_roles(rxn_smiles: str) -> CycloadditionRoles:
    """Dipole, dipolarophile, product and class of one mapped cycloaddition."""
    from rdkit import Chem

    left, right = rxn_smiles.split(">>")
    reactants = [Chem.MolFromSmiles(s) for s in left.split(".")]
    product = Chem.MolFromSmiles(right)
    if product is None or any(m is None for m in reactants) or len(reactants) != 2:
        raise ValueError(f"cannot parse {rxn_smiles!r} as a two-reactant reaction")
    owner: dict[int, int] = {}
    old_bonds: set[frozenset] = set()
    for k, mol in enumerate(reactants):
        for a in mol.GetAtoms():
            owner[a.GetAtomMapNum()] = k
        for b in mol.GetBonds():
            old_bonds.add(frozenset((b.GetBeginAtom().GetAtomMapNum(), b.GetEndAtom().GetAtomMapNum())))
    new = [frozenset((b.GetBeginAtom().GetAtomMapNum(), b.GetEndAtom().GetAtomMapNum()))
           for b in product.GetBonds()
           if frozenset((b.GetBeginAtom().GetAtomMapNum(), b.GetEndAtom().GetAtomMapNum())) not in old_bonds]
    if len(new) != 2:
        raise ValueError(f"expected two new bonds, found {len(new)} in {rxn_smiles!r}")
    ends: dict[int, list[int]] = {0: [], 1: []}
    for bond in new:
        for m in bond:
            ends[owner[m]].append(m)
    dipole_k = dipolarophile_k = None
    info = {}
    for k, mol in enumerate(reactants):
        idx = {a.GetAtomMapNum(): a.GetIdx() for a in mol.GetAtoms()}
        i, j = (idx[m] for m in ends[k])
        bond = mol.GetBondBetweenAtoms(i, j)
        if bond is not None:
            dipolarophile_k = k
            sym = {Chem.BondType.DOUBLE: "=", Chem.BondType.TRIPLE: "#"}.get(bond.GetBondType(), "~")
            el = sorted(mol.GetAtomWithIdx(t).GetSymbol() for t in (i, j))
            info["partner"] = f"{el[0]}{sym}{el[1]}"
        else:
            ni = {n.GetIdx() for n in mol.GetAtomWithIdx(i).GetNeighbors()}
            nj = {n.GetIdx() for n in mol.GetAtomWithIdx(j).GetNeighbors()}
            common = sorted(ni & nj)
            if not common:
                raise ValueError(f"reacting atoms of one reactant are neither bonded nor share a neighbour: {rxn_smiles!r}")
            dipole_k = k
            terminals = sorted(mol.GetAtomWithIdx(t).GetSymbol() for t in (i, j))
            middle = mol.GetAtomWithIdx(common[0]).GetSymbol()
            info["class"] = f"{terminals[0]}-{middle}-{terminals[1]}"
    if dipole_k is None or dipolarophile_k is None:
        raise ValueError(f"cannot tell dipole from dipolarophile in {rxn_smiles!r}")
    return CycloadditionRoles(dipole=_strip_maps(reactants[dipole_k]),
                              dipolarophile=_strip_maps(reactants[dipolarophile_k]),
                              product=_strip_maps(product), dipole_class=info["class"],
                              partner_bond=info["partner"])


def load_cycloaddition(path: str | os.PathLike) -> pd.DataFrame:
    """The dataset with role columns added: dipole, dipolarophile, product, dipole_class,
    partner_bond, and ``family`` = dipole_class + '/' + partner_bond."""
    from ..structures.checks import quiet_rdkit

    df = pd.read_csv(path)
    with quiet_rdkit():
        roles = [reaction_roles(s) for s in df["rxn_smiles"]]
    df["dipole"] = [r.dipole for r in roles]
    df["dipolarophile"] = [r.dipolarophile for r in roles]
    df["product"] = [r.product for r in roles]
    df["dipole_class"] = [r.dipole_class for r in roles]
    df["partner_bond"] = [r.partner_bond for r in roles]
    df["family"] = df["dipole_class"] + "/" + df["partner_bond"]
    return df
