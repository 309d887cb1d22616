"""The screen output's columns: names, the user's unit, order and rounding.

A prediction frame (kcal/mol, from :mod:`..jobs.predict`) becomes the table the chemist
reads. Energy columns carry their unit in the name (``barrier_kJ_mol``); CSV and TSV get
values rounded to what the model can support (energies to 0.01, α to 0.001, rates and
half-lives to four significant figures), Parquet keeps full precision. Adding a column
means adding it here (and computing it in the prediction frame).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..kinetics import format_duration
from ..units import factor_to_kcal
from .units import unit_slug

#: (output name with {u} for the unit slug, source column in the prediction frame, kind);
#: kinds: energy (converted, 2 decimals), plain3 (3 decimals), sig4 (4 significant figures), as-is.
SCHEMA = (
    ("reaction_energy_{u}", "energy", "energy"),
    ("reaction_energy_sd_{u}", "energy_sd", "energy"),
    ("reaction_energy_source", "energy_source", "text"),
    ("barrier_{u}", "barrier", "energy"),
    ("barrier_low90_{u}", "low", "energy"),
    ("barrier_high90_{u}", "high", "energy"),
    ("barrier_sd_{u}", "barrier_sd", "energy"),
    ("leffler_alpha", "alpha", "plain3"),
    ("rate_constant_per_s", "rate_constant_per_s", "sig4"),
    ("rate_low90_per_s", "rate_low90_per_s", "sig4"),
    ("rate_high90_per_s", "rate_high90_per_s", "sig4"),
    ("rate_constant_per_M_per_s", "rate_constant_per_M_per_s", "sig4"),
    ("rate_low90_per_M_per_s", "rate_low90_per_M_per_s", "sig4"),
    ("rate_high90_per_M_per_s", "rate_high90_per_M_per_s", "sig4"),
    ("half_life_s", "half_life_s", "sig4"),
    ("half_life_low90_s", "half_life_low90_s", "sig4"),
    ("half_life_high90_s", "half_life_high90_s", "sig4"),
    ("half_life", "half_life_s", "duration"),
    ("ad_distance", "ad_distance", "plain3"),
    ("ad_descriptor_out", "ad_descriptor_out", "text"),
    ("ad_energy_out", "ad_energy_out", "text"),
    ("energy_clipped", "energy_clipped", "text"),
    ("unusual_descriptors", "off_manifold", "text"),
    ("in_domain", "in_domain", "text"),
    ("reaches_floor", "reaches_floor", "text"),
    ("diffusion_limited", "diffusion_limited", "text"),
    ("route", "route", "text"),
    ("notes", "notes", "text"),
)


def _sig(values: np.ndarray, digits: int = 4) -> np.ndarray:
    """Rounded to ``digits`` significant figures. Each magnitude is rounded by an exact power
    of ten (multiplied by it, or divided by it: both exact below 10²²), so the result is the
    double nearest the rounded decimal and the CSV shows 704100000, not 704100000.0000001."""
    v = np.asarray(values, dtype=float)
    out = v.copy()
    ok = np.isfinite(v) & (v != 0)
    decimals = digits - 1 - np.floor(np.log10(np.abs(v[ok]))).astype(int)
    idx = np.flatnonzero(ok)
    for d in np.unique(decimals):
        at = idx[decimals == d]
        if abs(int(d)) > 22:        # beyond the exact powers of ten (and 10³⁰⁹ overflows): by text
            out[at] = [float(f"{x:.{digits - 1}e}") for x in v[at]]
            continue
        p = 10.0 ** abs(int(d))
        out[at] = np.round(v[at] * p) / p if d >= 0 else np.round(v[at] / p) * p
    return out


def _durations(seconds) -> np.ndarray:
    s = np.asarray(seconds, dtype=float)
    return np.array([format_duration(float(t)) if np.isfinite(t) else "" for t in s], dtype=object)


#: Columns of bimolecular screens only (second-order rate constants and the diffusion flag).
BIMOLECULAR = {"rate_constant_per_M_per_s", "rate_low90_per_M_per_s", "rate_high90_per_M_per_s", "diffusion_limited"}


def screen_frame(pred: pd.DataFrame, unit: str, rounded: bool = True, bimolecular: bool = False) -> pd.DataFrame:
    """The output table of a prediction frame: identification columns as they came, then
    :data:`SCHEMA` in the user's ``unit`` (:data:`BIMOLECULAR` only for a bimolecular step);
    ``rounded`` for CSV/TSV."""
    f = factor_to_kcal(unit)
    slug = unit_slug(unit)
    first = [c for c in pred.columns if c not in {s for _, s, _ in SCHEMA} and c not in ("low", "high",
                                                                                         "relation_outside",
                                                                                         "row_floor")]
    out = pred[first].copy()
    for name, source, kind in SCHEMA:
        if name in BIMOLECULAR and not bimolecular:
            continue
        v = pred[source]
        if kind == "energy":
            v = v.to_numpy(dtype=float) / f
            v = np.round(v, 2) if rounded else v
        elif kind == "plain3":
            v = np.round(v.to_numpy(dtype=float), 3) if rounded else v.to_numpy(dtype=float)
        elif kind == "sig4":
            v = _sig(v.to_numpy(dtype=float)) if rounded else v.to_numpy(dtype=float)
        elif kind == "duration":
            v = _durations(v)
        out[name.format(u=slug)] = v
    return out
