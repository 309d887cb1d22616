"""Checks shared by every structure reader: parsing, size limits and supported elements."""

from __future__ import annotations

import re

from rdkit import Chem, RDLogger

_SPACE = re.compile(r"\s")
_EXPLICIT_H = re.compile(r"\[\d*H[^a-z]")

#: Largest molecule (heavy atoms) accepted unless the user raises the limit.
DEFAULT_MAX_HEAVY_ATOMS = 200
#: Heaviest element accepted: GFN2-xTB is parametrised through radon (Z = 86)
#: (C. Bannwarth, S. Ehlert, S. Grimme, J. Chem. Theory Comput. 2019, 15, 1652).
MAX_ATOMIC_NUMBER = 86


class StructureError(ValueError):
    """A structure in one row that cannot be used; the message says why, briefly."""

    def __init__(self, message: str, kind: str = "structure"):
        super().__init__(message)
        self.kind = kind


_quiet = False


def quiet_rdkit() -> None:
    """Silence RDKit's own stderr chatter; barrierscope reports problems per row instead."""
    global _quiet
    if not _quiet:
        RDLogger.DisableLog("rdApp.*")
        _quiet = True


def parse_smiles(text: str, what: str = "SMILES") -> Chem.Mol:
    """A sanitised molecule from ``text``, or :class:`StructureError` saying what is wrong."""
    quiet_rdkit()
    if text is None:
        raise StructureError(f"empty {what}", "empty")
    s = str(text).strip()
    if not s or s.lower() in ("nan", "none", "null"):
        raise StructureError(f"empty {what}", "empty")
    if _SPACE.search(s):
        raise StructureError(f"{what} {s!r} contains white space", "unparseable")
    mol = Chem.MolFromSmiles(s, sanitize=False)
    if mol is None:
        raise StructureError(f"cannot parse {what} {_short(s)}", "unparseable")
    try:
        Chem.SanitizeMol(mol)
    except Exception as exc:  # RDKit raises several sanitisation exception types
        reason = str(exc).split("\n")[0].strip() or type(exc).__name__
        raise StructureError(f"{what} {_short(s)} fails sanitisation: {reason}", "unparseable") from None
    if _EXPLICIT_H.search(s):
        # As RDKit's own parser does by default: explicit hydrogens become implicit, so
        # "[H]OC" and "OC" are the same molecule (an H on a dummy atom is kept).
        mol = Chem.RemoveHs(mol)
    return mol


def check_elements_and_size(mol: Chem.Mol, max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS,
                            what: str = "molecule") -> None:
    heavy = mol.GetNumHeavyAtoms()
    if heavy > max_heavy_atoms:
        raise StructureError(f"{what} has {heavy} heavy atoms, above the limit of {max_heavy_atoms} "
                             f"(raise it with --max-atoms)", "too_large")
    for atom in mol.GetAtoms():
        z = atom.GetAtomicNum()
        if z > MAX_ATOMIC_NUMBER:
            raise StructureError(f"{what} contains {atom.GetSymbol()}, an unsupported element "
                                 f"(barrierscope handles elements up to Rn)", "unsupported_element")


def _short(s: str, limit: int = 60) -> str:
    return repr(s if len(s) <= limit else s[: limit - 3] + "...")
