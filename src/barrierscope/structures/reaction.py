"""Reactions as input: reaction SMILES ``A.B>>P``, or a template filled with substituents.

- Reaction SMILES: atom maps are allowed and ignored; every species is canonicalised; the
  reaction must be balanced (atoms, hydrogens included, and charge) or the row says how it
  is not. Radicals and open shells are refused unless a multiplicity column gives the spin
  multiplicity of every species (``"1.1>>1"``, the layout of the reaction).
- Template: ``"REACTANTS>>PRODUCTS"`` whose attachment points ``[*:1]``, ``[*:2]``... are
  filled, in every species, with the substituents of the substituent columns (in order):
  this is how a substituent series becomes a set of reactions.

Reactants are put in a canonical order so that descriptor columns mean the same thing on
every row: the reactant met most often (the family's constant partner) first, then by
heavy-atom count (larger first), then by canonical SMILES. Positions are ``reactant1``,
``reactant2``, ... and ``product`` (``product1``, ``product2``... for several products).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd
from rdkit import Chem
from rdkit.Chem import Descriptors, rdMolDescriptors

from .checks import (
    DEFAULT_MAX_HEAVY_ATOMS,
    StructureError,
    check_elements_and_size,
    parse_smiles,
    quiet_rdkit,
)


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
                                 f"multiplicity with --multiplicity", "open_shell")
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


def parse_reaction(text: str, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS, multiplicity: str | None = None) -> Reaction:
    """A balanced :class:`Reaction` from reaction SMILES, or :class:`StructureError`."""
    quiet_rdkit()
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
    ml, mr = _multiplicities(multiplicity, len(lefts), len(rights))
    reactants = tuple(_canonical_species(t, "reactant", max_atoms, m) for t, m in zip(lefts, ml))
    products = tuple(_canonical_species(t, "product", max_atoms, m) for t, m in zip(rights, mr))
    reaction = Reaction(reactants, products)
    check_balance(reaction)
    return reaction


class ReactionTemplate:
    """``REACTANTS>>PRODUCTS`` with numbered attachment points, filled per row."""

    def __init__(self, template: str):
        quiet_rdkit()
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
        n_r = len(self._left)
        self.species_names = tuple([f"reactant{k + 1}" for k in range(n_r)] +
                                   (["product"] if len(self._right) == 1 else
                                    [f"product{k + 1}" for k in range(len(self._right))]))

    @staticmethod
    def _part(text: str):
        mol = Chem.MolFromSmiles(text)
        if mol is None:
            raise ValueError(f"cannot parse template species {text!r}")
        nums = [a.GetAtomMapNum() for a in mol.GetAtoms() if a.GetAtomicNum() == 0]
        if any(n <= 0 for n in nums):
            raise ValueError(f"template species {text!r}: attachment points need numbers, as in [*:1]")
        return mol, nums

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


def reactant_order(reactions, frequency: Counter | None = None):
    """Canonical reactant order: most frequent first, then larger, then by SMILES."""
    if frequency is None:
        frequency = Counter(s.smiles for r in reactions if r is not None for s in r.reactants)

    def key(s: Species):
        mol = Chem.MolFromSmiles(s.smiles)
        return (-frequency.get(s.smiles, 0), -rdMolDescriptors.CalcNumHeavyAtoms(mol), s.smiles)

    return [None if r is None else tuple(sorted(r.reactants, key=key)) for r in reactions], frequency


def resolve_reactions(df: pd.DataFrame, spec, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS):
    """Resolution for reaction or template mode (see :mod:`..descriptors.featurize`)."""
    from .resolve import Resolution, reader_errors, substituent_columns

    n = len(df)
    errors, kinds = reader_errors(df)
    reactions: list[Reaction | None] = [None] * n
    if spec.mode == "reaction":
        col = spec.columns[0]
        texts = df[col].astype(str).to_numpy()
        mult = df[spec.multiplicity].astype(str).to_numpy() if spec.multiplicity else [None] * n
        for i in range(n):
            if errors[i] is not None:
                continue
            try:
                reactions[i] = parse_reaction(texts[i], max_atoms, mult[i])
            except StructureError as exc:
                errors[i], kinds[i] = f"{col}: {exc}", exc.kind
        keys: dict[str, np.ndarray] = {}
        given = Counter(dict(spec.reactant_frequency)) if spec.reactant_frequency else None
        ordered, frequency = reactant_order(reactions, given)
        for p in spec.positions:
            keys[p] = np.full(n, None, dtype=object)
        for i, r in enumerate(reactions):
            if r is None:
                continue
            names = [f"reactant{k + 1}" for k in range(len(ordered[i]))]
            names += ["product"] if len(r.products) == 1 else [f"product{k + 1}" for k in range(len(r.products))]
            for name, s in zip(names, list(ordered[i]) + list(r.products)):
                if name in keys:
                    keys[name][i] = s.smiles
                elif errors[i] is None:
                    errors[i], kinds[i] = f"{col}: more species than the family's first rows ({name})", "species"
        res = Resolution("molecule", spec.positions, keys, errors, kinds)
        res.extra["reactant_frequency"] = frequency
    else:
        template = ReactionTemplate(spec.template)
        subs = substituent_columns(df, spec.columns, errors, kinds)
        for i in range(n):
            if errors[i] is not None:
                continue
            try:
                reactions[i] = template.build([subs[c][i] for c in spec.columns], max_atoms)
            except StructureError as exc:
                errors[i], kinds[i] = f"template: {exc}", exc.kind
        res = Resolution("substituent", tuple(spec.columns), subs, errors, kinds)
    res.extra["reactions"] = np.array(reactions, dtype=object)
    return res
