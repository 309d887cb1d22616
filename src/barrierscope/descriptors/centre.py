"""The ``centre`` tier: descriptors of the atoms where bonds change, and of their first shell.

Within a family the barrier depends on where the reaction happens as well as on how far
downhill it goes: a resonance-stabilised or heteroatom-substituted centre carries its own
intrinsic barrier (C. F. Bernasconi, Acc. Chem. Res. 1987, 20, 301 on non-perfect
synchronisation; polar effects in the transition state, A. A. Zavitsas, C. Chatgilialoglu,
J. Am. Chem. Soc. 1995, 117, 10645). Whole-molecule and substituent descriptors do not say
which atoms react; these do.

Where the centre is:

- reaction mode: the reactant atoms whose bonding changes — neighbours, bond orders, hydrogen
  count, charge or radical electrons — found from atom maps when every heavy atom is mapped,
  otherwise by matching each reactant into the products (a maximum common substructure on
  elements, any bond order, placed with the fewest changes: :func:`reaction_centres`).
  Pericyclic reactions that move π bonds around a ring can be placed more than one way with
  as few changes (Diels–Alder); give them atom maps;
- molecule mode: the atoms of the first match of ``--centre SMARTS`` (no match is a row
  error), or the one radical atom of an open-shell molecule;
- core and substituent modes: each position's attachment atom, the group's atom bonded to the
  rest of the molecule (a substituent-level tier: columns ``<position>_centre_...``).

Per centre atom (units in :data:`FEATURES`): element, heavy-atom degree, hydrogens,
hybridisation, aromaticity, ring membership and size, Gasteiger charge (J. Gasteiger, M.
Marsili, Tetrahedron 1980, 36, 3219), and of the first shell: carbon neighbours, α-heteroatoms,
π-donor neighbours (a lone pair that can conjugate), π-acceptor neighbours (a carbonyl, cyano,
nitro, sulfonyl or imine group) and conjugated neighbours (any π system next to the centre).
Several centre atoms get their own columns (``centre1_...``, ``centre2_...``), ordered by the
reactant they sit in, then by element (heavier first), then by RDKit's canonical rank, so the
same role gets the same number across a family; :func:`centre_legend` says which is which.
"""

from __future__ import annotations

import numpy as np

from ..structures.checks import quietly

#: Part of every cache key: bump when the features change.
VERSION = "centre-2"
#: feature → (unit, meaning), the README's descriptor table.
FEATURES = {
    "z": ("atomic number", "element of the centre atom"),
    "heavy_degree": ("count", "heavy-atom neighbours"),
    "h_count": ("count", "hydrogens on the atom"),
    "hybridisation": ("1 = sp, 2 = sp2, 3 = sp3, 0 other", "hybridisation"),
    "aromatic": ("0/1", "aromatic atom"),
    "in_ring": ("0/1", "ring atom"),
    "ring_size": ("atoms", "smallest ring through the atom (0 if none)"),
    "gasteiger_charge": ("e", "Gasteiger–Marsili partial charge"),
    "radical_electrons": ("count", "unpaired electrons on the atom"),
    "pi_donor_atom": ("0/1", "the atom itself has a lone pair that can conjugate (N, O, S, halogen outside a π bond)"),
    "pi_acceptor_atom": ("0/1", "the atom itself is a carbonyl, cyano, nitro, sulfonyl or imine group's centre"),
    "carbon_neighbours": ("count", "carbon neighbours"),
    "alpha_heteroatoms": ("count", "neighbours other than C and H"),
    "pi_donor_neighbours": ("count", "neighbours with a lone pair that can conjugate (N, O, S, halogen, singly bonded)"),
    "pi_acceptor_neighbours": ("count", "neighbours that are a carbonyl, cyano, nitro, sulfonyl or imine group"),
    "conjugated_neighbours": ("count", "neighbours in a π system (aromatic, or with a double or triple bond)"),
}
#: Most centre atoms given columns in reaction and molecule modes.
MAX_CENTRES = 6
_HYBRID = {"SP": 1, "SP2": 2, "SP3": 3}
_DONORS = {7, 8, 9, 16, 17, 35, 53}


def columns(n_centres: int = MAX_CENTRES) -> list[str]:
    """Column names for ``n_centres`` centre atoms: centre1_z, centre1_heavy_degree, ..."""
    return [f"centre{k}_{f}" for k in range(1, n_centres + 1) for f in FEATURES]


def _is_acceptor(atom) -> bool:
    """A carbonyl / imine / cyano carbon, a nitro nitrogen or a sulfonyl / sulfinyl sulfur."""
    for bond in atom.GetBonds():
        other = bond.GetOtherAtom(atom)
        order = bond.GetBondTypeAsDouble()
        if order >= 2 and other.GetAtomicNum() in (7, 8, 16) and atom.GetAtomicNum() in (6, 7, 15, 16):
            return True
    return atom.GetAtomicNum() == 7 and atom.GetFormalCharge() == 1 and \
        sum(1 for n in atom.GetNeighbors() if n.GetAtomicNum() == 8) >= 2


def _in_pi_system(atom) -> bool:
    return atom.GetIsAromatic() or any(b.GetBondTypeAsDouble() >= 2 for b in atom.GetBonds())


def atom_features(mol, idx: int, charges=None) -> dict[str, float]:
    """:data:`FEATURES` of atom ``idx`` of ``mol`` (a sanitised RDKit molecule). ``charges``:
    the molecule's Gasteiger charges when already computed."""
    atom = mol.GetAtomWithIdx(idx)
    ring = mol.GetRingInfo()
    sizes = [len(r) for r in ring.AtomRings() if idx in r]
    heavy = [n for n in atom.GetNeighbors() if n.GetAtomicNum() > 1]
    donors = [n for n in heavy if n.GetAtomicNum() in _DONORS and not _in_pi_system(n)
              and mol.GetBondBetweenAtoms(idx, n.GetIdx()).GetBondTypeAsDouble() == 1.0]
    if charges is None:
        charges = gasteiger(mol)
    return {
        "z": float(atom.GetAtomicNum()),
        "heavy_degree": float(len(heavy)),
        "h_count": float(atom.GetTotalNumHs()),
        "hybridisation": float(_HYBRID.get(str(atom.GetHybridization()), 0)),
        "aromatic": float(atom.GetIsAromatic()),
        "in_ring": float(bool(sizes)),
        "ring_size": float(min(sizes)) if sizes else 0.0,
        "gasteiger_charge": float(charges[idx]),
        "radical_electrons": float(atom.GetNumRadicalElectrons()),
        "pi_donor_atom": float(atom.GetAtomicNum() in _DONORS and not _in_pi_system(atom)),
        "pi_acceptor_atom": float(_is_acceptor(atom)),
        "carbon_neighbours": float(sum(1 for n in heavy if n.GetAtomicNum() == 6)),
        "alpha_heteroatoms": float(sum(1 for n in heavy if n.GetAtomicNum() not in (1, 6))),
        "pi_donor_neighbours": float(len(donors)),
        "pi_acceptor_neighbours": float(sum(1 for n in heavy if _is_acceptor(n))),
        "conjugated_neighbours": float(sum(1 for n in heavy if _in_pi_system(n))),
    }


def gasteiger(mol) -> np.ndarray:
    """Gasteiger–Marsili charges (e) per atom; NaN where RDKit has no parameters."""
    from rdkit.Chem import rdPartialCharges

    m = type(mol)(mol)
    try:
        rdPartialCharges.ComputeGasteigerCharges(m)
        q = np.array([a.GetDoubleProp("_GasteigerCharge") for a in m.GetAtoms()], dtype=float)
    except Exception:  # noqa: BLE001 - an element without Gasteiger parameters: leave the charge missing
        return np.full(m.GetNumAtoms(), np.nan)
    return np.where(np.isfinite(q), q, np.nan)


def centre_row(atoms: list[tuple[object, int]]) -> dict[str, float]:
    """Columns for the centre atoms [(mol, atom index), ...] in order; absent centres are NaN."""
    out = dict.fromkeys(columns(), float("nan"))
    charges: dict[int, np.ndarray] = {}
    for k, (mol, idx) in enumerate(atoms[:MAX_CENTRES], start=1):
        q = charges.setdefault(id(mol), gasteiger(mol))
        for f, v in atom_features(mol, idx, q).items():
            out[f"centre{k}_{f}"] = v
    out["centre_count"] = float(len(atoms))
    return out


# -- substituent and core modes: the attachment atom -----------------------------------------
@quietly
def substituent_centre(key: str) -> dict[str, float]:
    """The attachment atom of a substituent key (``[*]R``): the group's atom bonded to the
    rest of the molecule, described with the attachment point as a carbon neighbour (a
    substituent on a carbon framework, as in the Hammett series). Columns ``centre_<feature>``."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(key)
    if mol is None:
        raise ValueError(f"cannot read substituent {key!r}")
    dummy = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() == 0]
    if len(dummy) != 1:
        raise ValueError(f"substituent {key!r} needs one attachment point")
    rw = Chem.RWMol(mol)
    rw.GetAtomWithIdx(dummy[0]).SetAtomicNum(6)
    rw.GetAtomWithIdx(dummy[0]).SetIsotope(0)
    anchor = rw.GetAtomWithIdx(dummy[0]).GetNeighbors()[0].GetIdx()
    m = rw.GetMol()
    Chem.SanitizeMol(m)
    if m.GetAtomWithIdx(anchor).GetAtomicNum() == 1:     # hydrogen as the substituent
        return {f"centre_{f}": (1.0 if f == "z" else 0.0) for f in FEATURES} | {"centre_gasteiger_charge": float(
            gasteiger(m)[anchor])}
    return {f"centre_{f}": v for f, v in atom_features(m, anchor).items()}


# -- molecule mode -----------------------------------------------------------------------------
def molecule_centres(mol, smarts=None) -> list[tuple[object, int]]:
    """The centre atoms of a molecule: the first match of ``smarts`` (a compiled query), or
    its one radical atom. ValueError when neither gives an answer."""
    if smarts is not None:
        match = mol.GetSubstructMatch(smarts)
        if not match:
            raise ValueError("the --centre pattern does not match this molecule")
        return [(mol, i) for i in match]
    radicals = [a.GetIdx() for a in mol.GetAtoms() if a.GetNumRadicalElectrons() > 0]
    if len(radicals) == 1:
        return [(mol, radicals[0])]
    raise ValueError("no reaction centre: give --centre SMARTS (or a molecule with one radical atom)")


# -- reaction mode -----------------------------------------------------------------------------
def _side(text: str):
    from rdkit import Chem

    mols = []
    for part in text.split("."):
        m = Chem.MolFromSmiles(part)
        if m is None:
            raise ValueError(f"cannot read {part!r}")
        mols.append(m)
    return mols


def _signature(atom, partner_of) -> tuple:
    """What a reaction may change at an atom: its heavy neighbours (as partners on the other
    side) with bond orders, hydrogens, charge, unpaired electrons."""
    bonds = sorted((partner_of(b.GetOtherAtom(atom)), b.GetBondTypeAsDouble()) for b in atom.GetBonds()
                   if b.GetOtherAtom(atom).GetAtomicNum() > 1)
    return (tuple(bonds), atom.GetTotalNumHs(), atom.GetFormalCharge(), atom.GetNumRadicalElectrons())


def _mapped(reactants, products) -> dict | None:
    """Reactant atom → product atom from atom maps, when every heavy atom carries one."""
    def index(mols):
        out = {}
        for s, m in enumerate(mols):
            for a in m.GetAtoms():
                if a.GetAtomicNum() > 1:
                    if a.GetAtomMapNum() == 0:
                        return None
                    out[a.GetAtomMapNum()] = (s, a.GetIdx())
        return out

    left, right = index(reactants), index(products)
    if left is None or right is None or set(left) != set(right):
        return None
    return {left[k]: right[k] for k in left}


def _edits(r, rm, p, pm) -> int:
    """Bond-order and hydrogen-count changes among the matched atoms of one placement."""
    where = dict(zip(rm, pm))
    n = sum(r.GetAtomWithIdx(i).GetTotalNumHs() != p.GetAtomWithIdx(j).GetTotalNumHs() for i, j in where.items())
    for b in r.GetBonds():
        i, k = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        if i in where and k in where:
            other = p.GetBondBetweenAtoms(where[i], where[k])
            n += other is None or other.GetBondTypeAsDouble() != b.GetBondTypeAsDouble()
    return int(n)


def _matched(reactants, products, timeout: int = 2) -> dict:
    """Reactant atom → product atom by matching each reactant (largest first) into the
    products: a maximum common substructure on elements with any bond order, so bonds that
    change order still match; atoms left over stay unmatched (and so count as changed)."""
    from rdkit import Chem
    from rdkit.Chem import rdFMCS

    used: set = set()
    mapping = {}
    order = sorted(range(len(reactants)), key=lambda s: -reactants[s].GetNumHeavyAtoms())
    for s in order:
        r = reactants[s]
        if r.GetNumHeavyAtoms() == 1:
            continue                        # single atoms are matched by element afterwards
        best = None
        for t, p in enumerate(products):
            res = rdFMCS.FindMCS([r, p], timeout=timeout, atomCompare=rdFMCS.AtomCompare.CompareElements,
                                 bondCompare=rdFMCS.BondCompare.CompareAny, ringMatchesRingOnly=False,
                                 matchValences=False)
            if res.numAtoms == 0:
                continue
            q = Chem.MolFromSmarts(res.smartsString)
            rm = r.GetSubstructMatch(q)
            for pm in p.GetSubstructMatches(q, useChirality=False, uniquify=False, maxMatches=200):
                if any((t, j) in used for j in pm):
                    continue
                # Of the placements, the one with the fewest changes (minimum chemical distance:
                # J. Jochum, J. Gasteiger, I. Ugi, Angew. Chem. Int. Ed. 1980, 19, 495).
                score = (-res.numAtoms, _edits(r, rm, p, pm))
                if best is None or score < best[0]:
                    best = (score, t, rm, pm)
        if best is not None:
            _, t, rm, pm = best
            for i, j in zip(rm, pm):
                mapping[(s, i)] = (t, j)
                used.add((t, j))
    for s, r in enumerate(reactants):     # leftover heavy atoms: the first unused product atom of the element
        for a in r.GetAtoms():
            if a.GetAtomicNum() <= 1 or (s, a.GetIdx()) in mapping:
                continue
            for t, p in enumerate(products):
                hit = next((b.GetIdx() for b in p.GetAtoms() if b.GetAtomicNum() == a.GetAtomicNum()
                            and (t, b.GetIdx()) not in used), None)
                if hit is not None:
                    mapping[(s, a.GetIdx())] = (t, hit)
                    used.add((t, hit))
                    break
    return mapping


@quietly
def reaction_centres(text: str, timeout: int = 2) -> list[tuple[object, int, int]]:
    """The reactant atoms whose bonding changes in reaction SMILES ``text`` ("A.B>>C.D"), as
    (reactant molecule, atom index, reactant number from 1), ordered by reactant, then element
    (heavier first), then canonical rank. Atom maps are used when every heavy atom has one."""
    from rdkit import Chem

    if ">>" not in text:
        raise ValueError("not a reaction SMILES (no '>>')")
    left, right = text.split(">>", 1)
    reactants, products = _side(left), _side(right)
    mapping = _mapped(reactants, products) or _matched(reactants, products, timeout)
    reverse = {v: k for k, v in mapping.items()}

    def left_partner(s):
        return lambda a: ("r", s, a.GetIdx())

    changed = []
    for s, r in enumerate(reactants):
        ranks = list(Chem.CanonicalRankAtoms(r, breakTies=True))
        for a in r.GetAtoms():
            if a.GetAtomicNum() <= 1:
                continue
            key = (s, a.GetIdx())
            if key not in mapping:
                changed.append((s, a, ranks))
                continue
            t, j = mapping[key]
            b = products[t].GetAtomWithIdx(j)
            mine = _signature(a, left_partner(s))

            def right_partner(x, t=t):
                back = reverse.get((t, x.GetIdx()))
                return ("r",) + back if back is not None else ("p", t, x.GetIdx())

            theirs = _signature(b, right_partner)
            if mine != theirs:
                changed.append((s, a, ranks))
    changed.sort(key=lambda c: (c[0], -c[1].GetAtomicNum(), c[2][c[1].GetIdx()]))
    return [(reactants[s], a.GetIdx(), s + 1) for s, a, _ in changed]


def centre_legend(text: str) -> str:
    """Which centre column is which atom for one reaction: "centre1: C of reactant 1, ..."."""
    from rdkit import Chem

    parts = []
    for k, (mol, idx, s) in enumerate(reaction_centres(text)[:MAX_CENTRES], start=1):
        parts.append(f"centre{k}: {mol.GetAtomWithIdx(idx).GetSymbol()} of reactant {s} "
                     f"({Chem.MolToSmiles(mol)})")
    return "; ".join(parts)
