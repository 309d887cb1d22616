"""Leave-one-out validation with everything inside the loop, and the verdict it supports.

For every member i, all routes are refitted on the other n − 1 members — imputation,
scaling, the learner's hyper-parameters, the relation's choice (``auto``) and the curve fit —
and member i is predicted. Nothing fitted on member i reaches its prediction.

Reported per route (two-stage, hybrid, direct, and the curve fed the true reaction energy):
MAE, RMSE, Q² (R² of the leave-one-out predictions against the mean of all members;
A. Golbraikh, A. Tropsha, J. Mol. Graph. Model. 2002, 20, 269 on why Q² alone is not
enough), and the share of members inside their stated 90 % prediction interval. Physics
routes are compared with the direct baseline on the same folds: mean difference of
absolute errors with a bootstrap 95 % interval (B. Efron, R. J. Tibshirani 1993) and the
Wilcoxon signed-rank p (F. Wilcoxon, Biometrics Bull. 1945, 1, 80). y-randomisation
(refits on shuffled targets) shows what chance alone reaches (OECD 2007 guidance §5).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import stats

from ..curves.regressor import CurveRegressor
from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.two_stage import HybridRegressor, TwoStageRegressor

ROUTES = ("two_stage", "hybrid", "direct", "curve_on_true_energy")
#: How tables name the routes.
ROUTE_LABELS = {"two_stage": "two-stage barrier", "hybrid": "hybrid barrier", "direct": "direct barrier (black box)",
                "curve_on_true_energy": "curve on the true dE"}
PHYSICS_ROUTES = ("two_stage", "hybrid")


@dataclass
class LooPredictions:
    energy: np.ndarray | None
    energy_std: np.ndarray | None
    pred: dict[str, np.ndarray] = field(default_factory=dict)
    low: dict[str, np.ndarray] = field(default_factory=dict)
    high: dict[str, np.ndarray] = field(default_factory=dict)
    relations: list[str] = field(default_factory=list)


def _rows(X, idx):
    return X.iloc[idx] if hasattr(X, "iloc") else np.asarray(X)[idx]


def loo_predictions(X, energy, barrier, learner: str = "ridge", relation: str = "asymptotic",
                    level: float = 0.90, random_state: int = 0, routes=ROUTES) -> LooPredictions:
    """Leave-one-out predictions and ``level`` intervals of every route (kcal/mol)."""
    energy = np.asarray(energy, dtype=float)
    barrier = np.asarray(barrier, dtype=float)
    n = energy.size
    has_x = X is not None and np.shape(X)[1] > 0
    routes = [r for r in routes if has_x or r == "curve_on_true_energy"]
    out = LooPredictions(energy=np.full(n, np.nan) if has_x else None,
                         energy_std=np.full(n, np.nan) if has_x else None)
    for r in routes:
        out.pred[r], out.low[r], out.high[r] = np.full(n, np.nan), np.full(n, np.nan), np.full(n, np.nan)
    z = float(stats.norm.ppf(0.5 + level / 2))
    for i in range(n):
        tr = np.flatnonzero(np.arange(n) != i)
        curve = CurveRegressor(relation, intervals="none").fit(energy[tr], barrier[tr])
        out.relations.append(curve.relation_.name)
        q = curve.interval_quantile(level)
        if "curve_on_true_energy" in routes:
            m, lo, hi = curve.predict_interval(energy[i:i + 1], level)
            out.pred["curve_on_true_energy"][i], out.low["curve_on_true_energy"][i] = m[0], lo[0]
            out.high["curve_on_true_energy"][i] = hi[0]
        if not has_x:
            continue
        Xtr, Xte = _rows(X, tr), _rows(X, [i])
        ts = TwoStageRegressor(learner, curve.relation_.name, random_state=random_state)
        ts.energy_ = DescriptorRegressor(learner, random_state).fit(Xtr, energy[tr])
        ts.curve_ = curve
        parts = ts.predict_parts(Xte)
        out.energy[i], out.energy_std[i] = parts["energy"][0], parts["energy_std"][0]
        b, s = parts["barrier"][0], parts["barrier_std"][0]
        out.pred["two_stage"][i], out.low["two_stage"][i], out.high["two_stage"][i] = b, b - q * s, b + q * s
        if "hybrid" in routes:
            hyb = HybridRegressor(learner, curve.relation_.name, random_state).fit(Xtr, barrier[tr], energy[tr],
                                                                                  two_stage=ts)
            hb, hs = hyb.predict(Xte, return_std=True)
            out.pred["hybrid"][i], out.low["hybrid"][i], out.high["hybrid"][i] = hb[0], hb[0] - z * hs[0], hb[0] + z * hs[0]
        if "direct" in routes:
            d = DescriptorRegressor(learner, random_state).fit(Xtr, barrier[tr])
            db, ds = d.predict(Xte, return_std=True)
            out.pred["direct"][i], out.low["direct"][i], out.high["direct"][i] = db[0], db[0] - z * ds[0], db[0] + z * ds[0]
    return out


def metrics(y, pred, low=None, high=None) -> dict:
    """MAE, RMSE, Q² and (with intervals) the share of y inside [low, high]."""
    y = np.asarray(y, dtype=float)
    pred = np.asarray(pred, dtype=float)
    err = pred - y
    ss_tot = float(np.sum((y - y.mean()) ** 2))
    out = {"mae": float(np.mean(np.abs(err))), "rmse": float(np.sqrt(np.mean(err ** 2))),
           "r2": float(1.0 - np.sum(err ** 2) / ss_tot) if ss_tot > 0 else float("nan")}
    if low is not None and high is not None:
        out["pi90_coverage"] = float(np.mean((y >= low) & (y <= high)))
    return out


def paired_comparison(abs_err_route, abs_err_base, n_boot: int = 2000, random_state: int = 0) -> dict:
    """MAE(route) − MAE(base) with a bootstrap 95 % interval over members, and Wilcoxon p."""
    a = np.asarray(abs_err_route, dtype=float)
    b = np.asarray(abs_err_base, dtype=float)
    diff = a - b
    rng = np.random.default_rng(random_state)
    idx = rng.integers(0, diff.size, size=(n_boot, diff.size))
    boots = diff[idx].mean(axis=1)
    lo, hi = np.percentile(boots, [2.5, 97.5])
    if np.allclose(diff, 0.0):
        p = 1.0
    else:
        p = float(stats.wilcoxon(a, b, zero_method="wilcox", alternative="two-sided").pvalue)
    return {"delta_mae": float(diff.mean()), "ci95": [float(lo), float(hi)], "wilcoxon_p": p}


def mean_predictor_loo_mae(y) -> float:
    """LOO MAE of the better constant predictor — the mean or the median of the other members
    (the median is the constant that minimises absolute error). Any model must beat this."""
    y = np.asarray(y, dtype=float)
    n = y.size
    loo_mean = (y.sum() - y) / (n - 1)
    loo_median = np.array([np.median(np.delete(y, i)) for i in range(n)])
    return float(min(np.mean(np.abs(y - loo_mean)), np.mean(np.abs(y - loo_median))))


def y_randomization(X, energy, barrier, learner: str, relation: str, n_shuffles: int = 5,
                    random_state: int = 0) -> dict:
    """LOO MAE of the two-stage and direct routes refitted on shuffled (energy, barrier) pairs."""
    rng = np.random.default_rng(random_state)
    energy = np.asarray(energy, dtype=float)
    barrier = np.asarray(barrier, dtype=float)
    maes = {"two_stage": [], "direct": []}
    for _ in range(n_shuffles):
        perm = rng.permutation(energy.size)
        res = loo_predictions(X, energy[perm], barrier[perm], learner, relation, random_state=random_state,
                              routes=("two_stage", "direct"))
        for r in maes:
            if r in res.pred:
                maes[r].append(float(np.mean(np.abs(res.pred[r] - barrier[perm]))))
    out = {"n_shuffles": int(n_shuffles),
           "mae_mean": float(np.mean(maes["two_stage"])) if maes["two_stage"] else float("nan"),
           "mae_std": float(np.std(maes["two_stage"])) if maes["two_stage"] else float("nan"),
           "direct_mae_mean": float(np.mean(maes["direct"])) if maes["direct"] else float("nan"),
           "mean_predictor_mae": mean_predictor_loo_mae(barrier)}
    return out


def choose_winner(routes: dict, comparison: dict) -> str:
    """The physics route that beats direct with a 95 % interval clear of zero (the lower MAE
    if both do); "direct" when direct beats both physics routes that way; else "tie"."""
    beating = [r for r in PHYSICS_ROUTES if r in comparison and comparison[r]["ci95"][1] < 0]
    if beating:
        return min(beating, key=lambda r: routes[r]["mae"])
    if comparison and all(comparison[r]["ci95"][0] > 0 for r in PHYSICS_ROUTES if r in comparison):
        return "direct"
    return "tie"


def verdict_text(summary: dict, unit: str = "kcal/mol", factor: float = 1.0) -> str:
    """One line (plus the weak link) a chemist can act on; energies shown in ``unit``."""
    routes = summary["routes"]
    winner = summary["winner"]
    names = {"two_stage": "the two-stage route (descriptors → reaction energy → curve)",
             "hybrid": "the hybrid route", "direct": "the black box (descriptors → barrier)"}
    if routes.get("direct") is None:
        c = routes["curve_on_true_energy"]
        return (f"Curve-only model: from a computed reaction energy the curve predicts barriers with "
                f"leave-one-out MAE {c['mae'] / factor:.3g} {unit}.")
    comp = summary["comparison"]
    if winner in PHYSICS_ROUTES:
        key = f"{winner}_vs_direct"
        c = comp[key]
        text = (f"{names[winner].capitalize()} beats the black box: MAE {routes[winner]['mae'] / factor:.3g} against "
                f"{routes['direct']['mae'] / factor:.3g} {unit} (difference {c['delta_mae'] / factor:+.2g}, 95 % "
                f"interval {c['ci95'][0] / factor:+.2g} to {c['ci95'][1] / factor:+.2g}; Wilcoxon p = {c['wilcoxon_p']:.2g}).")
    elif winner == "direct":
        text = (f"The black box beats both physics routes on these data: MAE {routes['direct']['mae'] / factor:.3g} "
                f"against {routes['two_stage']['mae'] / factor:.3g} (two-stage) and {routes['hybrid']['mae'] / factor:.3g} "
                f"(hybrid) {unit}.")
    else:
        c = comp["two_stage_vs_direct"]
        text = (f"Tie: the two-stage route (MAE {routes['two_stage']['mae'] / factor:.3g}) and the black box "
                f"(MAE {routes['direct']['mae'] / factor:.3g} {unit}) differ by less than these data can resolve "
                f"(95 % interval {c['ci95'][0] / factor:+.2g} to {c['ci95'][1] / factor:+.2g}).")
    e = summary["energy_stage"]
    cte = routes["curve_on_true_energy"]
    text += (f" The energy stage predicts reaction energies with MAE {e['mae'] / factor:.3g} {unit}; fed computed "
             f"reaction energies the curve alone reaches MAE {cte['mae'] / factor:.3g}")
    if cte["mae"] < routes["two_stage"]["mae"] * 0.85:
        text += " — the energy stage is the weak link: computing reaction energies (or the xtb tier) pays."
    else:
        text += "."
    return text
