"""Checks shared by every structure reader: parsing, size limits and supported elements."""

from __future__ import annotations

import functools
import re
import threading

from rdkit import Chem, rdBase

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


_scope = threading.local()


class quiet_rdkit:
    """A scope (``with quiet_rdkit(): ...``) in which RDKit's own stderr chatter is blocked:
    barrierscope reports problems per row instead. RDKit's logging is back as it was when the
    scope ends (``rdBase.BlockLogs``), so a notebook that imports barrierscope keeps its logs.
    Scopes nest: only the outermost blocks and restores (a library's rows parsed inside one
    scope do not pay for one each)."""

    def __enter__(self):
        depth = getattr(_scope, "depth", 0)
        if depth == 0:
            _scope.block = rdBase.BlockLogs()
        _scope.depth = depth + 1
        return self

    def __exit__(self, *exc):
        _scope.depth -= 1
        if _scope.depth == 0:
            del _scope.block         # RDKit restores its logging when the blocker goes
        return False


def quietly(fn):
    """``fn`` run inside :func:`quiet_rdkit` (a direct call when a scope is already open)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        if getattr(_scope, "depth", 0):
            return fn(*args, **kwargs)
        with quiet_rdkit():
            return fn(*args, **kwargs)

    return wrapper


#: Sanitisation without the stereo clean-ups (chiral tags on atoms that cannot be stereocentres,
#: atropisomer flags): every check that can fail is kept. A third faster on library molecules,
#: for callers that never write the molecule out (the core decomposition: substituent keys are
#: canonicalised from their own fully sanitised text).
_CHECK_ONLY = (Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_CLEANUPCHIRALITY
               ^ Chem.SanitizeFlags.SANITIZE_CLEANUPATROPISOMERS)


@quietly
def parse_smiles(text: str, what: str = "SMILES", cleanup: bool = True) -> Chem.Mol:
    """A sanitised molecule from ``text``, or :class:`StructureError` saying what is wrong;
    ``cleanup=False`` skips the stereo clean-ups (see :data:`_CHECK_ONLY`)."""
    if text is None:
        raise StructureError(f"empty {what}", "empty")
    s = str(text).strip()
    if len(s) < 5 and (not s or s.lower() in ("nan", "none", "null")):
        raise StructureError(f"empty {what}", "empty")
    if " " in s or _SPACE.search(s):
        raise StructureError(f"{what} {s!r} contains white space", "unparseable")
    mol = Chem.MolFromSmiles(s, sanitize=False)
    if mol is None:
        raise StructureError(f"cannot parse {what} {_short(s)}", "unparseable")
    try:
        Chem.SanitizeMol(mol) if cleanup else Chem.SanitizeMol(mol, _CHECK_ONLY)
    except Exception as exc:  # RDKit raises several sanitisation exception types
        reason = str(exc).split("\n")[0].strip() or type(exc).__name__
        raise StructureError(f"{what} {_short(s)} fails sanitisation: {reason}", "unparseable") from None
    if _EXPLICIT_H.search(s):
        # As RDKit's own parser does by default: explicit hydrogens become implicit, so
        # "[H]OC" and "OC" are the same molecule (an H on a dummy atom is kept).
        mol = Chem.RemoveHs(mol)
    return mol


#: The element symbol opening a bracket atom ([13CH3+], [nH], [Se]): the only place a SMILES
#: can name an element outside the organic subset.
_BRACKET_ELEMENT = re.compile(r"\[\d*([A-Z][a-z]?|[a-z][a-z]?)")
_SYMBOLS: set[str] = set()


def _bracket_elements_ok(text: str) -> bool:
    """True when every bracket atom of ``text`` is an element up to Rn (a fast pre-check; an
    unknown symbol sends the caller to the atom-by-atom check)."""
    if not _SYMBOLS:
        table = Chem.GetPeriodicTable()
        _SYMBOLS.update(table.GetElementSymbol(z) for z in range(1, MAX_ATOMIC_NUMBER + 1))
    return all((sym.capitalize() if sym.islower() else sym) in _SYMBOLS for sym in _BRACKET_ELEMENT.findall(text))


def check_elements_and_size(mol: Chem.Mol, max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS,
                            what: str = "molecule", text: str | None = None) -> None:
    """Refuse molecules above the size limit or with elements beyond Rn. With ``text`` (the
    SMILES it came from) the elements are checked on the text's bracket atoms first."""
    heavy = mol.GetNumHeavyAtoms()
    if heavy > max_heavy_atoms:
        raise StructureError(f"{what} has {heavy} heavy atoms, above the limit of {max_heavy_atoms} "
                             f"(max_atoms, which can be raised)", "too_large")
    if text is not None and _bracket_elements_ok(text):
        return
    for atom in mol.GetAtoms():
        z = atom.GetAtomicNum()
        if z > MAX_ATOMIC_NUMBER:
            raise StructureError(f"{what} contains {atom.GetSymbol()}, an unsupported element "
                                 f"(barrierscope handles elements up to Rn)", "unsupported_element")


def _short(s: str, limit: int = 60) -> str:
    return repr(s if len(s) <= limit else s[: limit - 3] + "...")
