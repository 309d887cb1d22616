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

from .intervals import ProfileInterval, profile_cut, profile_interval, t_quantile
from .joint import JointFit, _solve


class _JointProfile:
    def __init__(self, fit: JointFit, x, y, fam, *, i: int):
        self.fit, self.x, self.y, self.fam, self.i = fit, x, y, fam, i

    def rss(self, value: float, start) -> tuple[float, np.ndarray]:
        lo, hi = self.fit.bounds
        u, rss = _solve(self.fit.relation, self.fit.layout, self.x, self.y, fam=self.fam, start=start, lo=lo, hi=hi,
                        fixed={self.i: value})
        return rss, u


def joint_profile_intervals(fit: JointFit, energy, barrier, fam, *, level: float = 0.95,
                            log_scale=("width",)) -> dict[int, ProfileInterval]:
    """Joint position → its profile-t interval (open ends marked)."""
    x, y, fam = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float), np.asarray(fam, dtype=int)
    lo, hi = fit.bounds
    g_cut = profile_cut(fit.rss, fit.dof, level)
    if g_cut is None:
        return {i: ProfileInterval(float(v), float(v), True, True) for i, v in enumerate(fit.u)}
    names = fit.relation.param_names
    owner = {fit.layout.index(k, j): names[j] for k in range(fit.layout.n_families) for j in range(len(names))}
    se = np.sqrt(np.clip(np.diag(fit.cov), 0.0, None))
    return {i: profile_interval(_JointProfile(fit, x, y, fam, i=i), fit.u, g_cut, value=fit.u[i], se=se[i], lo=lo[i],
                                hi=hi[i], log=owner[i] in log_scale)
            for i in range(fit.layout.size)}


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
