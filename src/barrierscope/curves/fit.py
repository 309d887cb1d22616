"""Fitting one relation to (reaction energy, barrier) pairs by bounded least squares.

:func:`fit_relation` refines every data-driven start the relation offers in one vectorised
Levenberg–Marquardt solve (:mod:`.batch`) and polishes the best with
``scipy.optimize.least_squares`` (trust-region reflective, analytic Jacobian). Parameters
that end on their search bound are named: the data do not pin them, and the fit says so
instead of spending thousands of evaluations chasing them. Robust losses (soft-L1, Huber,
Cauchy) go straight to ``least_squares``, one start at a time.

All energies are kcal/mol.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..relations.base import Relation
from .batch import interior, lm_solve
from .stats import at_bound

LOSSES = ("linear", "soft_l1", "huber", "cauchy")
#: The losses as barrierscope's options name them → scipy's names.
LOSS_NAMES = {"squared": "linear", "soft": "soft_l1", "huber": "huber", "cauchy": "cauchy"}


def loss_name(option: str) -> str:
    """scipy's name of a ``--loss`` choice (squared, soft, huber, cauchy)."""
    key = str(option).strip().lower()
    if key not in LOSS_NAMES:
        raise ValueError(f"unknown loss {option!r}; valid choices: {', '.join(LOSS_NAMES)}")
    return LOSS_NAMES[key]


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


def covariance(jac: np.ndarray, sigma2: float) -> np.ndarray:
    """σ²·(JᵀJ)⁻¹ via a pseudo-inverse, so a rank-deficient design gives large, not NaN, entries."""
    return sigma2 * np.linalg.pinv(jac.T @ jac, rcond=1e-12, hermitian=True)


def _robust_sigma2(residuals: np.ndarray, dof: int, loss: str) -> float:
    if dof <= 0:
        return float("nan")
    if loss == "linear":
        return float(residuals @ residuals / dof)
    # Common practice: 1.4826·MAD estimates a normal σ while ignoring outliers.
    mad = 1.4826 * float(np.median(np.abs(residuals - np.median(residuals))))
    return mad * mad


def _least_squares(relation, x, y, start, *, lo, hi, loss, f_scale, max_nfev):
    from scipy import optimize  # loaded when a fit runs, not when a model predicts

    return optimize.least_squares(lambda t: relation.barrier(x, t) - y, interior(start, lo, hi),
                                  jac=lambda t: relation.jacobian(x, t), bounds=(lo, hi), loss=loss,
                                  f_scale=f_scale, method="trf", x_scale="jac", xtol=1e-10, ftol=1e-10,
                                  gtol=1e-10, max_nfev=max_nfev)


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
    bounds : (lo, hi), optional
        Parameter bounds; by default ``relation.bounds`` for these data.
    """
    if loss not in LOSSES:
        raise ValueError(f"unknown loss {loss!r}; valid choices: {', '.join(LOSSES)}")
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    lo, hi = relation.bounds(x, y) if bounds is None else (np.asarray(bounds[0], float), np.asarray(bounds[1], float))
    starts = [np.asarray(x0, dtype=float)] if x0 is not None else relation.starts(x, y)
    starts = np.array([interior(s, lo, hi) for s in starts])
    p = relation.n_params
    if loss == "linear":
        thetas, costs, _ = lm_solve(relation, x, y, np.ones((len(starts), x.size)), theta0=starts, lo=lo, hi=hi)
        best = thetas[int(np.argmin(costs))]
        try:
            res = _least_squares(relation, x, y, best, lo=lo, hi=hi, loss=loss, f_scale=f_scale, max_nfev=50 * p)
            theta, success = (res.x, bool(res.success)) if res.cost <= 0.5 * np.min(costs) + 1e-12 else (best, True)
        except (ValueError, np.linalg.LinAlgError):
            theta, success = best, True
    else:
        results = []
        for start in starts:
            try:
                results.append(_least_squares(relation, x, y, start, lo=lo, hi=hi, loss=loss, f_scale=f_scale, max_nfev=200 * p))
            except (ValueError, np.linalg.LinAlgError):
                continue
        if not results:
            raise FitError(f"the {relation.label} fit failed from every starting point")
        res = min(results, key=lambda r: r.cost)
        theta, success = res.x, bool(res.success)
    r = relation.barrier(x, theta) - y
    dof = x.size - p
    cov = covariance(relation.jacobian(x, theta), _robust_sigma2(r, dof, loss))
    bounded = tuple(n for n, b in zip(relation.param_names, at_bound(theta, lo, hi)) if b)
    return RelationFit(relation=relation, params=theta, cov=cov, rss=float(r @ r), n=int(x.size), loss=loss,
                       success=success, at_bound=bounded, residuals=r)
