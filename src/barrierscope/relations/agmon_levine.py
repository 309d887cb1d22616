"""Agmon–Levine relation.

    dE‡ = dE + (G0/ln 2)·ln(1 + exp(−dE·ln 2/G0))

N. Agmon, R. D. Levine, Chem. Phys. Lett. 1977, 52, 197. One parameter, G0, the barrier at
dE = 0. Asymptotes 0 (downhill) and dE (uphill); slope exactly 1/2 at dE = 0.
It is evaluated in the equivalent form (G0/ln 2)·softplus(dE·ln 2/G0), which cancels nothing.
"""

from __future__ import annotations

import numpy as np
from scipy.special import expit

from .base import (
    G0Relation,
    logistic_parts,
    softplus,
    split_params,
    stack_jacobian,
)

LN2 = np.log(2.0)


class AgmonLevineRelation(G0Relation):
    name = "agmon_levine"
    label = "Agmon–Levine"

    def barrier(self, energy, theta):
        (g0,) = split_params(theta, 1)
        width = g0 / LN2
        return width * softplus(np.asarray(energy, dtype=float) / width)

    def slope(self, energy, theta):
        (g0,) = split_params(theta, 1)
        return expit(np.asarray(energy, dtype=float) * LN2 / g0)

    def jacobian(self, energy, theta):
        (g0,) = split_params(theta, 1)
        u = np.asarray(energy, dtype=float) * LN2 / g0
        d = logistic_parts(u)[2] / LN2
        return stack_jacobian([d], np.shape(d))
