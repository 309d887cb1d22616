"""Blowers–Masel relation.

    dE‡ = 0                                              dE < −4E0
    dE‡ = (w + dE/2)·(V − 2w + dE)² / (V² − 4w² + dE²)   −4E0 ≤ dE ≤ 4E0
    dE‡ = dE                                             dE > 4E0
    with V = 2w(w + E0)/(w − E0)

P. Blowers, R. Masel, AIChE J. 2000, 46, 2041. ``e0`` is the intrinsic barrier (the barrier
at dE = 0; the slope there is exactly 1/2) and ``w`` a bond-energy parameter (half the sum
of the energies of the bonds broken and formed; it must exceed E0). As w → ∞ the middle
branch tends to Marcus with λ = 4E0. The outer branches keep barriers non-negative and
never below dE, which is why kinetic-mechanism work adopted it over linear rules; they do
not meet the middle branch exactly at ±4E0 (a property of the published form).

In the middle branch, with D = w − E0: V − 2w = 4wE0/D and V² − 4w² = 16w³E0/D², which is
how it is evaluated (no cancellation as w grows).
"""

from __future__ import annotations

import numpy as np

from .base import Relation, data_scale, split_params, stack_jacobian


#: w is held at least this factor above E0 (the published form needs w > E0; at w → E0 the
#: middle branch tends to the line E0 + dE/2, so the clamp only stops a division by zero).
_W_OVER_E0 = 1.0 + 1e-6


def _parts(energy, theta):
    e0, w = split_params(theta, 2)
    w = np.maximum(w, _W_OVER_E0 * e0)
    # The middle branch is only used within ±4E0; clipping there keeps it finite for any dE.
    h = np.clip(np.asarray(energy, dtype=float), -4.0 * e0, 4.0 * e0)
    d = w - e0
    a = 4.0 * w * e0 / d                      # V − 2w
    b = 16.0 * w ** 3 * e0 / d ** 2           # V² − 4w²
    p = w + 0.5 * h
    q = a + h
    r = b + h * h
    return e0, w, h, d, a, b, p, q, r


class BlowersMaselRelation(Relation):
    name = "blowers_masel"
    label = "Blowers–Masel"
    param_names = ("e0", "w")

    def barrier(self, energy, theta):
        e0, w, h, d, a, b, p, q, r = _parts(energy, theta)
        x = np.asarray(energy, dtype=float)
        return np.where(x < -4.0 * e0, 0.0, np.where(x > 4.0 * e0, x, p * q * q / r))

    def slope(self, energy, theta):
        e0, w, h, d, a, b, p, q, r = _parts(energy, theta)
        x = np.asarray(energy, dtype=float)
        middle = 0.5 * q * q / r + 2.0 * p * q / r - 2.0 * h * p * q * q / (r * r)
        return np.where(x < -4.0 * e0, 0.0, np.where(x > 4.0 * e0, 1.0, middle))

    def jacobian(self, energy, theta):
        e0, w, h, d, a, b, p, q, r = _parts(energy, theta)
        da_de0, da_dw = 4.0 * w * w / d ** 2, -4.0 * e0 * e0 / d ** 2
        db_de0, db_dw = 16.0 * w ** 3 * (w + e0) / d ** 3, 16.0 * w * w * e0 * (w - 3.0 * e0) / d ** 3
        q2r = q * q / r
        d_e0 = 2.0 * p * q * da_de0 / r - p * q2r * db_de0 / r
        d_w = q2r + 2.0 * p * q * da_dw / r - p * q2r * db_dw / r
        inside = np.abs(np.asarray(energy, dtype=float)) <= 4.0 * e0
        clamped = np.broadcast_to(split_params(theta, 2)[1] < _W_OVER_E0 * e0, np.shape(d_e0))
        d_e0 = np.where(clamped, d_e0 + _W_OVER_E0 * d_w, d_e0)   # w follows E0 on the clamp
        d_w = np.where(clamped, 0.0, d_w)
        return stack_jacobian([np.where(inside, d_e0, 0.0), np.where(inside, d_w, 0.0)], np.shape(d_e0))

    def bounds(self, energy, barrier):
        x, y, span_x, _ = data_scale(energy, barrier)
        top = (float(np.max(np.abs(y))) if y.size else 10.0) + span_x + 10.0
        return np.array([1e-3, 1e-3]), np.array([top, 1e4])

    def starts(self, energy, barrier):
        x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
        top = float(self.bounds(x, y)[1][0])
        grid = np.geomspace(1e-2, top, 40)
        out = []
        for ratio in (1.5, 5.0, 50.0):
            theta = np.column_stack([grid, ratio * grid])
            rss = np.sum((self.barrier(x, theta) - y) ** 2, axis=1)
            out.append(theta[int(np.argmin(rss))])
        return out

    def derived(self, theta):
        return {"intrinsic_barrier": float(np.asarray(theta, dtype=float)[0])}
