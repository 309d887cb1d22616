"""Rehm–Weller relation.

    dE‡ = dE/2 + sqrt((dE/2)² + G0²)

D. Rehm, A. Weller, Isr. J. Chem. 1970, 8, 259. One parameter G0, the barrier at dE = 0;
asymptotes 0 and dE, hyperbolic shape. For dE < 0 the algebraically equal form
G0² / (sqrt((dE/2)² + G0²) − dE/2) is used, which does not cancel.
"""

from __future__ import annotations

import numpy as np

from .base import G0Relation, split_params, stack_jacobian


class RehmWellerRelation(G0Relation):
    name = "rehm_weller"
    label = "Rehm–Weller"

    def barrier(self, energy, theta):
        (g0,) = split_params(theta, 1)
        half = 0.5 * np.asarray(energy, dtype=float)
        h = np.hypot(half, g0)
        downhill_denominator = np.where(half > 0, 1.0, h - half)
        return np.where(half > 0, half + h, g0 * g0 / downhill_denominator)

    def slope(self, energy, theta):
        (g0,) = split_params(theta, 1)
        half = 0.5 * np.asarray(energy, dtype=float)
        return 0.5 + 0.5 * half / np.hypot(half, g0)

    def jacobian(self, energy, theta):
        (g0,) = split_params(theta, 1)
        half = 0.5 * np.asarray(energy, dtype=float)
        d = g0 / np.hypot(half, g0)
        return stack_jacobian([d], np.shape(d))
