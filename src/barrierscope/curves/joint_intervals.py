"""Intervals of a joint fit: profile-t for every parameter, the delta method for what a
chemist reads off each family's curve (kcal/mol).

Profile-t (D. M. Bates, D. G. Watts, *Nonlinear Regression Analysis and Its Applications*,
Wiley 1988, §6.1) on the joint vector: a parameter is fixed on a grid, every other joint
parameter re-minimised, and the interval is where (S(v) − Ŝ)/s² ≤ t²(n − P). A shared
parameter has one interval, reported for every family. Derived quantities (uphill excess,
intrinsic barrier, Leffler α at the family's centre) get Wald intervals from the family's
block of the joint covariance (numerical gradient), stated as such.
"""

from __future__ import annotations

import numpy as np

from .intervals import ProfileInterval, profile_all, profile_cut, t_quantile
from .joint import JointFit
from .joint_batch import joint_lm


def joint_profile_intervals(fit: JointFit, energy, barrier, fam, *, level: float = 0.95,
                            log_scale=("width",)) -> dict[int, ProfileInterval]:
    """Joint position → its profile-t interval (open ends marked). Every end of every
    parameter is searched together, each point of every profile one batched joint solve
    (:func:`.intervals.profile_all` over :func:`.joint_batch.joint_lm`)."""
    x, y, fam = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float), np.asarray(fam, dtype=int)
    lo, hi = fit.bounds
    g_cut = profile_cut(fit.rss, fit.dof, level)
    if g_cut is None:
        return {i: ProfileInterval(float(v), float(v), True, True) for i, v in enumerate(fit.u)}
    names = fit.relation.param_names
    owner = {fit.layout.index(k, j): names[j] for k in range(fit.layout.n_families) for j in range(len(names))}
    se = np.sqrt(np.clip(np.diag(fit.cov), 0.0, None))
    ones = np.ones(x.size)

    def solve(coords, values, starts):
        u0 = np.array(starts, dtype=float)
        u0[np.arange(coords.size), coords] = values
        fixed = np.zeros(u0.shape, dtype=bool)
        fixed[np.arange(coords.size), coords] = True
        u, cost, _ = joint_lm(fit.relation, fit.layout, x, y, fam, weights=np.tile(ones, (coords.size, 1)), u0=u0,
                              lo=lo, hi=hi, fixed=fixed)
        return cost, u

    log = np.array([owner[i] in log_scale for i in range(fit.layout.size)])
    found = profile_all(solve, fit.u, se, lo, hi, log=log, g_cut=g_cut, rss_hat=fit.rss)
    return dict(enumerate(found))


def _derived(rel, theta, centre: float) -> dict[str, float]:
    d = dict(rel.derived(theta))
    d.pop("alpha_at_zero", None)
    d["alpha_at_centre"] = float(rel.slope(np.array([centre]), theta)[0])
    return d


def derived_with_intervals(fit: JointFit, k: int, centre: float, level: float = 0.95) -> tuple[dict, dict]:
    """(derived quantities of family k, their Wald intervals from the delta method)."""
    rel, theta = fit.relation, fit.theta[k]
    base = _derived(rel, theta, centre)
    cov = fit.family_cov(k)
    grads = {name: np.zeros(theta.size) for name in base}
    for j in range(theta.size):
        h = 1e-5 * (1.0 + abs(theta[j]))
        up, down = theta.copy(), theta.copy()
        up[j] += h
        down[j] -= h
        du, dd = _derived(rel, up, centre), _derived(rel, down, centre)
        for name in base:
            grads[name][j] = (du[name] - dd[name]) / (2 * h)
    q = t_quantile(level, max(fit.dof, 1))
    ci = {}
    for name, g in grads.items():
        sd = float(np.sqrt(max(g @ cov @ g, 0.0)))
        ci[name] = [base[name] - q * sd, base[name] + q * sd]
    return base, ci
