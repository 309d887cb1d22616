"""How a reaction family's species sit in named positions, and which of them vary.

A family is one reaction run on many substrates: every row has the same number of reactants
and of products (its layout: A → B, A → B + C, A + B → C + D, ...). Within a side, species are
put in a canonical order — the species met most often in the family first (the constant
partner: the reagent, the leaving group, the co-product), then larger (heavy atoms), then by
canonical SMILES — and named ``reactant1``, ``reactant2``, ..., ``product1``, ``product2``....
A position that holds the same species on every row is constant: it gets no descriptor
columns (it cannot explain anything) and a library row with another species there is outside
what the model knows. The other positions vary and are described.

The layout is found from the family's rows when a model is fitted and kept in the model, so a
library is read the same way; a row laid out differently says what differs.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from rdkit import Chem

from .checks import DEFAULT_MAX_HEAVY_ATOMS, StructureError
from .reaction import Reaction, ReactionTemplate, Species, parse_reaction


@dataclass(frozen=True)
class ReactionLayout:
    n_reactants: int
    n_products: int
    #: (species SMILES, rows it occurs in) on each side, most frequent first (the order rule)
    reactant_frequency: tuple[tuple[str, int], ...] = ()
    product_frequency: tuple[tuple[str, int], ...] = ()
    #: (position, species SMILES) of the positions that hold one species on every row
    constant: tuple[tuple[str, str], ...] = field(default=())

    @property
    def positions(self) -> tuple[str, ...]:
        return (tuple(f"reactant{k + 1}" for k in range(self.n_reactants)) +
                tuple(f"product{k + 1}" for k in range(self.n_products)))

    @property
    def varying(self) -> tuple[str, ...]:
        fixed = dict(self.constant)
        return tuple(p for p in self.positions if p not in fixed)

    def as_dict(self) -> dict:
        return {"reactants": self.n_reactants, "products": self.n_products,
                "reactant_frequency": [list(p) for p in self.reactant_frequency],
                "product_frequency": [list(p) for p in self.product_frequency],
                "constant": [list(p) for p in self.constant]}

    @classmethod
    def from_dict(cls, d: dict) -> "ReactionLayout":
        pairs = lambda key: tuple((str(a), int(b)) for a, b in d.get(key) or ())  # noqa: E731
        return cls(int(d["reactants"]), int(d["products"]), pairs("reactant_frequency"), pairs("product_frequency"),
                   tuple((str(a), str(b)) for a, b in d.get("constant") or ()))


def _heavy(smiles: str) -> int:
    mol = Chem.MolFromSmiles(smiles)
    return mol.GetNumHeavyAtoms() if mol is not None else 0


def _ordered(species: tuple[Species, ...], frequency: dict[str, int]) -> tuple[Species, ...]:
    return tuple(sorted(species, key=lambda s: (-frequency.get(s.smiles, 0), -_heavy(s.smiles), s.smiles)))


def infer_layout(reactions) -> ReactionLayout:
    """The layout of the rows that parsed: the most common number of reactants and products,
    species frequencies, and the positions that never change."""
    good = [r for r in reactions if r is not None]
    if not good:
        return ReactionLayout(1, 1)
    (n_r, n_p), _ = Counter((len(r.reactants), len(r.products)) for r in good).most_common(1)[0]
    same = [r for r in good if (len(r.reactants), len(r.products)) == (n_r, n_p)]
    freq_r = Counter(s for r in same for s in {x.smiles for x in r.reactants})
    freq_p = Counter(s for r in same for s in {x.smiles for x in r.products})
    layout = ReactionLayout(n_r, n_p, tuple(freq_r.most_common()), tuple(freq_p.most_common()))
    seen: dict[str, set[str]] = {}
    for r in same:
        for pos, s in arrange(r, layout).items():
            seen.setdefault(pos, set()).add(s.smiles)
    constant = tuple((pos, next(iter(v))) for pos, v in seen.items() if len(v) == 1) if len(same) > 1 else ()
    return ReactionLayout(n_r, n_p, layout.reactant_frequency, layout.product_frequency, constant)


def arrange(reaction: Reaction, layout: ReactionLayout) -> dict[str, Species]:
    """Position → species of one reaction in the family's layout, or :class:`StructureError`
    saying what differs (the number of species, or a missing constant partner). The constant
    partners take their positions first; the other species fill the varying positions in the
    canonical order."""
    out: dict[str, Species] = {}
    fixed = dict(layout.constant)
    sides = (("reactant", reaction.reactants, layout.n_reactants, dict(layout.reactant_frequency)),
             ("product", reaction.products, layout.n_products, dict(layout.product_frequency)))
    for side, species, want, _ in sides:
        if len(species) != want:
            raise StructureError(f"{len(species)} {side}{'s' if len(species) != 1 else ''} here, {want} in the "
                                 f"family's other rows", "layout")
    for side, species, want, frequency in sides:
        left = list(_ordered(species, frequency))
        names = [f"{side}{k + 1}" for k in range(want)]
        for pos in names:
            if pos in fixed:
                match = next((s for s in left if s.smiles == fixed[pos]), None)
                if match is None:
                    raise StructureError(f"no {fixed[pos]} among the {side}s here ({', '.join(s.smiles for s in left)}); "
                                         f"every training member has it as {pos} (the model knows nothing about "
                                         f"another partner)", "partner")
                out[pos] = match
                left.remove(match)
        for pos in names:
            if pos not in fixed:
                out[pos] = left.pop(0)
    return out


def resolve_reactions(df: pd.DataFrame, spec, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS):
    """Resolution for reaction or template mode: canonical species per varying position (reaction
    mode) or substituent keys per column (template mode); the reactions and the layout in
    ``extra``."""
    from .resolve import Resolution, reader_errors, substituent_columns

    n = len(df)
    errors, kinds = reader_errors(df)
    reactions: list[Reaction | None] = [None] * n
    if spec.mode == "template":
        template = ReactionTemplate(spec.template)
        subs = substituent_columns(df, spec.columns, errors, kinds)
        for i in np.flatnonzero(pd.isna(errors)):
            try:
                reactions[i] = template.build([subs[c][i] for c in spec.columns], max_atoms)
            except StructureError as exc:
                errors[i], kinds[i] = f"template: {exc}", exc.kind
        res = Resolution("substituent", tuple(spec.columns), subs, errors, kinds)
        res.extra["reactions"] = np.array(reactions, dtype=object)
        return res
    col = spec.columns[0]
    texts = df[col].astype(str).to_numpy()
    mult = df[spec.multiplicity].astype(str).to_numpy() if spec.multiplicity else [None] * n
    for i in np.flatnonzero(pd.isna(errors)):
        try:
            reactions[i] = parse_reaction(texts[i], max_atoms, mult[i])
        except StructureError as exc:
            errors[i], kinds[i] = f"{col}: {exc}", exc.kind
    layout = spec.layout if spec.layout is not None else infer_layout(reactions)
    varying = layout.varying
    keys = {p: np.full(n, None, dtype=object) for p in varying}
    for i, r in enumerate(reactions):
        if r is None:
            continue
        try:
            placed = arrange(r, layout)
        except StructureError as exc:
            errors[i], kinds[i], reactions[i] = f"{col}: {exc}", exc.kind, None
            continue
        for p in varying:
            keys[p][i] = placed[p].smiles
    res = Resolution("molecule", varying, keys, errors, kinds)
    res.extra["reactions"] = np.array(reactions, dtype=object)
    res.extra["layout"] = layout
    return res
