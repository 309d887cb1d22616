"""Statistics every curve fit shares, each written once: the predictive variance of a
barrier, the information criteria, and the test for a parameter stopped on its search bound.

Energies in kcal/mol, variances in (kcal/mol)².
"""

from __future__ import annotations

import numpy as np

#: A parameter within this share of its search range from a bound counts as on it.
BOUND_TOLERANCE = 1e-6


def predictive_variance(jac, cov, sigma, slope=None, *, energy_std=None) -> np.ndarray:
    """Predictive variance of barriers from a fitted curve (METHOD §4):
    J·Cov·Jᵀ (the parameters) + σ² (the curve's residual scatter) + (α·σ_E)² (the reaction
    energy's uncertainty carried through the local slope α).

    ``jac`` (n, p) the curve's Jacobian in its parameters at each energy; ``cov`` (p, p);
    ``sigma`` the residual standard deviation; ``slope`` (n,) and ``energy_std`` (n,) give the
    energy term (omitted when either is None). Unknown inputs give unknown output: a
    non-finite σ (a curve fitted with no residual degrees of freedom) or σ_E makes the
    variance NaN rather than pretending the term is zero. A known energy has σ_E = 0.
    """
    jac = np.asarray(jac, dtype=float)
    var = np.einsum("...np,pq,...nq->...n", jac, np.asarray(cov, dtype=float), jac) + float(sigma) ** 2
    if slope is not None and energy_std is not None:
        var = var + (np.asarray(slope, dtype=float) * np.asarray(energy_std, dtype=float)) ** 2
    return var


def information_criteria(rss: float, n: int, k: int) -> tuple[float, float]:
    """(AICc, BIC) of a Gaussian least-squares fit with ``k`` parameters, the residual
    variance among them: AIC = n ln(RSS/n) + 2k, AICc = AIC + 2k(k + 1)/(n − k − 1)
    (C. M. Hurvich, C.-L. Tsai, Biometrika 1989, 76, 297), BIC = n ln(RSS/n) + k ln n
    (G. Schwarz, Ann. Stat. 1978, 6, 461). NaN when the data cannot support them: n ≤ k + 1,
    or RSS ≤ 0 (an exact fit has no likelihood maximum)."""
    if n <= k + 1 or not rss > 0:
        return float("nan"), float("nan")
    base = n * np.log(rss / n)
    return float(base + 2 * k + 2 * k * (k + 1) / (n - k - 1)), float(base + k * np.log(n))


def aicc(rss: float, n: int, k: int) -> float:
    """AICc alone (see :func:`information_criteria`)."""
    return information_criteria(rss, n, k)[0]


def at_bound(theta, lo, hi) -> np.ndarray:
    """Mask of parameters that ended on a finite search bound (within
    :data:`BOUND_TOLERANCE` of the search range, or of 1 + |θ| where the range is infinite)."""
    theta, lo, hi = (np.asarray(v, dtype=float) for v in (theta, lo, hi))
    span = np.where(np.isfinite(hi - lo), hi - lo, 1.0 + np.abs(theta))
    return ((np.isfinite(lo) & (theta - lo <= BOUND_TOLERANCE * span)) |
            (np.isfinite(hi) & (hi - theta <= BOUND_TOLERANCE * span)))
