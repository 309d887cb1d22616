"""Many joint fits of several families at once, using their block structure.

A joint problem's parameter vector holds the shared parameters and each family's own ones
(:class:`.joint.JointLayout`). A family's own parameters touch only its members' residuals,
so the Gauss–Newton matrix JᵀWJ is block-arrow shaped: one small block per family, coupled
only through the shared parameters. :func:`joint_lm` takes Levenberg–Marquardt steps (as
:func:`.batch.lm_solve` does for one family) on many weightings of the same members at once
— leave-one-out refits, leave-family-out refits, points of a profile — solving each step by
the Schur complement of the family blocks: a cost that grows with the members and the
families, not with the cube of the joint parameter count. Bounds are kept by projection;
coordinates listed in ``fixed`` stay where they start (profile likelihood).

Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from .batch import interior


def _family_blocks(rel, layout, x, y, fam, w, theta, with_jacobian: bool = True):
    """Per family k: (members, residuals (b, n_k), Jacobian (b, n_k, p) or None); and the
    weighted cost (b,)."""
    out = []
    cost = np.zeros(theta.shape[0])
    for k in range(layout.n_families):
        idx = np.flatnonzero(fam == k)
        if idx.size == 0:
            continue
        wk = w[:, idx]
        if with_jacobian:
            r, jac = rel.residual_and_jacobian(x[idx], theta[:, k, :], y[idx])
        else:
            r, jac = rel.barrier(x[idx], theta[:, k, :]) - y[idx], None
        cost += np.sum(wk * r * r, axis=1)
        out.append((k, idx, wk, r, jac))
    return out, cost


def _normal_blocks(layout, blocks, b: int):
    """The block-arrow normal equations: own blocks (b, K, po, po), couplings (b, K, po, ps),
    the shared block (b, ps, ps), and the gradient halves (b, K, po), (b, ps)."""
    own, sh = layout.own_idx, layout.shared_idx
    K, po, ps = layout.n_families, len(own), len(sh)
    Hoo, Hos = np.zeros((b, K, po, po)), np.zeros((b, K, po, ps))
    Hss, go, gs = np.zeros((b, ps, ps)), np.zeros((b, K, po)), np.zeros((b, ps))
    for k, _, wk, r, jac in blocks:
        jw = jac * wk[..., None]                                   # (b, n_k, p)
        A = np.einsum("bnp,bnq->bpq", jw, jac)
        g = np.einsum("bnp,bn->bp", jw, r)
        Hoo[:, k] = A[:, own][:, :, own]
        Hos[:, k] = A[:, own][:, :, sh]
        Hss += A[:, sh][:, :, sh]
        go[:, k] = g[:, own]
        gs += g[:, sh]
    return Hoo, Hos, Hss, go, gs


def coordinates(layout) -> list[tuple]:
    """Joint position → ("shared", slot) or ("own", family, slot) in the normal blocks."""
    cols = layout.columns()
    where: list = [None] * layout.size
    for j, s in enumerate(layout.shared_idx):
        where[cols[0, s]] = ("shared", j)
    for k in range(layout.n_families):
        for j, o in enumerate(layout.own_idx):
            where[cols[k, o]] = ("own", k, j)
    return where


def _hold(layout, fixed, Hoo, Hos, Hss, go, gs):
    """Coordinates held fixed: their gradient and couplings zeroed, their diagonal one, so
    every step leaves them where they are."""
    if fixed is None:
        return
    where = coordinates(layout)
    for bi, coord in zip(*np.nonzero(fixed)):
        place = where[coord]
        if place[0] == "shared":
            j = place[1]
            Hss[bi, j, :], Hss[bi, :, j], Hos[bi, :, :, j] = 0.0, 0.0, 0.0
            Hss[bi, j, j], gs[bi, j] = 1.0, 0.0
        else:
            _, k, j = place
            Hoo[bi, k, j, :], Hoo[bi, k, :, j], Hos[bi, k, j, :] = 0.0, 0.0, 0.0
            Hoo[bi, k, j, j], go[bi, k, j] = 1.0, 0.0


def _damped(H, damping):
    """H + λ·diag(H) (1 where the diagonal is zero: parameters no member touches)."""
    d = np.einsum("...ii->...i", H)
    scale = np.where(d > 0, d, 1.0)
    out = H.copy()
    idx = np.arange(H.shape[-1])
    out[..., idx, idx] += damping[..., None] * scale
    return out


def _step(Hoo, Hos, Hss, go, gs, damping):
    """The damped Gauss–Newton step (δ_own (b, K, po), δ_shared (b, ps)) by the Schur
    complement of the family blocks."""
    A = _damped(Hoo, damping[:, None].repeat(Hoo.shape[1], axis=1))
    rhs = np.concatenate([Hos, go[..., None]], axis=-1)           # (b, K, po, ps + 1)
    X = np.linalg.solve(A, rhs)
    ps = Hss.shape[-1]
    if ps == 0:
        return -X[..., 0], np.zeros(gs.shape)
    S = _damped(Hss, damping) - np.einsum("bkpi,bkpj->bij", Hos, X[..., :ps])
    r_s = gs - np.einsum("bkpi,bkp->bi", Hos, X[..., ps])
    d_s = -np.linalg.solve(S, r_s[..., None])[..., 0]
    d_o = -(X[..., ps] + np.einsum("bkpi,bi->bkp", X[..., :ps], d_s))
    return d_o, d_s


def _pack(layout, d_o, d_s):
    """Joint-vector steps (b, P) from the own and shared halves."""
    P = layout.size
    out = np.zeros((d_o.shape[0], P))
    cols = layout.columns()
    for j, s in enumerate(layout.shared_idx):
        out[:, cols[0, s]] = d_s[:, j]
    for k in range(layout.n_families):
        for j, o in enumerate(layout.own_idx):
            out[:, cols[k, o]] = d_o[:, k, j]
    return out


def joint_lm(rel, layout, x, y, fam, *, weights, u0, lo, hi, fixed=None, max_iter: int = 200, tol: float = 1e-10):
    """Projected Levenberg–Marquardt on every row of ``weights`` (m, n) at once.

    ``u0`` (m, P) starting joint vectors; ``lo``, ``hi`` (P,) bounds; ``fixed`` (m, P) bool:
    coordinates held at their start. Returns (u (m, P), cost (m,) weighted RSS, converged (m,))
    with the same stopping rules as :func:`.batch.lm_solve`.
    """
    x, y, fam = np.asarray(x, dtype=float), np.asarray(y, dtype=float), np.asarray(fam, dtype=int)
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    m = w.shape[0]
    lo, hi = np.broadcast_to(np.asarray(lo, dtype=float), (m, layout.size)), np.broadcast_to(
        np.asarray(hi, dtype=float), (m, layout.size))
    u = interior(np.array(np.broadcast_to(np.asarray(u0, dtype=float), (m, layout.size))), lo, hi)
    if fixed is not None:
        u = np.where(fixed, np.asarray(u0, dtype=float), u)
    cols = layout.columns()
    damping = np.full(m, 1e-3)
    active, converged = np.ones(m, dtype=bool), np.zeros(m, dtype=bool)
    blocks, cost = _family_blocks(rel, layout, x, y, fam, w, u[:, cols])
    normal = _normal_blocks(layout, blocks, m)
    _hold(layout, fixed, *normal)
    for _ in range(max_iter):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        Hoo, Hos, Hss, go, gs = (a[idx] for a in normal)
        d_o, d_s = _step(Hoo, Hos, Hss, go, gs, damping[idx])
        trial = np.clip(u[idx] + _pack(layout, d_o, d_s), lo[idx], hi[idx])
        if fixed is not None:
            trial = np.where(fixed[idx], u[idx], trial)
        _, trial_cost = _family_blocks(rel, layout, x, y, fam, w[idx], trial[:, cols], with_jacobian=False)
        better = trial_cost <= cost[idx]
        stp = trial - u[idx]
        g = _pack(layout, go, gs)
        hs_o = np.einsum("bkpq,bkq->bkp", Hoo, _own(layout, stp)) + np.einsum("bkpi,bi->bkp", Hos, _shared(layout, stp))
        hs_s = np.einsum("bij,bj->bi", Hss, _shared(layout, stp)) + np.einsum("bkpi,bkp->bi", Hos, _own(layout, stp))
        forecast = -2.0 * np.sum(g * stp, axis=1) - np.sum(_pack(layout, hs_o, hs_s) * stp, axis=1)
        moved = np.max(np.abs(stp) / (np.abs(u[idx]) + 1e-8), axis=1)
        good = idx[better]
        u[good], cost[good] = trial[better], trial_cost[better]
        damping[good] = np.maximum(damping[good] / 3.0, 1e-12)
        damping[idx[~better]] *= 4.0
        settled = (np.abs(forecast) <= tol * (cost[idx] + tol)) | (moved <= 1e-10)
        done = settled | (damping[idx] > 1e12)
        converged[idx[done]] = True
        active[idx[done]] = False
        refresh = good[active[good]]
        if refresh.size:
            blocks_r, _ = _family_blocks(rel, layout, x, y, fam, w[refresh], u[refresh][:, cols])
            fresh = _normal_blocks(layout, blocks_r, refresh.size)
            _hold(layout, None if fixed is None else fixed[refresh], *fresh)
            for a, f in zip(normal, fresh):
                a[refresh] = f
    return u, cost, converged


def _own(layout, v):
    """(b, K, po): each family's own coordinates of joint vectors v (b, P)."""
    cols = layout.columns()
    return v[:, cols[:, layout.own_idx]] if layout.own_idx else np.zeros((v.shape[0], layout.n_families, 0))


def _shared(layout, v):
    """(b, ps): the shared coordinates of joint vectors v (b, P)."""
    cols = layout.columns()
    return v[:, cols[0, layout.shared_idx]] if layout.shared_idx else np.zeros((v.shape[0], 0))
