"""Whole molecules: parsed, checked and keyed by canonical SMILES."""

from __future__ import annotations

from functools import lru_cache

from rdkit import Chem

from .checks import (
    DEFAULT_MAX_HEAVY_ATOMS,
    StructureError,
    check_elements_and_size,
    parse_smiles,
)


def molecule_key(text: str, max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> str:
    """Canonical SMILES of the molecule written as ``text``; raises :class:`StructureError`."""
    mol = parse_smiles(text, "SMILES")
    if any(a.GetAtomicNum() == 0 for a in mol.GetAtoms()):
        raise StructureError(f"{text!r} has an attachment atom (*); whole molecules have none — "
                             f"use substituent mode for substituents", "attachment")
    check_elements_and_size(mol, max_heavy_atoms)
    return Chem.MolToSmiles(mol)


@lru_cache(maxsize=50_000)
def molecule_from_key(key: str) -> Chem.Mol:
    mol = Chem.MolFromSmiles(key)
    if mol is None:  # pragma: no cover - keys come from RDKit itself
        raise StructureError(f"cannot parse molecule key {key!r}")
    return mol
