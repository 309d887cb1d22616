"""The structure curve's penalised least squares, for many training sets at once.

Unknowns per training set: u = [θ0 (p), B (k moving × q features)]; each member's parameters
are θ_i = θ0 + B·z_i on the moving ones (clipped to the relation's bounds, where their
derivative is zero), and the objective is Σ w_i (f(E_i; θ_i) − G_i)² + λ‖B‖². It is solved by
Levenberg–Marquardt with Marquardt's diagonal scaling (D. W. Marquardt, J. Soc. Indust.
Appl. Math. 1963, 11, 431) on the normal equations with the analytic Jacobian, every training
set a row of a stacked problem (weights 0 leave members out), θ0 projected onto the
relation's bounds after each step. One solver serves the model's own fit (one set) and every
validation split. The penalty is chosen by approximate leave-one-out at the solution: the
residual over 1 − h, h the diagonal of the linearised hat matrix J (JᵀJ + λP)⁻¹ Jᵀ.
Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np


def member_params(rel, u, Z, *, moving, lo, hi):
    """(Θ (m, n, p) clipped to the bounds, mask of clipped moving entries) from u (m, p + k)."""
    m, n, q = Z.shape
    p = rel.n_params
    Theta = np.repeat(u[:, None, :p], n, axis=1)
    B = u[:, p:].reshape(m, len(moving), q)
    Theta[:, :, moving] += np.einsum("mnq,mkq->mnk", Z, B)
    lo_m, hi_m = lo[:, None, moving], hi[:, None, moving]
    clipped = np.zeros(Theta.shape, dtype=bool)
    clipped[:, :, moving] = (Theta[:, :, moving] < lo_m) | (Theta[:, :, moving] > hi_m)
    Theta[:, :, moving] = np.clip(Theta[:, :, moving], lo_m, hi_m)
    return Theta, clipped


def residual_jacobian(rel, x, y, u, *, Z, moving, lo, hi):
    """Residuals f − G (m, n) and the Jacobian (m, n, p + k) of every training set's unknowns."""
    m, n, q = Z.shape
    p = rel.n_params
    Theta, clipped = member_params(rel, u, Z, moving=moving, lo=lo, hi=hi)
    flat = Theta.reshape(m * n, p)
    e = np.tile(np.asarray(x, dtype=float), m)[:, None]
    r = rel.barrier(e, flat)[:, 0].reshape(m, n) - y[None, :]
    Jt = rel.jacobian(e, flat)[:, 0, :].reshape(m, n, p)
    Jt = np.where(clipped, 0.0, Jt)           # a parameter held at its bound does not move
    J = np.empty((m, n, p + len(moving) * q))
    J[:, :, :p] = Jt
    for j, mi in enumerate(moving):
        J[:, :, p + j * q: p + (j + 1) * q] = Jt[:, :, mi, None] * Z
    return r, J


def solve(rel, x, y, W, *, Z, u0, lam, lo, hi, moving, max_iter: int = 60, tol: float = 1e-8):
    """Minimise Σ w (f − G)² + λ‖B‖² for every row of ``W`` (m, n); ``Z`` (m, n, q) each set's
    standardised descriptors of every member; ``u0`` (m, p + k) starts; ``lam`` (m,); ``lo``,
    ``hi`` (m, p) bounds. Returns (u, residuals (m, n), weighted Jacobian (m, n, P),
    JᵀWJ + λP (m, P, P), iterations used)."""
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    p = rel.n_params
    m, P = u0.shape
    pen = np.zeros((m, P))
    pen[:, p:] = np.asarray(lam, dtype=float)[:, None]
    sw = np.sqrt(W)
    u = u0.copy()
    u[:, :p] = np.clip(u[:, :p], lo, hi)

    def evaluate(v):
        r, J = residual_jacobian(rel, x, y, v, Z=Z, moving=moving, lo=lo, hi=hi)
        return r, J, np.sum((r * sw) ** 2, axis=1) + np.sum(pen * v * v, axis=1)

    r, J, cost = evaluate(u)
    mu = np.full(m, 1e-3)
    done = np.zeros(m, dtype=bool)
    it = 0
    for it in range(1, max_iter + 1):
        Jw, rw = J * sw[:, :, None], r * sw
        A = np.einsum("mni,mnj->mij", Jw, Jw)
        A[:, np.arange(P), np.arange(P)] += pen
        g = np.einsum("mni,mn->mi", Jw, rw) + pen * u
        # θ0 entries held at a bound that the gradient pushes against stay there this step (an
        # active set: a step computed through the bound and then clipped would crawl).
        held = np.zeros((m, P), dtype=bool)
        held[:, :p] = ((u[:, :p] <= lo) & (g[:, :p] > 0)) | ((u[:, :p] >= hi) & (g[:, :p] < 0))
        free = ~held
        A_f = A * (free[:, :, None] & free[:, None, :])
        A_f[:, np.arange(P), np.arange(P)] = np.where(held, 1.0, np.diagonal(A, axis1=1, axis2=2))
        g_f = np.where(held, 0.0, g)
        d = np.maximum(np.diagonal(A_f, axis1=1, axis2=2), 1e-12)
        step = np.linalg.solve(A_f + mu[:, None, None] * (d[:, :, None] * np.eye(P)), -g_f[:, :, None])[:, :, 0]
        trial = u + step
        trial[:, :p] = np.clip(trial[:, :p], lo, hi)
        r2, J2, cost2 = evaluate(trial)
        better = (cost2 < cost) & ~done
        small = np.abs(cost - cost2) <= tol * (1.0 + cost)
        u[better], r[better], J[better] = trial[better], r2[better], J2[better]
        mu = np.where(better, np.maximum(mu / 3.0, 1e-12), np.minimum(mu * 4.0, 1e12))
        tiny = np.max(np.abs(step), axis=1) < 1e-8 * (1.0 + np.max(np.abs(u), axis=1))
        done |= (better & small) | (mu >= 1e12) | tiny
        cost = np.where(better, cost2, cost)
        if done.all():
            break
    Jw = J * sw[:, :, None]
    A = np.einsum("mni,mnj->mij", Jw, Jw)
    A[:, np.arange(P), np.arange(P)] += pen
    return u, r, Jw, A, it


def loo_score(r, Jw, A, W):
    """Per set: the approximate leave-one-out mean squared error over its members, the
    leverages (m, n) and A⁻¹ (m, P, P)."""
    Ainv = np.linalg.pinv(A, hermitian=True)
    h = np.einsum("mni,mij,mnj->mn", Jw, Ainv, Jw)
    loo = r / np.clip(1.0 - h, 1e-6, None)
    w = W > 0
    score = np.sum(np.where(w, loo * loo, 0.0), axis=1) / np.maximum(w.sum(axis=1), 1)
    return score, h, Ainv


def solve_path(rel, x, y, W, *, Z, u0, grid, lo, hi, moving):
    """Each set over its penalties ``grid`` (m, L; strongest first, each solve started from the
    last): the penalty of lowest approximate leave-one-out error. Returns a dict with, per set,
    ``u``, ``lam``, ``score``, ``h``, ``Ainv``, ``JtJ`` and ``r`` at that penalty, and ``weak``:
    the same at the weakest penalty (the effects a chemist reads are not shrunk)."""
    grid = np.asarray(grid, dtype=float)
    m, L = grid.shape
    best = None
    u = u0.copy()
    weak = None
    for j in range(L):
        lam = grid[:, j]
        u, r, Jw, A, _ = solve(rel, x, y, W, Z=Z, u0=u, lam=lam, lo=lo, hi=hi, moving=moving)
        score, h, Ainv = loo_score(r, Jw, A, W)
        JtJ = np.einsum("mni,mnj->mij", Jw, Jw)
        here = {"u": u.copy(), "lam": lam.copy(), "score": score, "h": h, "Ainv": Ainv, "JtJ": JtJ, "r": r.copy()}
        if best is None:
            best = dict(here)
        else:
            take = score < best["score"]
            for key in best:
                best[key] = np.where(take.reshape((m,) + (1,) * (np.ndim(best[key]) - 1)), here[key], best[key])
        weak = here
    best["weak"] = weak
    return best
