"""Rows of a table → descriptor matrix, with a status for every row.

Structures are first resolved to canonical units (substituent keys per position, or whole
molecules), distinct units are described once through the :class:`DescriptorEngine`, and
the per-row matrix is assembled by index. Column names are ``<position>_<descriptor>``.
Nothing is dropped: a row whose structure fails gets its message in ``status`` and NaN
descriptors.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..structures.checks import DEFAULT_MAX_HEAVY_ATOMS
from ..structures.resolve import Resolution, resolve_structures
from ..structures.spec import InputSpec
from .tiers import DescriptorEngine

OK = "ok"


@dataclass
class FeatureBlock:
    """Descriptor matrix of a chunk of rows, with per-row status and notes."""

    X: pd.DataFrame
    status: np.ndarray          # "ok" or the message
    error_kind: np.ndarray      # "" or a short kind ("unparseable", "core_unmatched", ...)
    notes: np.ndarray           # "" or semicolon-separated notes (missing descriptor values)
    units: dict[str, np.ndarray]  # position → canonical unit per row
    extra: dict = field(default_factory=dict)  # reactions, reactant frequencies (reaction input)

    @property
    def ok(self) -> np.ndarray:
        return self.status == OK

    @property
    def keys(self) -> list[str]:
        """Each row's identity: its canonical units joined by '|' ("" where the row failed)."""
        cols = [self.units[p] for p in self.units]
        return ["|".join(str(c[i]) for c in cols) if self.status[i] == OK else "" for i in range(len(self.status))]


#: The semi-empirical reaction energy column (kcal/mol): products minus reactants.
REACTION_ENERGY_XTB = "reaction_energy_xtb"


def _reaction_energies(reactions, engine: DescriptorEngine, errors, kinds) -> np.ndarray:
    """GFN2-xTB reaction energy per row (kcal/mol); rows with a failed species get a status."""
    species = [s for r in reactions if r is not None for s in (*r.reactants, *r.products)]
    energies, failures = engine.species_energies(species)
    out = np.full(len(reactions), np.nan)
    for i, r in enumerate(reactions):
        if r is None:
            continue
        total, bad = 0.0, None
        for sign, group in ((-1.0, r.reactants), (1.0, r.products)):
            for s in group:
                key = f"{s.smiles}|{s.multiplicity}"
                if key in failures:
                    bad = bad or f"xtb reaction energy: {s.smiles}: {failures[key]}"
                else:
                    total += sign * energies[key]
        if bad is None:
            out[i] = total
        elif errors[i] is None:
            errors[i], kinds[i] = bad, "xtb"
    return out


def centre_block(df, spec: InputSpec, res: Resolution, engine: DescriptorEngine, errors, kinds) -> dict:
    """The centre tier's row-level columns (reaction and molecule modes), through the cache: a
    reaction's centre from its own SMILES (atom maps used when complete), a molecule's from
    ``spec.centre`` or its one radical atom. A row without a centre gets its message."""
    from .centre import VERSION, centre_row, columns, molecule_centres, reaction_centres

    n = len(df)
    names = columns() + ["centre_count"]
    if spec.mode == "reaction":
        texts = df[spec.columns[0]].astype(str).to_numpy()
        keys = [t if errors[i] is None or pd.isna(errors[i]) else None for i, t in enumerate(texts)]
    else:
        molecules = res.keys[res.positions[0]]
        keys = [None if m is None else f"{spec.centre or ''}|{m}" for m in molecules]

    def compute(todo):
        from rdkit import Chem

        query = Chem.MolFromSmarts(spec.centre) if spec.centre else None
        out = []
        for key in todo:
            try:
                if spec.mode == "reaction":
                    atoms = [(m, i) for m, i, _ in reaction_centres(key)]
                else:
                    mol = Chem.MolFromSmiles(key.split("|", 1)[1])
                    atoms = molecule_centres(mol, query)
                if not atoms:
                    raise ValueError("no atom changes its bonding")
                out.append({"values": centre_row(atoms)})
            except Exception as exc:  # noqa: BLE001 - one row's centre must not stop the table
                out.append({"error": str(exc).splitlines()[0][:300] or type(exc).__name__})
        return out

    scope = "centre:" + spec.mode
    found = engine._through_cache(scope, VERSION, sorted({k for k in keys if k is not None}), compute)
    block = {c: np.full(n, np.nan) for c in names}
    for i, k in enumerate(keys):
        if k is None:
            continue
        p = found[k]
        if p.get("error"):
            if errors[i] is None or pd.isna(errors[i]):
                errors[i], kinds[i] = f"centre: {p['error']}", "centre"
            continue
        for c in names:
            block[c][i] = p["values"].get(c, np.nan)
    return block


def featurize(df: pd.DataFrame, spec: InputSpec, engine: DescriptorEngine,
              max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS, *, resolution: Resolution | None = None) -> FeatureBlock:
    """Descriptors for every row of ``df``; see the module docstring."""
    res = resolution if resolution is not None else resolve_structures(df, spec, max_atoms)
    n = len(df)
    reactions = res.extra.get("reactions")
    # With reaction SMILES the xtb tier gives the reaction energy, not per-species orbitals.
    exclude = ("xtb",) if reactions is not None and res.kind == "molecule" else ()
    cols = engine.columns(res.kind, exclude)
    errors = res.errors.copy()
    kinds = res.error_kinds.copy()
    blocks = {}
    notes_parts = []
    all_keys = [k for p in res.positions for k in res.keys[p] if k is not None]
    table = engine.describe(all_keys, res.kind, exclude)
    values = table.values
    for p in res.positions:
        keys = pd.Series(res.keys[p], dtype=object)
        codes, uniques = pd.factorize(keys, use_na_sentinel=True)
        uniq = list(uniques)
        mat = values.reindex(uniq).to_numpy(dtype=float) if uniq else np.empty((0, len(cols)))
        out = np.full((n, len(cols)), np.nan)
        good = codes >= 0
        if uniq:
            out[good] = mat[codes[good]]
        for j, c in enumerate(cols):
            blocks[f"{p}_{c}"] = out[:, j]
        unit_err = np.array([table.errors.get(k) for k in uniq] + [None], dtype=object)[codes]
        for i in np.flatnonzero(pd.notna(unit_err) & pd.isna(errors)):
            errors[i] = f"{p} ({res.keys[p][i]}): {unit_err[i]}"
            kinds[i] = "descriptor"
        unit_notes = np.array(["; ".join(table.notes.get(k, [])) for k in uniq] + [""], dtype=object)[codes]
        notes_parts.append((p, unit_notes))
    if reactions is not None and "xtb" in engine.tiers:
        blocks[REACTION_ENERGY_XTB] = _reaction_energies(reactions, engine, errors, kinds)
    if "centre" in engine.tiers and spec.mode in ("reaction", "molecule"):
        blocks.update(centre_block(df, spec, res, engine, errors, kinds))
    X = pd.DataFrame(blocks, index=df.index)
    failed = pd.notna(errors)
    if failed.any():  # a row that failed carries no half-finished descriptors
        X.loc[failed, :] = np.nan
    notes = np.array(["; ".join(f"{p}: {parts[i]}" for p, parts in notes_parts if parts[i])
                      for i in range(n)], dtype=object) if any(
        (parts != "").any() for _, parts in notes_parts) else np.full(n, "", dtype=object)
    status = np.where(pd.isna(errors), OK, errors).astype(object)
    kind_out = np.where(pd.isna(kinds), "", kinds).astype(object)
    units = {p: res.keys[p] for p in res.positions}
    return FeatureBlock(X=X, status=status, error_kind=kind_out, notes=notes, units=units, extra=res.extra)
