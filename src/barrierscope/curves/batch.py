"""Fitting one relation to many subsets or weightings of the same pairs at once.

Leave-one-out, extrapolation splits, y-randomisation, nested refits and the case bootstrap
are one numerical job: minimise Σ_i w_ki (f(x_i; θ_k) − y_i)² for every row k of a weight
matrix. Done one by one with ``scipy.optimize.least_squares`` this costs a solver start-up
per refit (and, with several starts each, thousands of them per family). Here all problems
take Levenberg–Marquardt steps together (K. Levenberg, Q. Appl. Math. 1944, 2, 164;
D. W. Marquardt, J. SIAM 1963, 11, 431), vectorised over k, with the relation's analytic
Jacobian; bounds are kept by projection. A problem stops when its step or its forecast
decrease is negligible, when its damping says no step helps, or after ``max_iter`` steps;
a parameter that runs to its bound simply stays there (reported in ``at_bound``).

Two ways to start:

- :func:`fit_subsets` starts every subset from the relation's data-driven starts computed
  on that subset alone, so nothing a subset must not see reaches its fit (leave-one-out and
  extrapolation splits, where the held-out members must not steer the refit);
- :func:`refit_weighted` starts from given parameters (warm starts for the bootstrap and for
  nested refits whose starting fit already excludes the member being predicted).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..relations.base import Relation
from .stats import at_bound

#: Elements of the (problems × members × parameters) Jacobian held at once (memory bound).
_BLOCK = 4_000_000


@dataclass
class SubsetFits:
    """Parameters fitted to each subset; energies in kcal/mol."""

    theta: np.ndarray        # (m, p)
    cost: np.ndarray         # (m,) weighted residual sum of squares, kcal²/mol²
    at_bound: np.ndarray     # (m, p) bool: the parameter ended on its search bound
    converged: np.ndarray    # (m,) bool: stopped by a convergence test, not by the step limit


def interior(start, lo, hi) -> np.ndarray:
    """``start`` clipped strictly inside finite bounds (a start on a bound cannot move off it)."""
    x = np.clip(np.asarray(start, dtype=float), lo, hi)
    pad_lo = np.where(np.isfinite(lo), 1e-9 * (1 + np.abs(np.nan_to_num(lo))), 0.0)
    pad_hi = np.where(np.isfinite(hi), 1e-9 * (1 + np.abs(np.nan_to_num(hi))), 0.0)
    x = np.where(x <= lo, lo + pad_lo, x)
    return np.where(x >= hi, hi - pad_hi, x)


def lm_solve(relation: Relation, energy, barrier, weights, *, theta0, lo, hi, max_iter: int = 200,
             tol: float = 1e-10):
    """Projected Levenberg–Marquardt on every row of ``weights`` at once.

    Parameters
    ----------
    energy, barrier : array (n,), kcal/mol
    weights : array (m, n), non-negative
    theta0 : array (m, p), starting parameters
    lo, hi : array (p,) or (m, p), parameter bounds

    Returns
    -------
    (theta (m, p), cost (m,), converged (m,) bool)
    """
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    m, p = w.shape[0], relation.n_params
    theta = np.array(np.broadcast_to(np.asarray(theta0, dtype=float), (m, p)))
    lo = np.broadcast_to(np.asarray(lo, dtype=float), (m, p))
    hi = np.broadcast_to(np.asarray(hi, dtype=float), (m, p))
    cost = np.empty(m)
    converged = np.zeros(m, dtype=bool)
    step = max(1, _BLOCK // max(1, x.size * p))
    for s in range(0, m, step):
        sl = slice(s, s + step)
        theta[sl], cost[sl], converged[sl] = _lm_block(relation, x, y, w[sl], theta=theta[sl], lo=lo[sl], hi=hi[sl],
                                                       max_iter=max_iter, tol=tol)
    return theta, cost, converged


def _cost(relation, x, y, w, *, theta):
    r = relation.barrier(x, theta) - y
    return np.sum(w * r * r, axis=-1)


def _normal_equations(relation, x, y, w, *, theta):
    """(JᵀWJ, JᵀWr) of each problem at its parameters, from one residual/Jacobian pass."""
    r, jac = relation.residual_and_jacobian(x, theta, y)        # (k, n), (k, n, p)
    jwt = (jac * w[..., None]).transpose(0, 2, 1)               # (k, p, n)
    return jwt @ jac, (jwt @ r[..., None])[..., 0]


def _lm_block(relation, x, y, w, *, theta, lo, hi, max_iter, tol):
    m, p = theta.shape
    damping = np.full(m, 1e-3)
    cost = _cost(relation, x, y, w, theta=theta)
    active = np.ones(m, dtype=bool)
    converged = np.zeros(m, dtype=bool)
    eye = np.eye(p)
    # The normal equations change only when a step is accepted: a rejected step just raises the
    # damping and solves again with the same JᵀWJ and JᵀWr.
    a, g = _normal_equations(relation, x, y, w, theta=theta)
    for _ in range(max_iter):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        th, ai, gi = theta[idx], a[idx], g[idx]
        diag = np.einsum("kpp->kp", ai)
        scale = np.where(diag > 0, diag, 1.0)
        lhs = ai + damping[idx, None, None] * scale[:, :, None] * eye
        try:
            delta = -np.linalg.solve(lhs, gi[..., None])[..., 0]
        except np.linalg.LinAlgError:
            delta = -np.einsum("kpq,kq->kp", np.linalg.pinv(lhs), gi)
        trial = np.clip(th + delta, lo[idx], hi[idx])
        trial_cost = _cost(relation, x, y, w[idx], theta=trial)
        better = trial_cost <= cost[idx]
        stp = trial - th
        # Gauss–Newton's forecast of the decrease (the cost counts Σ w r², hence 2 on g).
        forecast = -2.0 * np.sum(gi * stp, axis=1) - np.einsum("kp,kpq,kq->k", stp, ai, stp)
        moved = np.max(np.abs(stp) / (np.abs(th) + 1e-8), axis=1)
        good = idx[better]
        theta[good] = trial[better]
        cost[good] = trial_cost[better]
        damping[good] = np.maximum(damping[good] / 3.0, 1e-12)
        damping[idx[~better]] *= 4.0
        settled = (np.abs(forecast) <= tol * (cost[idx] + tol)) | (moved <= 1e-10)
        done = settled | (damping[idx] > 1e12)
        converged[idx[done]] = True
        active[idx[done]] = False
        refresh = good[active[good]]
        if refresh.size:
            a[refresh], g[refresh] = _normal_equations(relation, x, y, w[refresh], theta=theta[refresh])
    return theta, cost, converged


def refit_weighted(relation: Relation, energy, barrier, weights, *, theta0, bounds=None, max_iter: int = 200,
                   tol: float = 1e-10) -> np.ndarray:
    """Least-squares parameters (m, p) for each row of ``weights`` (m, n), warm-started at
    ``theta0`` ((p,) or (m, p)), within ``bounds`` ((lo, hi), each (p,) or (m, p); by default
    the relation's bounds for the whole data set)."""
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    lo, hi = relation.bounds(x, y) if bounds is None else bounds
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    start = interior(np.broadcast_to(np.asarray(theta0, dtype=float), (w.shape[0], relation.n_params)), lo, hi)
    theta, _, _ = lm_solve(relation, x, y, w, theta0=start, lo=lo, hi=hi, max_iter=max_iter, tol=tol)
    return theta


def fit_subsets(relation: Relation, energy, barrier, weights, *, max_iter: int = 200,
                tol: float = 1e-10) -> SubsetFits:
    """Best fit of ``relation`` to each subset (row of ``weights``, zero = left out).

    Each subset's bounds and starting points come from its own members only
    (:meth:`Relation.subset_starts`); every start of every subset is refined in one
    vectorised solve and the lowest cost per subset wins.
    """
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    lo, hi, starts = relation.subset_starts(x, y, w)                 # (m, p), (m, p), (m, s, p)
    m, s, p = starts.shape
    owner = np.repeat(np.arange(m), s)
    lows, highs = lo[owner], hi[owner]
    theta, cost, conv = lm_solve(relation, x, y, w[owner], theta0=interior(starts.reshape(m * s, p), lows, highs),
                                 lo=lows, hi=highs, max_iter=max_iter, tol=tol)
    pick = np.argmin(cost.reshape(m, s), axis=1) + np.arange(m) * s
    theta_best = theta[pick]
    return SubsetFits(theta=theta_best, cost=cost[pick], converged=conv[pick],
                      at_bound=at_bound(theta_best, lo, hi))


def loo_weights(n: int) -> np.ndarray:
    """(n, n) weights of exact leave-one-out: row i leaves member i out."""
    return 1.0 - np.eye(n)
