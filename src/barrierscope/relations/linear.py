"""Linear relation: Bell–Evans–Polanyi / Leffler.

    dE‡ = c + α·dE

R. P. Bell, Proc. R. Soc. Lond. A 1936, 154, 414; M. G. Evans, M. Polanyi, Trans. Faraday
Soc. 1938, 34, 11; J. E. Leffler, Science 1953, 117, 340. The slope α is Leffler's index of
transition-state position (0 reactant-like, 1 product-like). It is only ever a local tangent.
"""

from __future__ import annotations

import numpy as np

from .base import Relation, split_params, stack_jacobian


class LinearRelation(Relation):
    name = "linear"
    label = "linear (Bell–Evans–Polanyi / Leffler)"
    param_names = ("intercept", "alpha")
    dimensionless = ("alpha",)
    derived_units = {"intrinsic_barrier": "energy", "alpha": "dimensionless"}

    def barrier(self, energy, theta):
        c, a = split_params(theta, 2)
        return c + a * np.asarray(energy, dtype=float)

    def slope(self, energy, theta):
        c, a = split_params(theta, 2)
        x = np.asarray(energy, dtype=float)
        return np.broadcast_to(a, np.broadcast_shapes(np.shape(c), x.shape)).astype(float)

    def jacobian(self, energy, theta):
        c, a = split_params(theta, 2)
        x = np.asarray(energy, dtype=float)
        shape = np.broadcast_shapes(np.shape(c), x.shape)
        return stack_jacobian([1.0, x], shape)

    def bounds(self, energy, barrier):
        return np.array([-np.inf, -np.inf]), np.array([np.inf, np.inf])

    def starts(self, energy, barrier):
        x = np.asarray(energy, dtype=float)
        y = np.asarray(barrier, dtype=float)
        if x.size >= 2 and np.ptp(x) > 0:
            a, c = np.polyfit(x, y, 1)
        else:
            a, c = 0.5, float(np.mean(y)) if y.size else 0.0
        return [np.array([c, a])]

    def derived(self, theta):
        c, a = np.asarray(theta, dtype=float)
        return {"intrinsic_barrier": float(c), "alpha": float(a)}
