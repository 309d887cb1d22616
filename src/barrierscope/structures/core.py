"""Cutting whole molecules at a core with numbered attachment points.

The core is written as SMILES with numbered dummies, ``[*:1]c1ccc([*:2])cc1``. Each molecule
is matched against the core (without its dummies) once, and each labelled position's
substituent is the connected set of non-core atoms hanging off the core atom that carried
that dummy; a position with nothing attached is hydrogen. This is a single substructure
search plus a walk over the substituent atoms, so it runs at a large fraction of plain
SMILES-parsing speed (a generic R-group decomposition searches far more).

Rules, each a per-row error when broken: the core must be found; where it is found in several
places, every place must read as the same substituents; no unlabelled core atom may carry a
substituent; no substituent may join two positions (a ring fused across them). When the core is symmetric (several matches over
the same atoms), the assignment whose tuple of canonical substituent keys, in position
order, sorts first is taken, so the result does not depend on how the SMILES was written.
"""

from __future__ import annotations

import re

from rdkit import Chem

from .checks import (
    DEFAULT_MAX_HEAVY_ATOMS,
    StructureError,
    _bracket_elements_ok,
    check_elements_and_size,
    parse_smiles,
    quietly,
)
from .substituent import HYDROGEN_KEY, canonical_key_from_mol


class CoreError(ValueError):
    """The core itself is unusable (a problem with the option, not with a row)."""


class CoreDecomposer:
    """Decompose molecules at ``core_smiles``; positions are named ``R<n>`` from the map numbers."""

    @quietly
    def __init__(self, core_smiles: str):
        self.core_smiles = core_smiles
        core = Chem.MolFromSmiles(core_smiles)
        if core is None:
            raise CoreError(f"cannot parse the core SMILES {core_smiles!r}")
        labels: dict[int, int] = {}
        for atom in core.GetAtoms():
            if atom.GetAtomicNum() != 0:
                continue
            n = atom.GetAtomMapNum()
            if n <= 0:
                raise CoreError(f"core {core_smiles!r}: every attachment point needs a number, as in [*:1]")
            if n in labels:
                raise CoreError(f"core {core_smiles!r}: attachment number {n} is used twice")
            if atom.GetDegree() != 1:
                raise CoreError(f"core {core_smiles!r}: attachment [*:{n}] must be bonded to one core atom")
            labels[n] = atom.GetIdx()
        if not labels:
            raise CoreError(f"core {core_smiles!r} has no numbered attachment points ([*:1], [*:2], ...)")
        query = Chem.RWMol(core)
        anchor_old = {n: core.GetAtomWithIdx(i).GetNeighbors()[0].GetIdx() for n, i in labels.items()}
        for idx in sorted(labels.values(), reverse=True):
            query.RemoveAtom(idx)
        old_to_new = {}
        dummies = set(labels.values())
        k = 0
        for old in range(core.GetNumAtoms()):
            if old not in dummies:
                old_to_new[old] = k
                k += 1
        self.query = query.GetMol()
        self.query.UpdatePropertyCache(strict=False)
        if self.query.GetNumAtoms() == 0:
            raise CoreError(f"core {core_smiles!r} has no atoms besides its attachment points")
        self.numbers = sorted(labels)
        self.positions = [f"R{n}" for n in self.numbers]
        # query atom index → positions (in order) that hang off it
        self._labels_at: dict[int, list[int]] = {}
        for p, n in enumerate(self.numbers):
            self._labels_at.setdefault(old_to_new[anchor_old[n]], []).append(p)
        self._raw_to_key: dict[str, str] = {}
        self._query_degree = [a.GetDegree() for a in self.query.GetAtoms()]
        # What each core atom is as written (for molecules read without sanitising them whole).
        self._template = [(a.GetFormalCharge(), a.GetIsotope(), a.GetNumExplicitHs(), a.GetNoImplicit(),
                           a.GetIsAromatic()) for a in self.query.GetAtoms()]
        self._plain_core = all(t[:4] == (0, 0, 0, False) for t in self._template)
        # One position per labelled core atom (no geminal pair): the common case, assigned fast.
        self._anchor_per_position = ([q for p in range(len(self.numbers)) for q, ps in self._labels_at.items()
                                      if p in ps] if all(len(v) == 1 for v in self._labels_at.values()) else None)

    def __reduce__(self):  # picklable for worker processes: rebuild from the SMILES
        return (CoreDecomposer, (self.core_smiles,))

    # -- per molecule -------------------------------------------------------------------
    def decompose_smiles(self, text: str, max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> tuple[str, ...]:
        """Canonical substituent keys of the molecule written as ``text``.

        Most library molecules are the core, written as the core is, with substituents on its
        numbered atoms: for them (:meth:`_as_assembled`) the molecule is not sanitised whole —
        each distinct substituent is, once, when its key is made, and the core matched is the
        valid core itself — which makes a core-mode screen about twice as fast. Every other
        molecule, and any doubt, takes the full path: parse, sanitise, decompose."""
        keys = self._as_assembled(text, max_heavy_atoms)
        if keys is not None:
            return keys
        mol = parse_smiles(text, "SMILES", cleanup=False)
        if "." in text and len(Chem.GetMolFrags(mol)) > 1:
            raise StructureError("several molecules in one cell (a '.' in the SMILES): the core is cut out of one",
                                 "multiple_components")
        if "[" in text or mol.GetNumHeavyAtoms() > max_heavy_atoms:
            check_elements_and_size(mol, max_heavy_atoms, text=text)  # only bracket atoms can be exotic
        return self.decompose(mol, text.strip())

    def _as_assembled(self, text, max_heavy_atoms: int) -> tuple[str, ...] | None:
        """The keys of a molecule that is provably the valid core with valid substituents
        attached by single bonds at its numbered atoms, read without sanitising the whole
        molecule; None (take the full path) for anything else. Proven by: valences checked
        (RDKit's property cache, strictly); the core matched as written — every core atom
        with the core's own charge, isotope and hydrogens, so the matched ring is the core's
        valid one; one place of the core; substituents read off the text (no graph cutting)
        and each made a key by full sanitisation. A substituent joined to the core by a ring
        bond, or anything unusual, falls back."""
        s = text.strip() if isinstance(text, str) else ""
        if (len(s) < 5 or "." in s or _EXPLICIT_H_TEXT.search(s) or _SPACE_TEXT.search(s)
                or ("[" in s and not _bracket_elements_ok(s))):
            return None
        mol = Chem.MolFromSmiles(s, sanitize=False)
        if mol is None or mol.GetNumHeavyAtoms() > max_heavy_atoms:
            return None
        try:
            mol.UpdatePropertyCache(strict=True)
        except Exception:  # a valence problem: the full path says which
            return None
        Chem.FastFindRings(mol)
        matches = mol.GetSubstructMatches(self.query, uniquify=False, useChirality=False, maxMatches=10000)
        if not matches or len({frozenset(m) for m in matches}) != 1:
            return None
        # Written without brackets, every core atom is neutral, unlabelled and without explicit H,
        # and the match itself has held its element, aromaticity and bonds to the core's.
        if "[" in s or not self._plain_core:
            for q, a in enumerate(matches[0]):
                atom = mol.GetAtomWithIdx(a)
                if (atom.GetFormalCharge(), atom.GetIsotope(), atom.GetNumExplicitHs(), atom.GetNoImplicit(),
                        atom.GetIsAromatic()) != self._template[q]:
                    return None
        fragments = _TextFragments.read(s, mol)
        if fragments is None:
            return None
        try:
            return self._read_place(mol, s, matches, fragments=fragments, text_only=True)
        except StructureError:
            return None

    def decompose(self, mol: Chem.Mol, text: str | None = None) -> tuple[str, ...]:
        """Canonical substituent keys, one per position, or :class:`StructureError`.

        With ``text`` (the SMILES ``mol`` was parsed from), substituents are read off the
        text; see :class:`_TextFragments`. Otherwise they are cut out of the molecule graph.
        A core found in several places is ambiguous only when two places read as different
        substituents: equal halves of a symmetric molecule read the same either way, and a
        place that cannot be read (a group on an unlabelled core atom there) is not a reading.
        """
        matches = mol.GetSubstructMatches(self.query, uniquify=False, useChirality=False, maxMatches=10000)
        if not matches:
            raise StructureError("the core is not found in this molecule", "core_unmatched")
        places: dict[frozenset, list] = {}
        for m in matches:
            places.setdefault(frozenset(m), []).append(m)
        if len(places) == 1:
            return self._read_place(mol, text, matches)
        readings, failure = set(), None
        for group in places.values():
            try:
                readings.add(self._read_place(mol, text, group))
            except StructureError as exc:  # a place that cannot be the core (e.g. a group on its ortho atom)
                failure = failure or exc
        if len(readings) > 1:
            raise StructureError(f"the core matches {len(places)} places in this molecule that read as different "
                                 f"substituents", "core_ambiguous")
        if not readings:
            raise failure
        return readings.pop()

    def _read_place(self, mol: Chem.Mol, text: str | None, matches, *, fragments=None,
                    text_only: bool = False) -> tuple[str, ...]:
        """The keys read at one place of the core (its matches differ by the core's symmetry);
        ``fragments`` already read off the text; ``text_only``: a bond the text cannot give is
        a :class:`StructureError` rather than a cut of the graph."""
        first = matches[0]
        # Attachments (core atom, first substituent atom) do not depend on which match is used.
        core_atoms = None
        attachments: dict[int, list[int]] = {}
        for q, a in enumerate(first):
            atom = mol.GetAtomWithIdx(a)
            if atom.GetDegree() == self._query_degree[q]:
                continue
            if core_atoms is None:
                core_atoms = set(first)
            attachments[a] = [nb.GetIdx() for nb in atom.GetNeighbors() if nb.GetIdx() not in core_atoms]
        keys_at: dict[int, list[str]] = {}
        if attachments:
            if fragments is None:
                fragments = _TextFragments.read(text, mol) if text else None
            rings = mol.GetRingInfo()      # (asking the ring info is much faster than Bond.IsInRing)
            for a, starts in attachments.items():
                found = []
                for s in starts:
                    bond = mol.GetBondBetweenAtoms(a, s)
                    if rings.NumBondRings(bond.GetIdx()):
                        raise StructureError("a substituent is joined to the core in two places "
                                             "(a ring across positions)", "core_bridged")
                    if text_only and bond.GetBondType() not in _SINGLE_LIKE:
                        raise StructureError("not a single bond to the core", "core_cut")
                    raw = fragments.raw(a, s) if fragments is not None else None
                    found.append(self._key_from_text(raw) if raw is not None
                                 else self._key_from_graph(mol, a, s, core_atoms))
                keys_at[a] = found
        best = None
        for match in matches:
            keys = self._assign(match, keys_at)
            if keys is not None and (best is None or keys < best):
                best = keys
        if best is None:
            raise StructureError("a core atom without an attachment number carries a substituent",
                                 "core_unlabelled")
        return best

    def _assign(self, match, keys_at: dict[int, list[str]]) -> tuple[str, ...] | None:
        """Keys per position under one match, or None when the match leaves a substituent on
        an unlabelled core atom."""
        if self._anchor_per_position is not None:
            anchors = [match[q] for q in self._anchor_per_position]
            if not all(len(v) == 1 and a in anchors for a, v in keys_at.items()):
                return None
            return tuple([keys_at[a][0] if a in keys_at else HYDROGEN_KEY for a in anchors])
        keys = [HYDROGEN_KEY] * len(self.numbers)
        used = 0
        for q, labels in self._labels_at.items():
            subs = keys_at.get(match[q], ())
            if len(subs) > len(labels):
                return None
            # Several positions on one core atom (geminal): their substituents in key order.
            ordered = sorted(list(subs) + [HYDROGEN_KEY] * (len(labels) - len(subs)))
            for p, key in zip(labels, ordered):
                keys[p] = key
            used += len(subs)
        if used != sum(len(v) for v in keys_at.values()):
            return None
        return tuple(keys)

    def _key_from_text(self, raw: str) -> str:
        key = self._raw_to_key.get(raw)
        if key is None:
            from .substituent import substituent_key

            key = substituent_key(raw)
            self._raw_to_key[raw] = key
        return key

    def _key_from_graph(self, mol: Chem.Mol, anchor: int, start: int, core_atoms: set[int]) -> str:
        atoms = {start}
        stack = [start]
        while stack:
            i = stack.pop()
            for nb in mol.GetAtomWithIdx(i).GetNeighbors():
                j = nb.GetIdx()
                if j not in core_atoms and j not in atoms:
                    atoms.add(j)
                    stack.append(j)
        # Rooted at the anchor, the fragment SMILES says where the attachment is; without the
        # root, isobutyl and sec-butyl on a CH2 anchor would both read "CCC(C)C".
        raw = "graph:" + Chem.MolFragmentToSmiles(mol, atomsToUse=sorted(atoms | {anchor}), rootedAtAtom=anchor,
                                                  canonical=True)
        key = self._raw_to_key.get(raw)
        if key is None:
            key = _fragment_key(mol, anchor, atoms)
            self._raw_to_key[raw] = key
        return key


#: Bonds to the core a molecule read unsanitised may show: single, or written between two
#: aromatic atoms outside a ring (single once sanitised).
_SINGLE_LIKE = (Chem.BondType.SINGLE, Chem.BondType.AROMATIC)
_EXPLICIT_H_TEXT = re.compile(r"\[\d*H[^a-z]")
_SPACE_TEXT = re.compile(r"\s")

#: An atom of a SMILES string: a bracket atom or one of the organic subset (two-letter first).
_ATOM = re.compile(r"\[[^\]]*\]|Br|Cl|[BCNOPSFIbcnops*]")
_BOND_CHARS = frozenset("-=#$:/\\")


def _branch_end(text: str, start: int) -> int:
    """Offset of the ")" that closes the innermost branch open at ``start`` (or the end of
    ``text``), nested branches after ``start`` skipped. Jumps from parenthesis to parenthesis."""
    depth, i = 0, start
    while True:
        close = text.find(")", i)
        if close < 0:
            return len(text)
        open_ = text.find("(", i, close)
        if open_ >= 0:
            depth, i = depth + 1, open_ + 1
        elif depth == 0:
            return close
        else:
            depth, i = depth - 1, close + 1


class _TextFragments:
    """Substituent texts read straight off the input SMILES.

    Atoms of a SMILES string appear in the order RDKit numbers them, and a bond that is not
    in a ring (every core–substituent bond here) is an edge of the string's depth-first
    tree. If the substituent atom s comes after its core atom a, the substituent is s's
    subtree: the text from s to the end of its branch, written after ``*``. If s comes
    first, the core side is a's subtree, and the substituent is the text with that subtree
    replaced by ``*``. Either way the result is a SMILES of the substituent with its
    attachment as ``*`` — exact, though not canonical; it is canonicalised once per
    distinct text. Strings this reader cannot map atom-for-atom (explicit hydrogens that
    RDKit removes, several components) fall back to cutting the graph. Offsets come from one
    regular-expression pass; branch ends are found by jumping between parentheses.
    """

    __slots__ = ("text", "starts")

    def __init__(self, text: str, starts: list[int]):
        self.text = text
        self.starts = starts      # character offset of every atom, in RDKit's atom order

    @classmethod
    def read(cls, text: str, mol: Chem.Mol) -> "_TextFragments | None":
        starts = [m.start() for m in _ATOM.finditer(text)]
        if "." in text or len(starts) != mol.GetNumAtoms():
            return None
        return cls(text, starts)

    def raw(self, a: int, s: int) -> str:
        text = self.text
        if s > a:
            start = self.starts[s]
            first = start - 1 if start > 0 and text[start - 1] in _BOND_CHARS else start
            return "*" + text[first:_branch_end(text, start)]
        start = self.starts[a]
        return text[:start] + "*" + text[_branch_end(text, start):]


def _fragment_key(mol: Chem.Mol, anchor: int, atoms: set[int]) -> str:
    """Canonical substituent key of ``atoms`` hanging off core atom ``anchor`` (slow path)."""
    rw = Chem.RWMol(mol)
    keep = atoms | {anchor}
    for idx in sorted((i for i in range(mol.GetNumAtoms()) if i not in keep), reverse=True):
        rw.RemoveAtom(idx)
    for atom in rw.GetAtoms():
        atom.SetAtomMapNum(0)
    # After the removals the anchor is the only atom that came from the core; find it by mapping.
    new_anchor = sorted(keep).index(anchor)
    a = rw.GetAtomWithIdx(new_anchor)
    a.SetAtomicNum(0)
    a.SetIsAromatic(False)
    a.SetFormalCharge(0)
    a.SetNumExplicitHs(0)
    a.SetNoImplicit(True)
    a.SetIsotope(0)
    a.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
    for b in a.GetBonds():
        if b.GetIsAromatic():
            b.SetIsAromatic(False)
            b.SetBondType(Chem.BondType.SINGLE)
    m = rw.GetMol()
    try:
        Chem.SanitizeMol(m)
    except Exception as exc:  # pragma: no cover - fragments of sane molecules sanitise
        raise StructureError(f"the substituent cannot be cut out cleanly ({exc})", "core_cut") from None
    return canonical_key_from_mol(m)
