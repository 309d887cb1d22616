"""Reactions as input: reaction SMILES ``A.B>>P``, or a template filled with substituents.

- Reaction SMILES: atom maps are allowed and ignored; every species is canonicalised; the
  reaction must be balanced (atoms, hydrogens included, and charge) or the row says how it
  is not. Radicals and open shells are refused unless a multiplicity column gives the spin
  multiplicity of every species (``"1.1>>1"``, the layout of the reaction).
- Template: ``"REACTANTS>>PRODUCTS"`` whose attachment points ``[*:1]``, ``[*:2]``... are
  filled, in every species, with the substituents of the substituent columns (in order):
  this is how a substituent series becomes a set of reactions.

One to three reactants and one to three products (A → B, A → B + C, A + B → C, A + B →
C + D, ...). How a family's species are laid out in positions is :mod:`.layout`'s job.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

from rdkit import Chem
from rdkit.Chem import Descriptors

from .checks import (
    DEFAULT_MAX_HEAVY_ATOMS,
    StructureError,
    check_elements_and_size,
    parse_smiles,
    quietly,
)


#: Most species on one side of a reaction.
MAX_SPECIES = 3


@dataclass(frozen=True)
class Species:
    smiles: str          # canonical, no atom maps
    charge: int
    multiplicity: int


@dataclass(frozen=True)
class Reaction:
    reactants: tuple[Species, ...]
    products: tuple[Species, ...]


def _canonical_species(text: str, what: str, max_atoms: int, multiplicity: int | None) -> Species:
    mol = parse_smiles(text, what)
    for a in mol.GetAtoms():
        a.SetAtomMapNum(0)
    check_elements_and_size(mol, max_atoms, what)
    if any(a.GetAtomicNum() == 0 for a in mol.GetAtoms()):
        raise StructureError(f"{what} {text!r} has an attachment atom (*); reactions need whole molecules",
                             "attachment")
    radicals = Descriptors.NumRadicalElectrons(mol)
    if multiplicity is None:
        if radicals:
            raise StructureError(f"{what} {Chem.MolToSmiles(mol)} is a radical (open shell); give its spin "
                                 f"multiplicity (a multiplicity column laid out like the reaction)", "open_shell")
        multiplicity = 1
    elif multiplicity < 1 or (multiplicity - 1) % 2 != radicals % 2:
        raise StructureError(f"multiplicity {multiplicity} is impossible for {what} {Chem.MolToSmiles(mol)} "
                             f"with {radicals} unpaired electron(s)", "open_shell")
    return Species(Chem.MolToSmiles(mol), int(Chem.GetFormalCharge(mol)), int(multiplicity))


def _formula_and_charge(species: tuple[Species, ...]) -> tuple[Counter, int]:
    counts: Counter = Counter()
    charge = 0
    for s in species:
        mol = Chem.AddHs(Chem.MolFromSmiles(s.smiles))
        counts.update(a.GetSymbol() for a in mol.GetAtoms())
        charge += s.charge
    return counts, charge


def _formula_text(counts: Counter) -> str:
    order = ["C", "H"] + sorted(k for k in counts if k not in ("C", "H"))
    return "".join(f"{k}{counts[k] if counts[k] > 1 else ''}" for k in order if counts.get(k))


def check_balance(reaction: Reaction) -> None:
    left, qa = _formula_and_charge(reaction.reactants)
    right, qb = _formula_and_charge(reaction.products)
    if left != right:
        raise StructureError(f"the reaction is not balanced: reactants {_formula_text(left)}, products "
                             f"{_formula_text(right)}", "unbalanced")
    if qa != qb:
        raise StructureError(f"the reaction does not conserve charge: reactants {qa:+d}, products {qb:+d}",
                             "unbalanced")


def _multiplicities(text: str | None, n_left: int, n_right: int):
    if text is None or str(text).strip() == "":
        return [None] * n_left, [None] * n_right
    try:
        left, right = str(text).split(">>")
        ml = [int(v) for v in left.split(".")]
        mr = [int(v) for v in right.split(".")]
    except ValueError:
        raise StructureError(f"multiplicity {text!r} should look like the reaction, e.g. '2.1>>2'", "multiplicity") from None
    if len(ml) != n_left or len(mr) != n_right:
        raise StructureError(f"multiplicity {text!r} does not have one entry per species", "multiplicity")
    return ml, mr


@quietly
def parse_reaction(text: str, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS, multiplicity: str | None = None) -> Reaction:
    """A balanced :class:`Reaction` from reaction SMILES, or :class:`StructureError`."""
    s = "" if text is None else str(text).strip()
    if not s:
        raise StructureError("empty reaction SMILES", "empty")
    parts = s.split(">")
    if len(parts) != 3:
        raise StructureError(f"{s[:60]!r} is not reaction SMILES (expected 'A.B>>P')", "unparseable")
    left, agents, right = parts
    if not left or not right:
        raise StructureError("reaction SMILES needs reactants and products", "unparseable")
    lefts, rights = left.split("."), right.split(".")
    for side, items in (("reactants", lefts), ("products", rights)):
        if len(items) > MAX_SPECIES:
            raise StructureError(f"{len(items)} {side}: barrierscope handles 1 to {MAX_SPECIES} on each side",
                                 "layout")
    ml, mr = _multiplicities(multiplicity, len(lefts), len(rights))
    reactants = tuple(_canonical_species(t, "reactant", max_atoms, m) for t, m in zip(lefts, ml))
    products = tuple(_canonical_species(t, "product", max_atoms, m) for t, m in zip(rights, mr))
    reaction = Reaction(reactants, products)
    check_balance(reaction)
    return reaction


class ReactionTemplate:
    """``REACTANTS>>PRODUCTS`` with numbered attachment points, filled per row."""

    @quietly
    def __init__(self, template: str):
        self.template = template
        try:
            left, right = template.split(">>")
        except ValueError:
            raise ValueError(f"template {template!r} should be 'REACTANTS>>PRODUCTS'") from None
        self._left = [self._part(t) for t in left.split(".")]
        self._right = [self._part(t) for t in right.split(".")]
        numbers = {n for part in self._left + self._right for n in part[1]}
        if not numbers:
            raise ValueError(f"template {template!r} has no attachment points ([*:1], [*:2], ...)")
        self.numbers = sorted(numbers)
        if not (1 <= len(self._left) <= MAX_SPECIES and 1 <= len(self._right) <= MAX_SPECIES):
            raise ValueError(f"template {template!r}: 1 to {MAX_SPECIES} reactants and products are supported")

    @staticmethod
    def _part(text: str):
        mol = Chem.MolFromSmiles(text)
        if mol is None:
            raise ValueError(f"cannot parse template species {text!r}")
        nums = [a.GetAtomMapNum() for a in mol.GetAtoms() if a.GetAtomicNum() == 0]
        if any(n <= 0 for n in nums):
            raise ValueError(f"template species {text!r}: attachment points need numbers, as in [*:1]")
        return mol, nums

    @quietly
    def build(self, substituent_keys: list[str], max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> Reaction:
        """The reaction with attachment n filled by ``substituent_keys[n - 1]`` (canonical keys)."""
        if len(substituent_keys) < max(self.numbers):
            raise StructureError(f"the template uses [*:{max(self.numbers)}] but only {len(substituent_keys)} "
                                 f"substituent column(s) were given", "template")

        def fill(part, what):
            mol, nums = part
            out = Chem.Mol(mol)
            for n in sorted(set(nums)):
                count = nums.count(n)
                for _ in range(count):
                    sub = Chem.MolFromSmiles(substituent_keys[n - 1])
                    for a in sub.GetAtoms():
                        if a.GetAtomicNum() == 0:
                            a.SetAtomMapNum(n)
                    out = Chem.molzip(out, sub)
            out = Chem.RemoveHs(out)
            smiles = Chem.MolToSmiles(out)
            if "*" in smiles:
                raise StructureError(f"{what}: an attachment point was left unfilled", "template")
            return _canonical_species(smiles, what, max_atoms, None)

        reaction = Reaction(tuple(fill(p, "reactant") for p in self._left),
                            tuple(fill(p, "product") for p in self._right))
        check_balance(reaction)
        return reaction
