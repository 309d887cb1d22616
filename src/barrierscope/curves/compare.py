"""All relations fitted to the same pairs and compared on equal terms.

For each relation: in-sample RMSE and MAE, exact leave-one-out MAE and RMSE (every member
left out in turn and the relation refitted without it), AICc and BIC. The information
criteria use the Gaussian log-likelihood with k = p + 1 parameters (the residual variance
counts): AIC = n ln(RSS/n) + 2k, AICc = AIC + 2k(k + 1)/(n − k − 1) (C. M. Hurvich,
C.-L. Tsai, Biometrika 1989, 76, 297), BIC = n ln(RSS/n) + k ln n (G. Schwarz, Ann. Stat.
1978, 6, 461). The best relation is the one with the lowest leave-one-out RMSE.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..relations import RELATIONS, get_relation
from .batch import fit_subsets, loo_weights, refit_weighted
from .fit import FitError, RelationFit, check_pairs, fit_relation
from .stats import information_criteria

BEST_BY = "loo_rmse"


@dataclass
class RelationScore:
    """Goodness of fit of one relation; energies in kcal/mol."""

    name: str
    fit: RelationFit | None
    loo_predictions: np.ndarray | None = None
    loo_mae: float = float("nan")
    loo_rmse: float = float("nan")
    rmse: float = float("nan")
    mae: float = float("nan")
    aicc: float = float("nan")
    bic: float = float("nan")
    n_outside_validity: int = 0
    skipped: str = ""


@dataclass
class Comparison:
    n: int
    scores: dict[str, RelationScore] = field(default_factory=dict)
    best: str | None = None


#: Up to this many members every leave-one-out refit starts from its own data-driven starts
#: (nothing of the held-out member steers it: several starts each); above, each refit is
#: warm-started at the full fit, one start, in blocks of bounded memory — still the exact
#: leave-one-out optimum wherever the fit has one, at a cost that grows with n², not n² × starts
#: (measured: benchmarks/bench_scale.py).
OWN_STARTS_MAX = 200
#: Weights held at once by the warm-started refits (rows × members).
_LOO_BLOCK = 2_000_000


def loo_predictions(fit: RelationFit, energy, barrier) -> np.ndarray:
    """Exact leave-one-out predictions: member i predicted by the relation refitted without
    member i. The line in closed form (the hat matrix: y_i − r_i/(1 − h_ii)); other relations
    from starting points computed without the member (:func:`.batch.fit_subsets`), or, above
    :data:`OWN_STARTS_MAX` members, warm-started at the full fit."""
    x, y = check_pairs(energy, barrier, min_n=fit.n_params + 2)
    if fit.loss == "linear" and fit.relation.name == "linear":
        A = np.column_stack([np.ones_like(x), x])
        q, _ = np.linalg.qr(A)
        h = np.sum(q * q, axis=1)
        r = y - fit.predict(x)
        return y - r / (1.0 - h)
    if fit.loss == "linear" and x.size <= OWN_STARTS_MAX:
        thetas = fit_subsets(fit.relation, x, y, loo_weights(x.size)).theta
        return np.einsum("ii->i", fit.relation.barrier(x, thetas))
    if fit.loss == "linear":
        out = np.empty(x.size)
        lo, hi = fit.relation.bounds(x, y)
        step = max(1, _LOO_BLOCK // x.size)
        for s in range(0, x.size, step):
            rows = np.arange(s, min(s + step, x.size))
            w = np.ones((rows.size, x.size))
            w[np.arange(rows.size), rows] = 0.0
            thetas = refit_weighted(fit.relation, x, y, w, theta0=fit.params, bounds=(lo, hi))
            out[rows] = fit.relation.barrier(x[rows][:, None], thetas)[:, 0]
        return out
    out = np.empty(x.size)
    for i in range(x.size):
        keep = np.arange(x.size) != i
        sub = fit_relation(fit.relation, x[keep], y[keep], loss=fit.loss)
        out[i] = sub.predict(x[i:i + 1])[0]
    return out


def score_relation(name: str, energy, barrier, loss: str = "linear", *, with_loo: bool = True) -> RelationScore:
    relation = get_relation(name)
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    need = relation.n_params + (2 if with_loo else 1)
    if x.size < need:
        return RelationScore(name=name, fit=None,
                             skipped=f"needs at least {need} members, {x.size} given")
    try:
        fit = fit_relation(relation, x, y, loss=loss)
    except FitError as exc:
        return RelationScore(name=name, fit=None, skipped=str(exc))
    score = RelationScore(name=name, fit=fit)
    r = fit.residuals
    score.rmse = float(np.sqrt(np.mean(r * r)))
    score.mae = float(np.mean(np.abs(r)))
    score.aicc, score.bic = information_criteria(fit.rss, fit.n, fit.n_params + 1)  # + the residual variance
    score.n_outside_validity = int(np.count_nonzero(relation.outside_validity(x, fit.params)))
    if with_loo:
        pred = loo_predictions(fit, x, y)
        err = pred - y
        score.loo_predictions = pred
        score.loo_mae = float(np.mean(np.abs(err)))
        score.loo_rmse = float(np.sqrt(np.mean(err * err)))
    return score


def compare_relations(energy, barrier, names=None, loss: str = "linear", *, with_loo: bool = True) -> Comparison:
    """Fit every relation in ``names`` (default: all five) and score them on the same data."""
    x, y = check_pairs(energy, barrier, min_n=2)
    names = list(names) if names is not None else list(RELATIONS)
    comp = Comparison(n=int(x.size))
    for name in names:
        comp.scores[name] = score_relation(name, x, y, loss=loss, with_loo=with_loo)
    key = BEST_BY if with_loo else "aicc"
    ranked = [s for s in comp.scores.values() if s.fit is not None and np.isfinite(getattr(s, key))]
    if ranked:
        comp.best = min(ranked, key=lambda s: getattr(s, key)).name
    return comp
