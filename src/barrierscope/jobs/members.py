"""A family's table → the usable members: descriptors, reaction energies and barriers.

Structures are described (or there are none, for a curve-only model), the user's own
descriptor columns are added, energies are parsed into kcal/mol at this edge, and bad rows,
duplicates and unit mix-ups are found (:mod:`..io.pairs`). Every problem names its row.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..io.pairs import RowProblem, load_pairs
from ..io.tables import ROW, is_missing_cell, parse_numeric, require_columns, row_ids
from ..structures.spec import InputSpec
from ..units import normalize_unit


def _extra_matrix(df: pd.DataFrame, columns: list[str], ids: pd.Series, source: str):
    require_columns(df, columns, source)
    data, problems = {}, []
    rows = df[ROW].to_numpy()
    for col in columns:
        values, bad = parse_numeric(df[col].reset_index(drop=True), col)
        for pos, msg in bad:
            if is_missing_cell(msg):
                continue  # missing user descriptors are imputed (and counted), like missing RDKit ones
            problems.append(RowProblem(int(rows[pos]), ids.iloc[pos], msg))
        data[col] = values
    return pd.DataFrame(data, index=df.index), problems


def computed_energy_column(df: pd.DataFrame, column: str, ids: pd.Series, *, source: str, unit: str):
    """The chemist's computed reaction energies (``column``, in ``unit``) in kcal/mol, as a
    one-column DataFrame, and the rows without a usable one (every member needs it: it anchors
    the energy stage)."""
    from ..units import factor_to_kcal

    require_columns(df, [column], source)
    values, bad = parse_numeric(df[column].reset_index(drop=True), column)
    rows = df[ROW].to_numpy()
    problems = [RowProblem(int(rows[pos]), ids.iloc[pos], f"{msg} (the computed reaction energy, --computed-energy)")
                for pos, msg in bad]
    return pd.DataFrame({column: values * factor_to_kcal(unit)}, index=df.index), problems


def prepare_members(df: pd.DataFrame, source: str, spec: InputSpec, engine, *, opts):
    """Descriptors, energies and barriers of the usable members; problems name their rows."""
    unit = normalize_unit(opts.units)
    ids = row_ids(df, opts.id_column, source)
    problems: list[RowProblem] = []
    X = None
    keys = None
    if spec.mode != "none":
        from ..descriptors.featurize import featurize

        require_columns(df, list(spec.columns) + ([spec.multiplicity] if spec.multiplicity else []), source)
        block = featurize(df, spec, engine, max_atoms=opts.max_atoms)
        X = block.X
        rows = df[ROW].to_numpy()
        problems += [RowProblem(int(rows[i]), ids.iloc[i], block.status[i]) for i in np.flatnonzero(~block.ok)]
        keys = pd.Series(["|".join(str(block.units[p][i]) for p in block.units) for i in range(len(df))])
        layout = block.extra.get("layout")
        if layout is not None:  # positions must mean the same at screening time
            from dataclasses import replace

            spec = replace(spec, layout=layout, positions=layout.varying)
    if opts.extra_descriptors:
        extra, bad = _extra_matrix(df, opts.extra_descriptors, ids, source)
        problems += bad
        X = extra if X is None else pd.concat([X, extra], axis=1)
    computed = getattr(opts, "computed_energy", None)
    if computed and computed.lower() != "none":
        col, bad = computed_energy_column(df, computed, ids, source=source, unit=unit)
        problems += bad
        X = col if X is None else pd.concat([X.drop(columns=[computed], errors="ignore"), col], axis=1)
    labels = None
    if getattr(opts, "family_column", None):
        from .families import family_labels, one_hot

        labels, bad = family_labels(df, opts.family_column, source)
        problems += bad
        # The same substrate may be a member of several families (another reagent, solvent...).
        base = keys if keys is not None else ids
        keys = pd.Series([f"{k}|family={f}" for k, f in zip(base, labels)])
        if X is not None:
            X = pd.concat([X.reset_index(drop=True), one_hot(labels, sorted(set(labels) - {""}))], axis=1)
            X.index = df.index
    pairs = load_pairs(df, source, opts.energy_column, opts.barrier_column, unit=unit, id_col=opts.id_column,
                       duplicates=getattr(opts, "duplicates", "refuse"), temperature=getattr(opts, "temperature", 298.15),
                       skip_bad_rows=opts.skip_bad_rows, keys=keys, extra_bad=problems)
    if labels is not None:
        pairs.families = [str(v) for v in np.asarray(labels)[pairs.keep]]
    X = None if X is None else X.loc[pairs.keep].reset_index(drop=True)
    return X, pairs, spec
