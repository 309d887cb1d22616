"""Rows of a table → canonical structure units per row, with the first problem of each row.

Each distinct cell is resolved once and the results are taken by index, so a library with few
distinct substituents costs few RDKit parses. A unit is a canonical substituent key per
position (substituent, core and template modes) or a canonical molecule per position
(molecule and reaction modes).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..io.tables import READ_ERROR
from .checks import DEFAULT_MAX_HEAVY_ATOMS, StructureError, quietly
from .spec import InputSpec


@dataclass
class Resolution:
    """Canonical units per row; ``errors[i]`` is None for a good row."""

    kind: str                                  # "substituent" or "molecule"
    positions: tuple[str, ...]
    keys: dict[str, np.ndarray]                # position → object array of keys (None where failed)
    errors: np.ndarray                         # object array of messages or None
    error_kinds: np.ndarray                    # object array of short kinds or None
    extra: dict[str, np.ndarray] = field(default_factory=dict)


def _factorized(values: pd.Series):
    codes, uniques = pd.factorize(values.astype(str).fillna(""), sort=False)
    return codes, list(uniques)


def _per_unique(texts, resolve):
    """Apply ``resolve`` to each distinct text; (results, error messages, error kinds) arrays."""
    results = np.full(len(texts), None, dtype=object)
    messages = np.full(len(texts), None, dtype=object)
    kinds = np.full(len(texts), None, dtype=object)
    for u, text in enumerate(texts):
        try:
            results[u] = resolve(text)
        except StructureError as exc:
            messages[u] = str(exc)
            kinds[u] = exc.kind
    return results, messages, kinds


def _first_error(errors, kinds, new_messages, new_kinds, *, prefix: str):
    """Keep the first problem of each row; later ones are implied by it."""
    take = pd.isna(errors) & pd.notna(new_messages)
    errors[take] = [f"{prefix}: {m}" for m in new_messages[take]]
    kinds[take] = new_kinds[take]


def reader_errors(df: pd.DataFrame):
    """Per-row (message, kind) arrays, pre-filled where the reader found a row unusable."""
    n = len(df)
    errors = np.full(n, None, dtype=object)
    kinds = np.full(n, None, dtype=object)
    if READ_ERROR in df.columns:
        bad = (df[READ_ERROR].astype(str) != "").to_numpy()
        errors[bad] = df.loc[bad, READ_ERROR].astype(str).to_numpy()
        kinds[bad] = "unreadable"
    return errors, kinds


def substituent_columns(df: pd.DataFrame, columns, errors, kinds) -> dict[str, np.ndarray]:
    """Canonical substituent keys per column (each distinct cell parsed once); problems go
    into ``errors``/``kinds`` (first problem of a row wins)."""
    from .substituent import substituent_key

    keys = {}
    for col in columns:
        codes, uniques = _factorized(df[col])
        resolved, msg, kind = _per_unique(uniques, substituent_key)
        keys[col] = resolved[codes]
        _first_error(errors, kinds, msg[codes], kind[codes], prefix=col)
    return keys


@quietly
def resolve_structures(df: pd.DataFrame, spec: InputSpec, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> Resolution:
    """Canonical units of every row of ``df`` according to ``spec``.

    Each distinct cell is resolved once and the results are taken by index, so a library
    with few distinct substituents costs few RDKit parses.
    """
    errors, kinds = reader_errors(df)

    if spec.mode == "substituents":
        keys = substituent_columns(df, spec.columns, errors, kinds)
        return Resolution("substituent", spec.positions, keys, errors, kinds)

    if spec.mode == "core":
        from .core import CoreDecomposer

        decomposer = CoreDecomposer(spec.core)
        col = spec.columns[0]
        codes, uniques = _factorized(df[col])
        resolved, msg, kind = _per_unique(uniques, lambda t: decomposer.decompose_smiles(t, max_atoms))
        _first_error(errors, kinds, msg[codes], kind[codes], prefix=col)
        keys = {}
        for j, p in enumerate(spec.positions):
            per_u = np.array([r[j] if r is not None else None for r in resolved], dtype=object)
            keys[p] = per_u[codes]
        return Resolution("substituent", spec.positions, keys, errors, kinds)

    if spec.mode == "molecule":
        from .molecule import molecule_key

        col = spec.columns[0]
        codes, uniques = _factorized(df[col])
        resolved, msg, kind = _per_unique(uniques, lambda t: molecule_key(t, max_atoms))
        _first_error(errors, kinds, msg[codes], kind[codes], prefix=col)
        return Resolution("molecule", spec.positions, {spec.positions[0]: resolved[codes]}, errors, kinds)

    if spec.mode in ("reaction", "template"):
        from .layout import resolve_reactions

        return resolve_reactions(df, spec, max_atoms)

    raise ValueError(f"input mode {spec.mode!r} has no structures to describe")
