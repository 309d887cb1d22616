"""The `suggest` job: which candidates to compute next, with the facts behind each pick.

Candidates are predicted like a screen (every row gets a status); those already computed —
the same id or the same structure as a training member — are left out and counted; the
rest go to the design (:mod:`..estimators.design`). The record is in kcal/mol; the reasons
in words are written by the views.
"""

from __future__ import annotations

import numpy as np

from ..estimators.design import DOMAINS, GOALS, Candidates, energy_state, pick
from ..io.modelfile import load_model
from ..io.tables import read_table
from .executors import cached_engine
from .options import at_least, one_of
from .predict import OK, ScreenOptions, predict_chunk
from .records import Pick, PickFacts, SuggestRecord
from ..errors import DataError


def _already_computed(model, frame, keys) -> np.ndarray:
    """Candidates that are training members: the same id, or the same structure (and, for a
    several-families model, in the same family)."""
    ids = [str(i) for i in model.training.get("ids", [])]
    cand_ids = frame["id"].astype(str).tolist()
    if model.family_column:   # the same substrate may be a member with one reagent and new with another
        fams = [str(f) for f in model.training.get("families") or []]
        ids = [f"{i}|family={f}" for i, f in zip(ids, fams)]
        labels = frame[model.family_column].astype(str).str.strip().tolist()
        cand_ids = [f"{i}|family={f}" for i, f in zip(cand_ids, labels)]
        keys = None if keys is None else [f"{k}|family={f}" for k, f in zip(keys, labels)]
    seen = np.isin(np.asarray(cand_ids, dtype=object), ids)
    known = set(model.training.get("keys") or [])
    if keys is not None and known:
        seen |= np.array([k in known and not k.startswith("|") and k != "" for k in keys])
    return seen


def _facts(model, cands: Candidates, c: int, goal: str, *, chosen: dict | None = None) -> PickFacts:
    """What a pick's reason rests on (kcal/mol)."""
    train_e = np.asarray(model.training["energy"], dtype=float)
    spacing = np.diff(np.sort(train_e))
    sparse = 2.0 * float(np.median(spacing)) if spacing.size else None
    e = float(cands.energy[c])
    curve = model.curve
    where = "gap"
    if e < train_e.min():
        where = "downhill"
    elif e > train_e.max():
        where = "uphill"
    elif curve.relation_.name == "asymptotic":
        p = curve.params_dict()
        if abs(e - p["midpoint"]) < p["width"]:
            where = "midpoint"
    return PickFacts(where=where, gap=float(np.min(np.abs(train_e - e))), below=float(train_e.min() - e),
                     above=float(e - train_e.max()), goal=goal, floor_open=any(curve.ci_open_.get("floor", ())),
                     threshold=float(model.domain.threshold_) if np.isfinite(model.domain.threshold_) else None,
                     sparse_gap=sparse, best=bool((chosen or {}).get("best", True)),
                     domain=str((chosen or {}).get("domain", "")))


def suggest_file(model_path, candidates_path, k: int, goal: str = "parameters", *, energy_column: str | None = None,
                 energy_units: str | None = None, id_column: str | None = None, cache_dir="default",
                 max_atoms: int = 200, model=None, domain: str = "prefer") -> SuggestRecord:
    """Picks with scores and the facts behind them, plus what was left out and why.
    ``candidates_path`` is a table file, or a DataFrame as :func:`..io.tables.read_table` gives."""
    at_least("-k", k, 1)
    goal = one_of("--goal", goal, GOALS)
    domain = one_of("--domain", domain, DOMAINS)
    model = model if model is not None else load_model(model_path)
    if hasattr(candidates_path, "columns"):  # a DataFrame read with io.tables (it has the row column)
        table, candidates_path = candidates_path, "candidates"
    else:
        table = read_table(candidates_path)
    if not model.has_structures and energy_column is None:
        energy_column = model.energy_column
    opts = ScreenOptions(energy_column=energy_column, energy_units=energy_units, id_column=id_column,
                         cache_dir=cache_dir, max_atoms=max_atoms)
    engine = cached_engine(model, cache_dir) if model.has_structures else None
    res = predict_chunk(model, table, str(candidates_path), opts, engine=engine)
    frame = res.frame
    ok = (frame["status"] == OK).to_numpy()
    done = ok & _already_computed(model, frame, None if res.block is None else res.block.keys)
    pool = ok & ~done
    if not pool.any():
        raise DataError(f"{candidates_path}: no candidate is left to suggest (none could be predicted, or every one "
                         f"is already a training member); see their statuses with `screen`")
    idx = np.flatnonzero(pool)
    sub = frame.iloc[idx].reset_index(drop=True)
    Z = None if res.X is None else model.two_stage.energy_.standardise(res.X.iloc[idx])
    cands = Candidates(ids=list(sub["id"]), energy=sub["energy"].to_numpy(float),
                       energy_sd=sub["energy_sd"].to_numpy(float), Z=Z, in_domain=sub["in_domain"].to_numpy(bool),
                       ad_distance=sub["ad_distance"].to_numpy(float),
                       given=(sub["energy_source"] == "given").to_numpy())
    near = float(np.median(model.domain.train_distances_)) if model.domain.train_distances_.size else 0.0
    picks = pick(model.curve, cands, k, goal, energy_state=energy_state(model) if goal == "predictions" else None,
                 min_gap=max(0.5, float(np.median(cands.energy_sd))), near=near, domain=domain)
    out = [Pick(id=str(cands.ids[p["index"]]), score=p["score"], energy=float(cands.energy[p["index"]]),
                energy_sd=float(cands.energy_sd[p["index"]]), energy_given=bool(cands.given[p["index"]]),
                in_domain=bool(cands.in_domain[p["index"]]), ad_distance=float(cands.ad_distance[p["index"]]),
                barrier=float(sub.loc[p["index"], "barrier"]), low=float(sub.loc[p["index"], "low"]),
                high=float(sub.loc[p["index"], "high"]), facts=_facts(model, cands, p["index"], goal, chosen=p),
                energy_outside_span=bool(sub.loc[p["index"], "ad_energy_out"]),
                energy_clipped=bool(sub.loc[p["index"], "energy_clipped"]),
                unusual_descriptors=bool(sub.loc[p["index"], "off_manifold"]),
                structure={c: str(sub.loc[p["index"], c]) for c in model.spec.columns if c in sub.columns})
           for p in picks]
    if domain == "only" and not picks:
        raise DataError(f"{candidates_path}: no in-domain candidate is left to suggest; --domain prefer or any "
                         f"considers the others")
    return SuggestRecord(goal=goal, domain=domain, k=k, units=model.units, energy_kind=model.energy_kind, candidates=int(len(frame)), considered=int(pool.sum()),
                         already_computed=int(done.sum()),
                         already_computed_ids=frame.loc[done, "id"].astype(str).tolist(),
                         left_out={str(kind): int(v) for kind, v in frame.loc[~ok, "error_kind"].value_counts().items()},
                         picks=out)
