"""Refitting one relation to many weightings of the same data at once.

Exact leave-one-out (n refits, each without one member) and the case bootstrap (B refits,
each with resampling counts as weights) are the same numerical job: minimise
Σ_i w_ki (f(x_i; θ_k) − y_i)² for every row k of a weight matrix. Done one by one with
``scipy.optimize.least_squares`` this costs n solver start-ups; here all problems take
Levenberg–Marquardt steps together (K. Levenberg, Q. Appl. Math. 1944, 2, 164;
D. W. Marquardt, J. SIAM 1963, 11, 431), vectorised over k, with the relation's analytic
Jacobian, each warm-started from the full-data optimum. Bounds are kept by projection.
"""

from __future__ import annotations

import numpy as np

from ..relations.base import Relation


def refit_weighted(relation: Relation, energy, barrier, weights, theta0, *, max_iter: int = 200,
                   tol: float = 1e-12, chunk: int = 256) -> np.ndarray:
    """Least-squares parameters for each row of ``weights``.

    Parameters
    ----------
    energy, barrier : array (n,), kcal/mol
    weights : array (m, n), non-negative
    theta0 : array (m, p) or (p,), starting parameters (usually the full-data fit)

    Returns
    -------
    theta : array (m, p)
    """
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    theta0 = np.broadcast_to(np.asarray(theta0, dtype=float), (w.shape[0], relation.n_params))
    lo, hi = relation.bounds(x, y)
    out = np.empty_like(theta0)
    # Chunks keep the (m, n, p) Jacobian inside a few tens of megabytes for large n.
    step = max(1, min(chunk, int(4e6 // max(1, x.size * relation.n_params))))
    for start in range(0, w.shape[0], step):
        sl = slice(start, start + step)
        out[sl] = _lm_batch(relation, x, y, w[sl], theta0[sl].copy(), lo, hi, max_iter, tol)
    return out


def _cost(relation, x, y, w, theta):
    r = relation.barrier(x, theta) - y
    return np.sum(w * r * r, axis=-1)


def _lm_batch(relation, x, y, w, theta, lo, hi, max_iter, tol):
    m, p = theta.shape
    damping = np.full(m, 1e-3)
    cost = _cost(relation, x, y, w, theta)
    active = np.ones(m, dtype=bool)
    eye = np.eye(p)
    for _ in range(max_iter):
        if not active.any():
            break
        idx = np.flatnonzero(active)
        th = theta[idx]
        wa = w[idx]
        r = relation.barrier(x, th) - y                        # (k, n)
        jac = relation.jacobian(x, th)                          # (k, n, p)
        jwt = (jac * wa[..., None]).transpose(0, 2, 1)          # (k, p, n)
        a = jwt @ jac                                            # JᵀWJ
        g = (jwt @ r[..., None])[..., 0]                         # JᵀWr
        diag = np.einsum("kpp->kp", a)
        scale = np.where(diag > 0, diag, 1.0)
        lhs = a + damping[idx, None, None] * scale[:, :, None] * eye
        try:
            delta = -np.linalg.solve(lhs, g[..., None])[..., 0]
        except np.linalg.LinAlgError:
            delta = -np.einsum("kpq,kq->kp", np.linalg.pinv(lhs), g)
        trial = np.clip(th + delta, lo, hi)
        trial_cost = _cost(relation, x, y, wa, trial)
        better = trial_cost <= cost[idx]
        # Gauss–Newton's own forecast of the decrease (cost counts Σ w r², so factor 2 on g).
        step = trial - th
        forecast = -2.0 * np.sum(g * step, axis=1) - np.einsum("kp,kpq,kq->k", step, a, step)
        moved = np.max(np.abs(step) / (np.abs(th) + 1e-8), axis=1)
        theta[idx[better]] = trial[better]
        cost[idx[better]] = trial_cost[better]
        damping[idx[better]] = np.maximum(damping[idx[better]] / 3.0, 1e-12)
        damping[idx[~better]] = damping[idx[~better]] * 4.0
        converged = (np.abs(forecast) <= tol * (cost[idx] + tol)) | (moved <= 1e-10)
        done = converged | (damping[idx] > 1e12)
        active[idx[done]] = False
    return theta
