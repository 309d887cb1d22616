"""Substituents written as SMILES with one attachment atom: ``[*]C#N``, ``[*:1]OC``, ``[*][H]``.

The canonical key of a substituent is RDKit's canonical SMILES of the fragment with the
attachment as a plain ``*`` (map numbers and isotope labels on it removed), e.g. ``*OC`` for
methoxy and ``*[H]`` for hydrogen. Every descriptor is cached under this key.
"""

from __future__ import annotations

from functools import lru_cache

from rdkit import Chem

from .checks import StructureError, check_elements_and_size, parse_smiles

HYDROGEN_KEY = "*[H]"
_HYDROGEN_SPELLINGS = {"h", "[h]", "*[h]", "[*][h]", "[h][*]", "[h]*"}
#: Largest substituent (heavy atoms) accepted.
MAX_SUBSTITUENT_HEAVY_ATOMS = 100


def attachment_index(mol: Chem.Mol, text: str = "") -> int:
    """Index of the single dummy atom; :class:`StructureError` unless there is exactly one."""
    dummies = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() == 0]
    if len(dummies) == 0:
        raise StructureError(f"substituent {text!r} has no attachment atom; write it as [*]{text}"
                             if text else "substituent has no attachment atom", "attachment")
    if len(dummies) > 1:
        raise StructureError(f"substituent {text!r} has {len(dummies)} attachment atoms; exactly one is needed",
                             "attachment")
    atom = mol.GetAtomWithIdx(dummies[0])
    if atom.GetDegree() != 1:
        raise StructureError(f"the attachment atom of {text!r} must be bonded to exactly one atom "
                             f"(it has {atom.GetDegree()})", "attachment")
    return dummies[0]


def canonical_key_from_mol(mol: Chem.Mol) -> str:
    """Canonical key of a substituent molecule whose single dummy atom is the attachment."""
    m = Chem.Mol(mol)
    for a in m.GetAtoms():
        if a.GetAtomicNum() == 0:
            a.SetAtomMapNum(0)
            a.SetIsotope(0)
    return Chem.MolToSmiles(m)


@lru_cache(maxsize=200_000)
def substituent_key(text: str) -> str:
    """Canonical key of the substituent written as ``text``; raises :class:`StructureError`."""
    s = "" if text is None else str(text).strip()
    if s.lower() in _HYDROGEN_SPELLINGS:
        return HYDROGEN_KEY
    mol = parse_smiles(s, "substituent SMILES")
    attachment_index(mol, s)
    check_elements_and_size(mol, MAX_SUBSTITUENT_HEAVY_ATOMS, "substituent")
    return canonical_key_from_mol(mol)


@lru_cache(maxsize=50_000)
def substituent_mol(key: str) -> Chem.Mol:
    """The molecule of a canonical key (explicit H kept on the attachment for hydrogen)."""
    mol = Chem.MolFromSmiles(key, sanitize=True)
    if mol is None:  # pragma: no cover - keys come from RDKit itself
        raise StructureError(f"cannot parse substituent key {key!r}")
    return mol


def capped_with_hydrogen(key: str) -> Chem.Mol:
    """R–H: the substituent with its attachment replaced by a hydrogen (implicit Hs)."""
    mol = Chem.RWMol(substituent_mol(key))
    for atom in mol.GetAtoms():
        if atom.GetAtomicNum() == 0:
            atom.SetAtomicNum(1)
            atom.SetIsotope(0)
            atom.SetNoImplicit(True)
    m = mol.GetMol()
    Chem.SanitizeMol(m)
    if key == HYDROGEN_KEY:
        return m  # H2 keeps both explicit hydrogens
    return Chem.RemoveHs(m)
