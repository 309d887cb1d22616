"""Predictions for a chunk of library rows, every row with a status (energies in kcal/mol).

:func:`predict_chunk` is the unit of work of `screen` and `suggest`: it runs wherever the
executor puts it (this process, a worker process, a Dask task) and returns one row per
input row, in input order. Rows that cannot be predicted keep their place with the reason in
``status``; the others get the reaction energy (given or predicted), the barrier with its
interval, the local Leffler α, rates and half-lives with intervals (free-energy models), and
the applicability-domain flags.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..io.tables import READ_ERROR, ROW, is_missing_cell, parse_numeric, row_ids
from ..kinetics import eyring_rate, half_life
from ..units import factor_to_kcal

OK = "ok"
#: What the energy stage's guard did to a row (see estimators.ridge and estimators.two_stage).
GUARD_NOTES = {"off_manifold": "descriptor combination unlike the members': pulled back to their range before "
                               "predicting the reaction energy",
               "energy_clipped": "predicted reaction energy beyond the members' span + 25 %: clipped there"}


@dataclass(frozen=True)
class ScreenOptions:
    temperature: float = 298.15          # K
    transmission: float = 1.0
    energy_column: str | None = None     # library column with computed reaction energies
    energy_units: str | None = None      # unit of that column (default: the model's)
    id_column: str | None = None
    cache_dir: str | None = "default"
    max_atoms: int = 200
    #: library columns carried into the output after barrierscope's own (None: every one)
    keep: tuple[str, ...] | None = None
    #: bimolecular steps: molecularity and standard state of the barriers (None: the model's),
    #: the partner's concentration (mol/L; pseudo-first-order half-lives) and the solvent whose
    #: viscosity sets the diffusion limit (None: the model's xtb solvent, if any)
    molecularity: int | None = None
    standard_state: str | None = None
    concentration: float | None = None
    solvent: str | None = None


@dataclass
class ChunkPrediction:
    frame: pd.DataFrame             # one row per input row (kcal/mol, s⁻¹, s)
    X: pd.DataFrame | None          # the model's descriptors of the chunk (None: curve-only model)
    block: object = None            # the FeatureBlock (its ``keys``: each row's structure key)
    #: the library's own columns carried into the output (after barrierscope's), as given
    library: pd.DataFrame | None = None


def carried_columns(chunk: pd.DataFrame, model, opts) -> list[str]:
    """The library's columns that follow barrierscope's in the output: every one not already
    shown (structures, --energy, --family, the id column, internal columns), or ``opts.keep``."""
    from ..io.tables import id_column_of

    shown = {*model.spec.columns, opts.energy_column, model.family_column, opts.id_column or id_column_of(chunk.columns),
             ROW, READ_ERROR}
    cols = [c for c in chunk.columns if c not in shown and not str(c).startswith("_")]
    return cols if opts.keep is None else [c for c in cols if c in set(opts.keep)]


def with_library(frame: pd.DataFrame, library: pd.DataFrame | None) -> pd.DataFrame:
    """``frame`` followed by the library's own columns; a name barrierscope already uses gets
    the prefix ``library_``."""
    if library is None or library.shape[1] == 0:
        return frame
    lib = library.reset_index(drop=True)
    lib.columns = [f"library_{c}" if c in frame.columns else c for c in lib.columns]
    return pd.concat([frame.reset_index(drop=True), lib], axis=1)


def _given_energies(chunk, model, opts, status, *, kind) -> np.ndarray:
    if opts.energy_column is None:
        return np.full(len(chunk), np.nan)
    values, problems = parse_numeric(chunk[opts.energy_column], opts.energy_column)
    for pos, msg in problems:
        missing = is_missing_cell(msg)
        # With structures a missing energy is predicted; text that is not a number is an error.
        if status[pos] == OK and not (missing and model.has_structures):
            status[pos], kind[pos] = msg, "energy"
    return values * factor_to_kcal(opts.energy_units or model.units)


def _descriptors(chunk, model, opts, engine, *, status, kind, labels=None):
    from ..descriptors.featurize import featurize

    block = featurize(chunk, model.spec, engine, max_atoms=opts.max_atoms)
    for i in np.flatnonzero(~block.ok):
        if status[i] == OK:
            status[i], kind[i] = block.status[i], block.error_kind[i] or "structure"
    X = block.X
    notes = block.notes.copy()
    own = {c: 1.0 for c in model.extra_descriptors}
    if model.computed_energy:
        own[model.computed_energy] = factor_to_kcal(opts.energy_units or model.units)
    missing_note = "no computed reaction energy: the energy stage's free learner predicts this row"
    for c, factor in own.items():
        if c not in chunk.columns:
            if c == model.computed_energy:
                notes[:] = ["; ".join(v for v in (str(x), missing_note) if v) for x in notes]
            continue
        values, problems = parse_numeric(chunk[c].reset_index(drop=True), c)
        for pos, msg in problems:
            if is_missing_cell(msg):
                if c == model.computed_energy:
                    notes[pos] = "; ".join(v for v in (notes[pos], missing_note) if v)
                continue
            if status[pos] == OK:
                status[pos], kind[pos] = msg, "descriptor"
        X[c] = values * factor
    for c in model.features:
        if c.startswith("family=") and labels is not None:   # the family's indicator (several families)
            X[c] = (labels == c[len("family="):]).astype(float)
        elif c not in X.columns:  # a user's extra descriptor absent here is imputed like any missing value
            X[c] = np.nan
    return X[model.features], notes, block


def _families(chunk, model, status, kind):
    """(labels, codes) of a several-families model's rows; an unknown family is the row's status."""
    if model.joint is None:
        return None, None
    col = model.family_column
    if col not in chunk.columns:
        from ..errors import DataError

        raise DataError(f"the model fits several families: the library needs their column {col!r}")
    labels = chunk[col].astype(str).str.strip().to_numpy()
    codes = model.family_codes(labels)
    for i in np.flatnonzero(codes < 0):
        if status[i] == OK:
            status[i], kind[i] = (f"unknown family {labels[i]!r} (the model knows "
                                  f"{', '.join(model.joint['names'])})"), "unknown_family"
    return labels, codes


def kinetics_of(model, opts: ScreenOptions) -> dict:
    """The screen's kinetic setting: molecularity, standard state, concentration (M), solvent
    and its diffusion-limited rate constant (M⁻¹ s⁻¹, or None)."""
    from ..bimolecular import diffusion_rate, solvent_viscosity

    m = int(opts.molecularity or getattr(model, "molecularity", 1) or 1)
    state = opts.standard_state or getattr(model, "standard_state", None) or "1M"
    solvent = opts.solvent or (model.xtb or {}).get("solvent") if m == 2 else None
    k_diff = diffusion_rate(solvent_viscosity(solvent), opts.temperature) if (m == 2 and solvent) else None
    return {"molecularity": m, "standard_state": state, "concentration": opts.concentration, "solvent": solvent,
            "k_diff": k_diff}


def _rates(cols: dict, idx, p: dict, opts: ScreenOptions, *, kin: dict | None = None) -> None:
    t, kappa = opts.temperature, opts.transmission
    if kin is not None and kin["molecularity"] == 2:
        _second_order(cols, idx, p, opts=opts, kin=kin)
        return
    cols["rate_constant_per_s"][idx] = eyring_rate(p["barrier"], t, kappa)
    cols["rate_low90_per_s"][idx] = eyring_rate(p["high"], t, kappa)
    cols["rate_high90_per_s"][idx] = eyring_rate(p["low"], t, kappa)
    cols["half_life_s"][idx] = half_life(p["barrier"], t, kappa)
    cols["half_life_low90_s"][idx] = half_life(p["low"], t, kappa)
    cols["half_life_high90_s"][idx] = half_life(p["high"], t, kappa)


def _second_order(cols: dict, idx, p: dict, *, opts: ScreenOptions, kin: dict) -> None:
    """k (M⁻¹ s⁻¹) from the 1 M barrier, combined with the diffusion limit; with the partner's
    concentration, the pseudo-first-order k[B] (s⁻¹) and half-life ln 2 / (k[B])."""
    from ..bimolecular import DIFFUSION_CEILING, barrier_1M, observed_rate, second_order_rate

    t, kappa, state, k_diff = opts.temperature, opts.transmission, kin["standard_state"], kin["k_diff"]

    def k_of(g):
        return observed_rate(second_order_rate(barrier_1M(g, state, t), t, kappa), k_diff)

    k, k_lo, k_hi = k_of(p["barrier"]), k_of(p["high"]), k_of(p["low"])
    cols["rate_constant_per_M_per_s"][idx], cols["rate_low90_per_M_per_s"][idx] = k, k_lo
    cols["rate_high90_per_M_per_s"][idx] = k_hi
    k_act = second_order_rate(barrier_1M(p["barrier"], state, t), t, kappa)
    cols["diffusion_limited"][idx] = k_act >= (k_diff if k_diff is not None else DIFFUSION_CEILING)
    c = kin["concentration"]
    if c is None:
        return
    cols["rate_constant_per_s"][idx], cols["rate_low90_per_s"][idx], cols["rate_high90_per_s"][idx] = \
        k * c, k_lo * c, k_hi * c
    with np.errstate(divide="ignore"):
        cols["half_life_s"][idx] = np.log(2.0) / (k * c)
        cols["half_life_low90_s"][idx] = np.log(2.0) / (k_hi * c)
        cols["half_life_high90_s"][idx] = np.log(2.0) / (k_lo * c)


FLAGS = ("ad_descriptor_out", "ad_energy_out", "in_domain", "relation_outside", "off_manifold", "energy_clipped",
         "reaches_floor", "diffusion_limited")
#: Flags this module sets itself rather than reading from the model's prediction.
OWN_FLAGS = ("in_domain", "reaches_floor", "diffusion_limited")


def floor_of(curve) -> float | None:
    """The relation's barrier far downhill (kcal/mol), or None when it has no floor (the line)."""
    value = float(curve.predict(np.array([-1e6]))[0])
    return value if np.isfinite(value) and value > -1e5 else None


def reaches_floor(low, floor) -> np.ndarray:
    """Does each row's lower interval bound reach the curve's floor (a number, or each row's own
    family floor; kcal/mol)? Such rows the model cannot tell from the floor, or from each other."""
    low = np.asarray(low, dtype=float)
    if floor is None:
        return np.zeros(low.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        return np.isfinite(low) & (low <= np.asarray(floor, dtype=float) + 1e-9)
NUMERIC = ("energy", "energy_sd", "barrier", "low", "high", "barrier_sd", "alpha", "rate_constant_per_s",
           "rate_low90_per_s", "rate_high90_per_s", "half_life_s", "half_life_low90_s", "half_life_high90_s",
           "ad_distance", "rate_constant_per_M_per_s", "rate_low90_per_M_per_s", "rate_high90_per_M_per_s")


def predict_chunk(model, chunk: pd.DataFrame, source: str, opts: ScreenOptions, *, engine) -> ChunkPrediction:
    """One output row per input row of ``chunk``; see the module docstring."""
    chunk = chunk.reset_index(drop=True)
    n = len(chunk)
    status = np.full(n, OK, dtype=object)
    kind = np.full(n, "", dtype=object)
    notes = np.full(n, "", dtype=object)
    if READ_ERROR in chunk.columns:
        bad = (chunk[READ_ERROR].astype(str) != "").to_numpy()
        status[bad], kind[bad] = chunk.loc[bad, READ_ERROR].to_numpy(), "unreadable"
    given = _given_energies(chunk, model, opts, status, kind=kind)
    labels, codes = _families(chunk, model, status, kind)
    X = block = None
    if model.has_structures:
        X, notes, block = _descriptors(chunk, model, opts, engine, status=status, kind=kind, labels=labels)
    # Columns are filled as arrays and framed once (row-wise .loc writes cost more than the model).
    cols: dict = {"row": chunk[ROW].to_numpy(), "id": row_ids(chunk, opts.id_column, source).to_numpy()}
    for c in [*model.spec.columns, *([opts.energy_column] if opts.energy_column else []),
              *([model.family_column] if model.family_column else [])]:
        if c in chunk.columns and c not in cols:
            cols[c] = chunk[c].astype(str).str.replace("\n", " ", regex=False).to_numpy()
    cols["status"], cols["error_kind"] = status, kind
    for c in NUMERIC:
        cols[c] = np.full(n, np.nan)
    cols["energy_source"], cols["route"] = np.full(n, "", dtype=object), np.full(n, "", dtype=object)
    for c in FLAGS:
        cols[c] = np.zeros(n, dtype=bool)
    idx = np.flatnonzero(status == OK)
    if idx.size:
        p = model.predict(None if X is None else X.iloc[idx].reset_index(drop=True), given[idx],
                          None if codes is None else codes[idx])
        for c, key in (("energy", "energy"), ("energy_sd", "energy_std"), ("barrier", "barrier"), ("low", "low"),
                       ("high", "high"), ("barrier_sd", "barrier_std"), ("alpha", "alpha"),
                       ("ad_distance", "ad_distance"), ("route", "route"),
                       *((f, f) for f in FLAGS if f not in OWN_FLAGS)):
            cols[c][idx] = p[key]
        cols["energy_source"][idx] = np.where(p["energy_given"], "given", "predicted")
        if codes is not None:   # each row's own family floor
            cols["row_floor"] = np.full(n, np.nan)
            cols["row_floor"][idx] = model.family_floors()[codes[idx]]
        cols["reaches_floor"][idx] = reaches_floor(cols["low"][idx], cols["row_floor"][idx] if codes is not None
                                                   else floor_of(model.curve))
        cols["in_domain"][idx] = ~(p["ad_descriptor_out"] | p["ad_energy_out"])
        if model.energy_kind == "free-energy":
            _rates(cols, idx, p, opts, kin=kinetics_of(model, opts))
        for flag, text in ((p["relation_outside"], f"outside the {model.curve.relation_.label} relation's range of "
                                                    f"validity"),
                           (p["off_manifold"], GUARD_NOTES["off_manifold"]),
                           (p["energy_clipped"], GUARD_NOTES["energy_clipped"])):
            for j in idx[np.asarray(flag, dtype=bool)]:
                notes[j] = "; ".join(x for x in (notes[j], text) if x)
    cols["notes"] = notes
    frame = pd.DataFrame(cols)
    return ChunkPrediction(frame, X, block, library=chunk[carried_columns(chunk, model, opts)])
