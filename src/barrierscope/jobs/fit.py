"""The `fit` job: a family's table in; a validated model and its verdict out.

Steps: describe the structures (or none, for a curve-only model); validate the rows
(bad cells, duplicates, unit mix-ups); fit the two-stage, hybrid and direct routes and the
applicability domain on all members; validate every route by leave-one-out with everything
inside the loop; compare the physics routes with the black box; y-randomise; choose the
route the evidence supports.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..errors import FitRefused
from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.domain import ApplicabilityDomain
from ..estimators.learners import check_learner, minimum_members
from ..estimators.two_stage import HybridRegressor, TwoStageRegressor
from ..io.pairs import RowProblem, load_pairs
from ..io.tables import ROW, parse_numeric, require_columns, row_ids
from ..relations import RELATIONS, get_relation
from ..structures.spec import InputSpec
from ..units import factor_to_kcal, normalize_unit, parse_energy_kind
from ..validation.loo import (
    PHYSICS_ROUTES,
    ROUTE_LABELS,
    choose_winner,
    loo_predictions,
    metrics,
    paired_comparison,
    verdict_text,
    y_randomization,
)
from ..views.cautions import CAUTION
from .model import FamilyModel


@dataclass
class FitOptions:
    energy_column: str
    barrier_column: str
    learner: str = "ridge"
    relation: str = "asymptotic"
    units: str = "kcal/mol"
    energy_kind: str = "free-energy"
    extra_descriptors: list[str] = field(default_factory=list)
    id_column: str | None = None
    skip_bad_rows: bool = False
    n_shuffles: int = 5
    level: float = 0.90
    random_state: int = 0
    max_atoms: int = 200


def _extra_matrix(df: pd.DataFrame, columns: list[str], ids: pd.Series, source: str):
    require_columns(df, columns, source)
    data, problems = {}, []
    rows = df[ROW].to_numpy()
    for col in columns:
        values, bad = parse_numeric(df[col].reset_index(drop=True), col)
        for pos, msg in bad:
            if "empty cell" in msg or "NaN" in msg:
                continue  # missing user descriptors are imputed (and counted), like missing RDKit ones
            problems.append(RowProblem(int(rows[pos]), ids.iloc[pos], msg))
        data[col] = values
    return pd.DataFrame(data, index=df.index), problems


def prepare_members(df: pd.DataFrame, source: str, spec: InputSpec, engine, opts: FitOptions):
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
        freq = block.extra.get("reactant_frequency")
        if freq is not None:  # the order of reactants must mean the same at screening time
            from dataclasses import replace

            spec = replace(spec, reactant_frequency=tuple(freq.most_common(500)))
    if opts.extra_descriptors:
        extra, bad = _extra_matrix(df, opts.extra_descriptors, ids, source)
        problems += bad
        X = extra if X is None else pd.concat([X, extra], axis=1)
    pairs = load_pairs(df, source, opts.energy_column, opts.barrier_column, unit, id_col=opts.id_column,
                       skip_bad_rows=opts.skip_bad_rows, keys=keys, extra_bad=problems)
    X = None if X is None else X.loc[pairs.keep].reset_index(drop=True)
    return X, pairs, spec


def _check_sizes(n: int, has_x: bool, opts: FitOptions) -> None:
    relations = list(RELATIONS) if opts.relation == "auto" else [opts.relation]
    need_curve = max(get_relation(r).n_params for r in relations) + 3
    if n < need_curve:
        raise FitRefused(f"{n} usable member(s): the {opts.relation} relation needs at least {need_curve} for a "
                         f"fit validated by leave-one-out (parameters + 3)")
    if has_x and n < minimum_members(opts.learner) + 1:
        raise FitRefused(f"{n} usable member(s): the {opts.learner} learner needs at least "
                         f"{minimum_members(opts.learner) + 1} for a leave-one-out validation")


def fit_family(df: pd.DataFrame, source: str, spec: InputSpec, engine, opts: FitOptions):
    """(FamilyModel, summary dict in kcal/mol) for one family's table."""
    check_learner(opts.learner)
    if opts.relation != "auto":
        get_relation(opts.relation)
    kind = parse_energy_kind(opts.energy_kind).value
    unit = normalize_unit(opts.units)
    X, pairs, spec = prepare_members(df, source, spec, engine, opts)
    has_x = X is not None and X.shape[1] > 0
    _check_sizes(pairs.n, has_x, opts)
    warnings = list(pairs.warnings)
    notes: list[str] = []
    energy, barrier = pairs.energy, pairs.barrier

    # -- final fits on all members ------------------------------------------------------
    two_stage = TwoStageRegressor(opts.learner, opts.relation, curve_intervals="profile",
                                  random_state=opts.random_state).fit(X if has_x else None, barrier, energy)
    curve = two_stage.curve_
    if curve.fit_.at_bound:
        warnings.append(f"curve parameter(s) {', '.join(curve.fit_.at_bound)} at the edge of the search range: "
                        f"see the identifiability verdict")
    hybrid = direct = None
    Z = None
    if has_x:
        hybrid = HybridRegressor(opts.learner, curve.relation_.name, opts.random_state).fit(
            X, barrier, energy, two_stage=two_stage)
        direct = DescriptorRegressor(opts.learner, opts.random_state).fit(X, barrier)
        pre = two_stage.energy_.preprocessor_
        notes.extend(f"descriptor {k} left out: {v}" for k, v in pre.dropped.items())
        if pre.imputed:
            warnings.append("missing descriptor values imputed with the training median: " +
                            ", ".join(f"{k} ({v} member(s))" for k, v in pre.imputed.items()))
        Z = two_stage.energy_.transform(X)
        rank = int(np.linalg.matrix_rank(Z - Z.mean(axis=0))) if Z.size else 0
        if Z.shape[1] > rank:
            notes.append(f"{Z.shape[1] - rank} descriptor(s) are linear combinations of others (collinear, or more "
                         f"descriptors than members); the {opts.learner} learner is regularised, so the fit stands, "
                         f"but single coefficients mean little")
        from ..estimators.importance import permutation_importance

        imp = permutation_importance(two_stage.energy_, X, energy, random_state=opts.random_state)
        top = np.argsort(imp)[::-1][:20]
        importance = {str(X.columns[j]): float(imp[j]) for j in top}
    else:
        importance = {}
    domain = ApplicabilityDomain().fit(Z, energy)

    # -- validation ---------------------------------------------------------------------
    loo = loo_predictions(X if has_x else None, energy, barrier, opts.learner, opts.relation, opts.level,
                          opts.random_state)
    routes = {r: None for r in ("two_stage", "hybrid", "direct")}
    for r, pred in loo.pred.items():
        routes[r] = metrics(barrier, pred, loo.low[r], loo.high[r])
    summary: dict = {"n": pairs.n, "units": unit, "energy_kind": kind, "learner": opts.learner,
                     "relation": curve.relation_.name, "requested_relation": opts.relation,
                     "features": list(X.columns) if has_x else [], "routes": routes}
    summary["energy_stage"] = metrics(energy, loo.energy) if has_x else None
    summary["energy_stage_importance"] = importance
    comparison = {}
    if has_x:
        base = np.abs(loo.pred["direct"] - barrier)
        for r in PHYSICS_ROUTES:
            comparison[f"{r}_vs_direct"] = paired_comparison(np.abs(loo.pred[r] - barrier), base,
                                                             random_state=opts.random_state)
        summary["y_randomization"] = y_randomization(X, energy, barrier, opts.learner, opts.relation,
                                                     opts.n_shuffles, opts.random_state) if opts.n_shuffles else None
        winner = choose_winner(routes, {r: comparison[f"{r}_vs_direct"] for r in PHYSICS_ROUTES})
    else:
        summary["y_randomization"] = None
        winner = "curve_on_true_energy"
    summary["comparison"] = comparison
    summary["winner"] = winner
    if opts.relation == "auto":
        summary["relations_chosen_in_folds"] = {k: loo.relations.count(k) for k in sorted(set(loo.relations))}
    summary["loo"] = {
        "ids": pairs.ids, "energy": energy.tolist(), "barrier": barrier.tolist(),
        "energy_pred": None if loo.energy is None else loo.energy.tolist(),
        "pred": {r: v.tolist() for r, v in loo.pred.items()},
    }
    summary["verdict"] = verdict_text(summary, unit, factor_to_kcal(unit))
    summary["curve"] = curve.as_dict()
    summary["warnings"] = warnings
    summary["notes"] = notes
    summary["skipped"] = [{"row": p.row, "id": p.ident, "problem": p.message} for p in pairs.skipped]
    summary["caution"] = CAUTION

    primary = winner if winner in ("two_stage", "hybrid", "direct") else "two_stage"
    model = FamilyModel(
        spec=spec, tiers=tuple(getattr(engine, "tiers", ())) if has_x else (), features=list(X.columns) if has_x else [],
        extra_descriptors=list(opts.extra_descriptors), learner=opts.learner, relation=opts.relation, units=unit,
        energy_kind=kind, energy_column=opts.energy_column, barrier_column=opts.barrier_column,
        two_stage=two_stage, hybrid=hybrid, direct=direct, domain=domain,
        training={"n": pairs.n, "ids": pairs.ids, "rows": [int(r) for r in pairs.rows],
                  "energy": energy.tolist(), "barrier": barrier.tolist(),
                  "energy_range": [float(energy.min()), float(energy.max())],
                  "barrier_range": [float(barrier.min()), float(barrier.max())]},
        validation={k: v for k, v in summary.items() if k not in ("curve", "loo", "caution")},
        primary_route=primary, level=opts.level, warnings=warnings,
        descriptor_versions=_versions(engine) if has_x else {},
        xtb=_xtb_settings(engine) if has_x else {},
    )
    return model, summary


def _xtb_settings(engine) -> dict:
    if "xtb" not in getattr(engine, "tiers", ()):
        return {}
    st = engine.xtb_settings
    return {"level": st.level, "solvent": st.solvent, "cache_version": st.cache_version()}


def _versions(engine) -> dict:
    from ..descriptors.tiers import TIERS

    return {t: TIERS[t].version for t in getattr(engine, "tiers", ())}


def summary_in_unit(summary: dict, unit: str) -> dict:
    """The summary with energies converted from kcal/mol into ``unit`` (for --json)."""
    f = factor_to_kcal(unit)
    out = dict(summary)

    def conv(m):
        if m is None:
            return None
        return {k: (v / f if k in ("mae", "rmse") else v) for k, v in m.items()}

    out["routes"] = {r: conv(m) for r, m in summary["routes"].items()}
    out["energy_stage"] = conv(summary["energy_stage"])
    out["comparison"] = {k: {"delta_mae": c["delta_mae"] / f, "ci95": [c["ci95"][0] / f, c["ci95"][1] / f],
                             "wilcoxon_p": c["wilcoxon_p"]} for k, c in summary["comparison"].items()}
    if summary.get("y_randomization"):
        y = dict(summary["y_randomization"])
        for k in ("mae_mean", "mae_std", "direct_mae_mean", "mean_predictor_mae"):
            y[k] = y[k] / f
        out["y_randomization"] = y
    loo = dict(summary["loo"])
    for k in ("energy", "barrier", "energy_pred"):
        if loo.get(k) is not None:
            loo[k] = [v / f for v in loo[k]]
    loo["pred"] = {r: [v / f for v in vals] for r, vals in loo["pred"].items()}
    out["loo"] = loo
    curve = dict(summary["curve"])
    rel = get_relation(curve["relation"])
    curve["params"] = {k: (v if k in rel.dimensionless else v / f) for k, v in curve["params"].items()}
    curve["ci95"] = {k: ([a, b] if k in rel.dimensionless else [a / f, b / f]) for k, (a, b) in curve["ci95"].items()}
    curve["sigma"] = curve["sigma"] / f
    curve["energy_range"] = [v / f for v in curve["energy_range"]]
    for key in ("theta", "cov", "correlation", "derived", "reverse", "identifiability"):
        curve.pop(key, None)
    out["curve"] = curve
    return out


def format_fit_summary(s: dict) -> str:
    """The table `fit` prints (energies in the summary's unit)."""
    unit = s["units"]
    lines = [f"{s['n']} members; {s['energy_kind']} in {unit}; learner {s['learner']}; relation {s['relation']}"
             + (f" (chosen from {s['requested_relation']})" if s["requested_relation"] != s["relation"] else ""), ""]
    head = f"{'leave-one-out':<28} {'MAE':>7} {'RMSE':>7} {'Q²':>7} {'90% PI cover':>13}"
    lines += [head, "-" * len(head)]
    if s["energy_stage"] is not None:
        e = s["energy_stage"]
        lines.append(f"{'energy stage (dE)':<28} {e['mae']:>7.3g} {e['rmse']:>7.3g} {e['r2']:>7.2f} {'':>13}")
    for r, label in ROUTE_LABELS.items():
        m = s["routes"].get(r)
        if m is None:
            continue
        mark = " *" if s["winner"] == r else ""
        lines.append(f"{label:<28} {m['mae']:>7.3g} {m['rmse']:>7.3g} {m['r2']:>7.2f} {m['pi90_coverage']:>12.0%}{mark}")
    if s["comparison"]:
        lines += ["", "against the black box (MAE difference, 95 % bootstrap interval, Wilcoxon p):"]
        for k, c in s["comparison"].items():
            lines.append(f"  {k.replace('_vs_direct', ''):<10} {c['delta_mae']:+.3g} [{c['ci95'][0]:+.3g}, "
                         f"{c['ci95'][1]:+.3g}]  p = {c['wilcoxon_p']:.2g}")
    y = s.get("y_randomization")
    if y:
        lines.append(f"y-randomisation ({y['n_shuffles']} shuffles): two-stage MAE {y['mae_mean']:.3g} ± "
                     f"{y['mae_std']:.2g}; predicting the mean: {y['mean_predictor_mae']:.3g}")
    lines += ["", "verdict: " + s["verdict"]]
    c = s["curve"]
    lines.append("curve: " + ", ".join(f"{k} = {v:.4g}" for k, v in c["params"].items()))
    for w in s.get("warnings", []):
        lines.append(f"warning: {w}")
    lines += ["", s["caution"]]
    return "\n".join(lines)
