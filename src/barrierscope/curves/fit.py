"""Fitting one relation to (reaction energy, barrier) pairs, with honest intervals.

One job per function:

- :func:`fit_relation` — bounded least squares (``scipy.optimize.least_squares``) with the
  relation's analytic Jacobian, from every data-driven start the relation offers;
- :func:`wald_intervals` — θ̂ ± t·SE from the Jacobian covariance (exact for the line);
- :func:`profile_intervals` — profile-likelihood (profile-t) intervals, D. M. Bates,
  D. G. Watts, *Nonlinear Regression Analysis and Its Applications*, Wiley 1988, ch. 6;
- :func:`bootstrap_intervals` — case-resampling percentile intervals (B. Efron,
  R. J. Tibshirani, *An Introduction to the Bootstrap*, Chapman & Hall 1993);
- :func:`correlation_matrix` — from a covariance matrix.

All energies are kcal/mol.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import optimize, stats

from ..relations.base import Relation


class FitError(ValueError):
    """The data cannot support the requested fit (too few members, no span, non-finite values)."""


@dataclass
class RelationFit:
    """The result of fitting one relation. Energies in kcal/mol."""

    relation: Relation
    params: np.ndarray
    cov: np.ndarray
    rss: float
    n: int
    loss: str = "linear"
    success: bool = True
    at_bound: tuple[str, ...] = ()
    message: str = ""
    residuals: np.ndarray = field(default_factory=lambda: np.zeros(0))

    @property
    def n_params(self) -> int:
        return self.relation.n_params

    @property
    def dof(self) -> int:
        return self.n - self.n_params

    @property
    def sigma(self) -> float:
        """Residual standard deviation (kcal/mol), with n − p degrees of freedom."""
        return float(np.sqrt(self.rss / self.dof)) if self.dof > 0 else float("nan")

    @property
    def stderr(self) -> np.ndarray:
        return np.sqrt(np.clip(np.diag(self.cov), 0.0, np.inf))

    def params_dict(self) -> dict[str, float]:
        return self.relation.as_dict(self.params)

    def predict(self, energy) -> np.ndarray:
        return self.relation.barrier(np.asarray(energy, dtype=float), self.params)


def check_pairs(energy, barrier, min_n: int = 2):
    """Validate (energy, barrier) arrays; returns float arrays or raises :class:`FitError`."""
    x = np.asarray(energy, dtype=float).ravel()
    y = np.asarray(barrier, dtype=float).ravel()
    if x.shape != y.shape:
        raise FitError(f"energy and barrier have different lengths ({x.size} and {y.size})")
    bad = ~(np.isfinite(x) & np.isfinite(y))
    if bad.any():
        rows = ", ".join(str(i) for i in np.flatnonzero(bad)[:10])
        raise FitError(f"non-finite energy or barrier at position(s) {rows}")
    if x.size < min_n:
        raise FitError(f"{x.size} member(s) given; at least {min_n} are needed")
    if np.ptp(x) == 0:
        raise FitError("zero reaction-energy span: every member has the same reaction energy, "
                       "so no relation between energy and barrier can be fitted")
    return x, y


def _covariance(jac: np.ndarray, sigma2: float) -> np.ndarray:
    """σ²·(JᵀJ)⁻¹ via a pseudo-inverse, so a rank-deficient design gives large, not NaN, entries."""
    jtj = jac.T @ jac
    return sigma2 * np.linalg.pinv(jtj, rcond=1e-12, hermitian=True)


def _robust_sigma2(residuals: np.ndarray, dof: int, loss: str) -> float:
    if dof <= 0:
        return float("nan")
    if loss == "linear":
        return float(residuals @ residuals / dof)
    # Common practice: 1.4826·MAD estimates a normal σ while ignoring outliers.
    mad = 1.4826 * float(np.median(np.abs(residuals - np.median(residuals))))
    return mad * mad


def interior(start, lo, hi) -> np.ndarray:
    """``start`` clipped strictly inside finite bounds (least_squares refuses a start on a bound)."""
    x = np.clip(np.asarray(start, dtype=float), lo, hi)
    pad_lo = np.where(np.isfinite(lo), 1e-9 * (1 + np.abs(np.nan_to_num(lo))), 0.0)
    pad_hi = np.where(np.isfinite(hi), 1e-9 * (1 + np.abs(np.nan_to_num(hi))), 0.0)
    x = np.where(x <= lo, lo + pad_lo, x)
    return np.where(x >= hi, hi - pad_hi, x)


def fit_relation(relation: Relation, energy, barrier, *, loss: str = "linear", f_scale: float = 1.0,
                 x0=None, bounds=None) -> RelationFit:
    """Fit ``relation`` to the pairs by bounded least squares.

    Parameters
    ----------
    energy, barrier : array (n,), kcal/mol
    loss : {"linear", "soft_l1", "huber", "cauchy"}
        ``linear`` is ordinary least squares; the others are robust to outliers, with
        ``f_scale`` (kcal/mol) the residual size where they start to down-weight.
    x0 : array (p,), optional
        One starting point; by default every start from ``relation.starts`` is tried.
    """
    valid_losses = ("linear", "soft_l1", "huber", "cauchy", "arctan")
    if loss not in valid_losses:
        raise ValueError(f"unknown loss {loss!r}; valid choices: {', '.join(valid_losses)}")
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    lo, hi = relation.bounds(x, y) if bounds is None else bounds
    starts = [np.asarray(x0, dtype=float)] if x0 is not None else relation.starts(x, y)

    def residual(theta):
        return relation.barrier(x, theta) - y

    def jac(theta):
        return relation.jacobian(x, theta)

    best = None
    for start in starts:
        start = interior(start, lo, hi)
        try:
            res = optimize.least_squares(residual, start, jac=jac, bounds=(lo, hi), loss=loss,
                                         f_scale=f_scale, method="trf", x_scale="jac",
                                         xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=2000)
        except (ValueError, np.linalg.LinAlgError):
            continue
        if best is None or res.cost < best.cost:
            best = res
    if best is None:
        raise FitError(f"the {relation.label} fit failed from every starting point")

    theta = best.x
    r = residual(theta)
    rss = float(r @ r)
    dof = x.size - relation.n_params
    cov = _covariance(jac(theta), _robust_sigma2(r, dof, loss))
    span = np.where(np.isfinite(hi - lo), hi - lo, 1.0 + np.abs(theta))
    near = (np.isfinite(lo) & (theta - lo <= 1e-6 * span)) | (np.isfinite(hi) & (hi - theta <= 1e-6 * span))
    at_bound = tuple(n for n, b in zip(relation.param_names, near) if b)
    message = ""
    if at_bound:
        message = (f"{', '.join(at_bound)} at the edge of the search range: the data do not pin "
                   f"{'it' if len(at_bound) == 1 else 'them'}")
    return RelationFit(relation=relation, params=theta, cov=cov, rss=rss, n=int(x.size), loss=loss,
                       success=bool(best.success), at_bound=at_bound, message=message, residuals=r)


def t_quantile(level: float, dof: int) -> float:
    """Two-sided Student-t quantile for a central interval of probability ``level``."""
    if dof <= 0:
        return float("nan")
    return float(stats.t.ppf(0.5 + level / 2.0, dof))


def wald_intervals(fit: RelationFit, level: float = 0.95) -> dict[str, tuple[float, float]]:
    """θ̂ ± t·SE intervals (kcal/mol or dimensionless, as the parameter)."""
    t = t_quantile(level, fit.dof)
    return {name: (float(v - t * s), float(v + t * s))
            for name, v, s in zip(fit.relation.param_names, fit.params, fit.stderr)}


def correlation_matrix(cov: np.ndarray) -> np.ndarray:
    """Correlation matrix from a covariance matrix (NaN where a variance is zero)."""
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, np.inf))
    with np.errstate(divide="ignore", invalid="ignore"):
        corr = cov / np.outer(sd, sd)
    np.fill_diagonal(corr, 1.0)
    return np.clip(corr, -1.0, 1.0)


@dataclass
class ProfileInterval:
    low: float
    high: float
    low_open: bool   # True when the profile never left the interval before the search bound
    high_open: bool

    @property
    def closed(self) -> bool:
        return not (self.low_open or self.high_open)


def _profile_rss(relation: Relation, x, y, j: int, value: float, theta_start, lo, hi):
    """Minimum RSS with parameter j fixed at ``value``; returns (rss, theta)."""
    free = [k for k in range(relation.n_params) if k != j]

    def full(sub):
        theta = np.empty(relation.n_params)
        theta[j] = value
        theta[free] = sub
        return theta

    def residual(sub):
        return relation.barrier(x, full(sub)) - y

    def jac(sub):
        return relation.jacobian(x, full(sub))[:, free]

    start = interior(np.asarray(theta_start, dtype=float)[free], lo[free], hi[free])
    res = optimize.least_squares(residual, start, jac=jac, bounds=(lo[free], hi[free]),
                                 method="trf", x_scale="jac", xtol=1e-10, ftol=1e-10, gtol=1e-10,
                                 max_nfev=500)
    return float(2.0 * res.cost), full(res.x)


def profile_intervals(fit: RelationFit, energy, barrier, level: float = 0.95,
                      log_scale: tuple[str, ...] = ("width",)) -> dict[str, ProfileInterval]:
    """Profile-t intervals for every parameter of a least-squares fit.

    The interval for θ_j is where τ(v)² = (S(v) − Ŝ)/s² ≤ t²_{n−p}, with S(v) the residual
    sum of squares minimised over the other parameters at θ_j = v and s² = Ŝ/(n − p)
    (Bates & Watts 1988, §6.1). Parameters named in ``log_scale`` are searched in log space.
    An end that reaches the search bound before τ² reaches t² is marked open.
    """
    relation = fit.relation
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    lo, hi = relation.bounds(x, y)
    s2 = fit.rss / fit.dof if fit.dof > 0 else float("nan")
    tcrit2 = t_quantile(level, fit.dof) ** 2
    out: dict[str, ProfileInterval] = {}
    if not np.isfinite(s2) or s2 <= 0:
        for name, v in zip(relation.param_names, fit.params):
            out[name] = ProfileInterval(float(v), float(v), True, True)
        return out

    for j, name in enumerate(relation.param_names):
        use_log = name in log_scale and lo[j] > 0
        fwd = np.log if use_log else (lambda v: v)
        inv = np.exp if use_log else (lambda u: u)
        u_hat = fwd(fit.params[j])
        u_lo, u_hi = fwd(lo[j]), fwd(hi[j])
        se = fit.stderr[j] / (fit.params[j] if use_log else 1.0)
        step0 = float(np.clip(se if np.isfinite(se) and se > 0 else 0.1, 1e-4 * (1 + abs(u_hat)), None))
        if use_log:
            step0 = min(step0, 1.0)

        ends = []
        for direction in (-1.0, 1.0):
            edge = u_lo if direction < 0 else u_hi
            theta_prev = fit.params.copy()
            inside_u = u_hat
            step = step0
            found = None
            while True:
                u = inside_u + direction * step
                hit_edge = (u <= edge) if direction < 0 else (u >= edge)
                if hit_edge:
                    u = edge
                rss, theta_u = _profile_rss(relation, x, y, j, float(inv(u)), theta_prev, lo, hi)
                g = (rss - fit.rss) / s2 - tcrit2
                if g > 0:
                    found = (inside_u, u, theta_prev)
                    break
                if hit_edge:
                    break
                inside_u, theta_prev = u, theta_u
                step *= 2.0
            if found is None:
                ends.append((float(inv(edge)), True))
                continue
            a, b, theta_a = found
            cache = {"theta": theta_a}

            def g_of(u):
                rss_u, th = _profile_rss(relation, x, y, j, float(inv(u)), cache["theta"], lo, hi)
                cache["theta"] = th
                return (rss_u - fit.rss) / s2 - tcrit2

            try:
                root = optimize.brentq(g_of, a, b, xtol=1e-6 * (1 + abs(b)), rtol=1e-8, maxiter=60)
            except ValueError:  # re-minimising at the inner point wobbled above the cut
                root = a
            ends.append((float(inv(root)), False))
        (low, low_open), (high, high_open) = ends
        out[name] = ProfileInterval(low, high, low_open, high_open)
    return out


def bootstrap_intervals(fit: RelationFit, energy, barrier, level: float = 0.95, n_boot: int = 1000,
                        random_state: int | None = 0) -> dict[str, tuple[float, float]]:
    """Case-resampling percentile intervals; each resample is refitted from θ̂."""
    from .batch import refit_weighted

    relation = fit.relation
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    rng = np.random.default_rng(random_state)
    counts = rng.multinomial(x.size, np.full(x.size, 1.0 / x.size), size=int(n_boot)).astype(float)
    thetas = refit_weighted(relation, x, y, counts, np.tile(fit.params, (counts.shape[0], 1)))
    q = [(1 - level) / 2 * 100, (1 + level) / 2 * 100]
    return {name: tuple(float(v) for v in np.percentile(thetas[:, k], q))
            for k, name in enumerate(relation.param_names)}
