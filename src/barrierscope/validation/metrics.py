"""Error statistics of out-of-fold predictions and paired comparisons of routes.

MAE, RMSE, R² (Q² for leave-one-out; A. Golbraikh, A. Tropsha, J. Mol. Graph. Model. 2002,
20, 269 on why it is not enough alone) and the share of members inside their stated
interval. Routes are compared on the same members: the mean difference of absolute errors
and of squared errors, each with a case-bootstrap 95 % interval (B. Efron, R. J. Tibshirani,
*An Introduction to the Bootstrap*, 1993), and the Wilcoxon signed-rank p (F. Wilcoxon,
Biometrics Bull. 1945, 1, 80). Energies in kcal/mol.

A route *beats* another only when the difference is clear statistically and at least a
practical margin (:func:`judge`); two routes are *equivalent* when two one-sided tests put the
MAE difference inside that margin (D. J. Schuirmann, J. Pharmacokinet. Biopharm. 1987, 15,
657). The margin is :data:`MARGIN_KCAL` or :data:`MARGIN_FRACTION` of the better MAE,
whichever is larger: 0.5 kcal/mol changes a rate constant at 25 °C by a factor of 2.3, below
what a chemist would act on when choosing a model and below the error of the computed
barriers themselves (common practice: density-functional barriers carry errors of one to a
few kcal/mol); a tenth of the MAE keeps the margin in proportion when every route misses by
several kcal/mol. benchmarks/bench_verdict_margin.py measures how often smaller differences
reverse between random halves of a family.
"""

from __future__ import annotations

import numpy as np

from ..records import replace
from .records import Metrics, PairComparison

#: The practical margin's floor (kcal/mol) and its share of the better MAE (see the module docstring).
MARGIN_KCAL = 0.5
MARGIN_FRACTION = 0.10


def metrics(y, pred, low=None, high=None) -> Metrics:
    """MAE, RMSE, R² over the members where ``pred`` is finite, and, with intervals, the share
    of those members inside [low, high]."""
    y = np.asarray(y, dtype=float)
    pred = np.asarray(pred, dtype=float)
    ok = np.isfinite(pred)
    y, pred = y[ok], pred[ok]
    if y.size == 0:
        return Metrics(mae=float("nan"), rmse=float("nan"), r2=float("nan"))
    err = pred - y
    ss_tot = float(np.sum((y - y.mean()) ** 2))
    cover = None
    if low is not None and high is not None:
        lo, hi = np.asarray(low, dtype=float)[ok], np.asarray(high, dtype=float)[ok]
        cover = float(np.mean((y >= lo) & (y <= hi)))
    return Metrics(mae=float(np.mean(np.abs(err))), rmse=float(np.sqrt(np.mean(err ** 2))),
                   r2=float(1.0 - np.sum(err ** 2) / ss_tot) if ss_tot > 0 else float("nan"), pi90_coverage=cover)


def bootstrap_indices(n: int, n_boot: int = 2000, random_state: int = 0) -> np.ndarray:
    """(n_boot, n) case-resampling indices, the same for every pair compared in one regime."""
    return np.random.default_rng(random_state).integers(0, n, size=(n_boot, n))


def paired_comparison(err_route, err_base, idx: np.ndarray | None = None, random_state: int = 0) -> PairComparison:
    """Route against base on the same members (signed errors in, kcal/mol):
    ``delta_mae`` = MAE(route) − MAE(base) with its bootstrap 95 % interval ``ci95``,
    ``delta_mse`` = MSE(route) − MSE(base) with ``mse_ci95``, and the Wilcoxon p of the
    absolute errors."""
    a = np.abs(np.asarray(err_route, dtype=float))
    b = np.abs(np.asarray(err_base, dtype=float))
    idx = bootstrap_indices(a.size, random_state=random_state) if idx is None else idx
    d_abs, d_sq = a - b, a * a - b * b
    boot = d_abs[idx].mean(axis=1)
    lo, hi = np.percentile(boot, [2.5, 97.5])
    lo90, hi90 = np.percentile(boot, [5.0, 95.0])
    slo, shi = np.percentile(d_sq[idx].mean(axis=1), [2.5, 97.5])
    p = 1.0 if np.allclose(d_abs, 0.0) or a.size < 2 else wilcoxon_p(a, b)
    return PairComparison(delta_mae=float(d_abs.mean()), ci95=[float(lo), float(hi)], ci90=[float(lo90), float(hi90)],
                          wilcoxon_p=p, delta_mse=float(d_sq.mean()), mse_ci95=[float(slo), float(shi)])


def clearly_better(c: PairComparison) -> bool:
    """Is the route statistically clearly better than the base in a :func:`paired_comparison`?
    Clearly lower MAE without clearly larger squared errors, or clearly lower squared errors
    without clearly larger MAE (both at 95 %). Says nothing about size: see :func:`judge`."""
    mae_better, mae_worse = c.ci95[1] < 0, c.ci95[0] > 0
    mse_better, mse_worse = c.mse_ci95[1] < 0, c.mse_ci95[0] > 0
    return (mae_better and not mse_worse) or (mse_better and not mae_worse)


def practical_margin(mae_a: float, mae_b: float, floor: float = MARGIN_KCAL, fraction: float = MARGIN_FRACTION) -> float:
    """The smallest MAE difference (kcal/mol) a verdict counts between two routes of these MAEs."""
    return max(float(floor), float(fraction) * min(float(mae_a), float(mae_b)))


def judge(c: PairComparison, mae_route: float, mae_base: float, floor: float = MARGIN_KCAL,
          fraction: float = MARGIN_FRACTION) -> PairComparison:
    """The comparison with its verdict: ``margin`` (kcal/mol), ``clear`` (statistically, see
    :func:`clearly_better`), ``beats`` (clear *and* MAE lower by at least the margin) and
    ``equivalent`` (the 90 % interval of the MAE difference inside ±margin: two one-sided
    tests at 5 %, D. J. Schuirmann 1987)."""
    m = practical_margin(mae_route, mae_base, floor, fraction)
    clear = clearly_better(c)
    return replace(c, margin=m, clear=clear, beats=bool(clear and c.delta_mae <= -m),
                   equivalent=bool(-m < c.ci90[0] and c.ci90[1] < m))


def largest_misses(err, ids, k: int = 3, factor: float = 2.0) -> list[tuple[str, float]]:
    """The members behind a route's large misses: up to ``k`` whose |error| exceeds
    ``factor`` × the route's MAE, largest first, as (id, signed error)."""
    e = np.asarray(err, dtype=float)
    ok = np.isfinite(e)
    if not ok.any():
        return []
    mae = float(np.mean(np.abs(e[ok])))
    order = [i for i in np.argsort(-np.abs(np.where(ok, e, 0.0))) if ok[i] and abs(e[i]) > factor * mae]
    return [(str(ids[i]), float(e[i])) for i in order[:k]]


def _average_ranks(v: np.ndarray) -> np.ndarray:
    """1-based ranks with ties given their average rank."""
    order = np.argsort(v, kind="mergesort")
    ranks = np.empty(v.size)
    sv = v[order]
    start = 0
    for end in range(1, v.size + 1):
        if end == v.size or sv[end] != sv[start]:
            ranks[order[start:end]] = 0.5 * (start + end + 1)
            start = end
    return ranks


def wilcoxon_p(a, b) -> float:
    """Two-sided p of the Wilcoxon signed-rank test of paired samples (F. Wilcoxon, Biometrics
    Bull. 1945, 1, 80), zero differences dropped, decided as SciPy's ``wilcoxon`` does by
    default (the tests check it against SciPy): the exact null distribution of the rank sum
    (by recursion over ranks) for up to 50 pairs without ties or zeros; with ties or zeros,
    every sign assignment enumerated for up to 13 pairs, else the normal approximation with
    the tie correction."""
    from scipy import special

    d_all = np.asarray(a, dtype=float) - np.asarray(b, dtype=float)
    d = d_all[d_all != 0]
    n = d.size
    if n == 0:
        return 1.0
    ranks = _average_ranks(np.abs(d))
    r_plus = float(ranks[d > 0].sum())
    _, counts = np.unique(np.abs(d), return_counts=True)
    if d_all.size <= 50 and np.all(counts == 1) and n == d_all.size:
        dist = np.zeros(n * (n + 1) // 2 + 1)
        dist[0] = 1.0
        for k in range(1, n + 1):                # rank k in the positive set, or not
            dist[k:] = dist[k:] + dist[:-k].copy()
        dist /= 2.0 ** n
        cdf = np.cumsum(dist)
        lo, hi = int(np.ceil(r_plus)), int(np.floor(r_plus))
        return float(min(1.0, 2.0 * min(cdf[lo], 1.0 - (cdf[hi - 1] if hi > 0 else 0.0))))
    if d_all.size <= 13:                         # every sign assignment of the tied ranks
        signs = (np.arange(2 ** n)[:, None] >> np.arange(n)) & 1
        totals = signs @ ranks
        eps = 1e-9 * max(1.0, r_plus)
        return float(min(1.0, 2.0 * min(np.mean(totals <= r_plus + eps), np.mean(totals >= r_plus - eps))))
    mean = n * (n + 1) / 4.0
    var = n * (n + 1) * (2 * n + 1) / 24.0 - float(np.sum(counts ** 3 - counts)) / 48.0
    return float(min(1.0, 2.0 * special.ndtr(-abs(r_plus - mean) / np.sqrt(var))))
