"""The three-parameter asymptotic barrier curve.

    dE‡ = F + W·ln(1 + exp((dE − M)/W))

A generalisation of Agmon–Levine that follows from microscopic reversibility plus a
Hammond-type assumption that the transition state is stabilised from the reactant and
product sides. Parameters (all kcal/mol):

- ``floor`` F: the barrier left when the reaction is made infinitely downhill;
- ``midpoint`` M: the reaction energy where the slope is 1/2 (0 for an identity family);
- ``width`` W > 0: how gradually the transition state moves from early to late.

Exact properties (tested): slope α(dE) = σ((dE − M)/W), the local Leffler α; curvature
α(1 − α)/W; dE → −∞ gives F; dE → +∞ gives dE + U with the uphill excess U = F − M; the
reverse barrier dE‡ − dE as a function of −dE is the same curve with floor U, midpoint
−M; F = 0, M = 0, W = G0/ln 2 is Agmon–Levine (N. Agmon, R. D. Levine, Chem. Phys. Lett.
1977, 52, 197).
"""

from __future__ import annotations

import numpy as np
from scipy.special import expit, logit

from .base import (
    Relation,
    data_scale,
    logistic_parts,
    softplus,
    split_params,
    stack_jacobian,
)


def asymptotic_barrier(energy, floor, midpoint, width):
    """Barrier (kcal/mol) of the asymptotic curve at reaction energy ``energy`` (kcal/mol)."""
    return floor + width * softplus((np.asarray(energy, dtype=float) - midpoint) / width)


def asymptotic_alpha(energy, midpoint, width):
    """Local Leffler α = σ((dE − M)/W), dimensionless in (0, 1)."""
    return expit((np.asarray(energy, dtype=float) - midpoint) / width)


def uphill_excess(floor, midpoint):
    """U = F − M (kcal/mol): the barrier minus dE far uphill. U < 0 means the product
    stops being a minimum far enough uphill (its reverse reaction becomes barrierless)."""
    return floor - midpoint


def intrinsic_barrier(floor, midpoint, width):
    """Barrier at dE = 0 (kcal/mol): F + W·ln(1 + exp(−M/W))."""
    return floor + width * softplus(-midpoint / width)


def reverse_parameters(floor, midpoint, width):
    """(floor, midpoint, width) of the reverse-direction curve: (U, −M, W)."""
    return uphill_excess(floor, midpoint), -midpoint, width


class AsymptoticRelation(Relation):
    name = "asymptotic"
    label = "asymptotic curve (floor, midpoint, width)"
    param_names = ("floor", "midpoint", "width")
    derived_units = {"intrinsic_barrier": "energy", "uphill_excess": "energy", "alpha_at_zero": "dimensionless"}

    def barrier(self, energy, theta):
        f, m, w = split_params(theta, 3)
        return asymptotic_barrier(energy, f, m, w)

    def slope(self, energy, theta):
        f, m, w = split_params(theta, 3)
        shape = np.broadcast_shapes(np.shape(f), np.shape(energy))
        return np.broadcast_to(asymptotic_alpha(energy, m, w), shape).astype(float)

    def jacobian(self, energy, theta):
        f, m, w = split_params(theta, 3)
        z = (np.asarray(energy, dtype=float) - m) / w
        sigma, _, d_width = logistic_parts(z)
        return stack_jacobian([1.0, -sigma, d_width], np.shape(z))

    def residual_and_jacobian(self, energy, theta, barrier):
        f, m, w = split_params(theta, 3)
        z = (np.asarray(energy, dtype=float) - m) / w
        sigma, sp, d_width = logistic_parts(z)
        return f + w * sp - barrier, stack_jacobian([1.0, -sigma, d_width], np.shape(z))

    def curvature(self, energy, theta):
        """d²barrier/d dE² = α(1 − α)/W, in mol/kcal."""
        f, m, w = split_params(theta, 3)
        a = asymptotic_alpha(energy, m, w)
        return a * (1.0 - a) / w

    def width_bounds(self, energy, barrier) -> tuple[float, float]:
        x, y, span_x, span_y = data_scale(energy, barrier)
        return 0.05, 20.0 * (span_x + 5.0)

    def bounds(self, energy, barrier):
        x, y, span_x, span_y = data_scale(energy, barrier)
        w_lo, w_hi = self.width_bounds(energy, barrier)
        x_lo, x_hi = (float(np.min(x)), float(np.max(x))) if x.size else (0.0, 0.0)
        y_lo, y_hi = (float(np.min(y)), float(np.max(y))) if y.size else (0.0, 0.0)
        lo = np.array([y_lo - 3.0 * w_hi - 10.0, x_lo - 3.0 * w_hi, w_lo])
        hi = np.array([y_hi + 10.0, x_hi + 3.0 * w_hi, w_hi])
        return lo, hi

    def starts(self, energy, barrier):
        x, y, span_x, span_y = data_scale(energy, barrier)
        lo, hi = self.bounds(energy, barrier)
        if x.size < 2 or span_x == 0:
            return [np.clip(np.array([float(np.mean(y)) if y.size else 0.0, 0.0, 1.0]), lo, hi)]
        xc = float(np.mean(x))
        slope, intercept = np.polyfit(x, y, 1)
        a = float(np.clip(slope, 0.02, 0.98))
        yc = intercept + slope * xc
        widths = [span_x / 6.0, span_x / 3.0, span_x, 3.0 * span_x, 10.0 * span_x]
        if x.size >= 3:
            q2 = np.polyfit(x - xc, y, 2)[0]
            if q2 > 0:
                widths.insert(0, a * (1.0 - a) / (2.0 * q2))
        z = float(logit(a))
        out = []
        for w in widths:
            w = float(np.clip(w, lo[2], hi[2]))
            out.append(np.clip(np.array([yc - w * softplus(z), xc - w * z, w]), lo, hi))
        return out

    def subset_starts(self, energy, barrier, weights):
        """:meth:`starts` and :meth:`bounds` for many subsets at once (the same numbers: weighted
        moments stand in for each subset's polynomial fits)."""
        x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
        w = (np.atleast_2d(weights) > 0).astype(float)
        if np.any(w.sum(axis=1) < 3):
            return super().subset_starts(x, y, weights)
        big = np.where(w > 0, 0.0, np.inf)
        x_lo, x_hi = np.min(x + big, axis=1), np.max(x - big, axis=1)
        y_lo, y_hi = np.min(y + big, axis=1), np.max(y - big, axis=1)
        span = x_hi - x_lo
        w_lo, w_hi = np.full_like(span, 0.05), 20.0 * (span + 5.0)
        lo = np.column_stack([y_lo - 3.0 * w_hi - 10.0, x_lo - 3.0 * w_hi, w_lo])
        hi = np.column_stack([y_hi + 10.0, x_hi + 3.0 * w_hi, w_hi])
        n = w.sum(axis=1)
        xc = (w @ x) / n
        d = x[None, :] - xc[:, None]
        # Least-squares line and parabola in (x − xc) through each subset's members.
        mom = np.stack([np.sum(w * d ** k, axis=1) for k in range(5)], axis=1)          # Σ d^0..d^4
        rhs = np.stack([np.sum(w * d ** k * y, axis=1) for k in range(3)], axis=1)      # Σ d^k y
        slope = rhs[:, 1] / mom[:, 2]
        yc = rhs[:, 0] / n
        normal = np.stack([mom[:, [0, 1, 2]], mom[:, [1, 2, 3]], mom[:, [2, 3, 4]]], axis=1)
        q2 = np.linalg.solve(normal, rhs[..., None])[:, 2, 0]
        a = np.clip(slope, 0.02, 0.98)
        curv = np.where(q2 > 0, a * (1.0 - a) / (2.0 * np.where(q2 > 0, q2, 1.0)), span)
        widths = np.column_stack([curv, span / 6.0, span / 3.0, span, 3.0 * span, 10.0 * span])
        widths = np.clip(widths, lo[:, 2:3], hi[:, 2:3])
        z = logit(a)[:, None]
        starts = np.stack([yc[:, None] - widths * softplus(z), xc[:, None] - widths * z, widths], axis=2)
        return lo, hi, np.clip(starts, lo[:, None, :], hi[:, None, :])

    def derived(self, theta):
        f, m, w = (float(v) for v in np.asarray(theta, dtype=float))
        return {
            "intrinsic_barrier": float(intrinsic_barrier(f, m, w)),
            "uphill_excess": float(uphill_excess(f, m)),
            "alpha_at_zero": float(asymptotic_alpha(0.0, m, w)),
        }

    def reverse(self, theta) -> np.ndarray:
        """Parameter vector of the reverse-direction curve."""
        f, m, w = np.asarray(theta, dtype=float)
        return np.array(reverse_parameters(f, m, w), dtype=float)
