"""Marcus relation for atom and group transfer.

    dE‡ = w + (λ/4)·(1 + dE/λ)²          for |dE| < λ

R. A. Marcus, J. Chem. Phys. 1956, 24, 966; as applied to atom and group transfer in
R. A. Marcus, J. Phys. Chem. 1968, 72, 891. λ/4 (+ w) is the intrinsic barrier.

Outside |dE| < λ the parabola's branch has no meaning for a thermal group transfer (its
slope leaves [0, 1]). Rather than report that branch, the relation continues with its
own limits, which join the parabola with matching slope: the barrier is w for dE ≤ −λ
(activationless) and w + dE for dE ≥ λ. Members out there are counted by
:meth:`outside_validity` and reported.
"""

from __future__ import annotations

import numpy as np

from .base import Relation, data_scale, split_params, stack_jacobian


class MarcusRelation(Relation):
    name = "marcus"
    label = "Marcus (with work term)"
    param_names = ("lambda", "work")

    def _parts(self, energy, theta):
        lam, w = split_params(theta, 2)
        x = np.asarray(energy, dtype=float)
        u = np.clip(x / lam, -1.0, 1.0)
        return lam, w, x, u

    def barrier(self, energy, theta):
        lam, w, x, u = self._parts(energy, theta)
        inside = w + 0.25 * lam * (1.0 + u) ** 2
        return np.where(x >= lam, w + x, inside)

    def slope(self, energy, theta):
        lam, w, x, u = self._parts(energy, theta)
        return 0.5 * (1.0 + u)

    def jacobian(self, energy, theta):
        lam, w, x, u = self._parts(energy, theta)
        d_lam = 0.25 * (1.0 - u * u)
        return stack_jacobian([d_lam, 1.0], np.shape(d_lam))

    def bounds(self, energy, barrier):
        x, y, span_x, span_y = data_scale(energy, barrier)
        big = 1e3 * (span_x + span_y + 10.0)
        return np.array([1e-2, -big]), np.array([big, big])

    def starts(self, energy, barrier):
        x, y, span_x, _ = data_scale(energy, barrier)
        scale = max(float(np.max(np.abs(x))) if x.size else 1.0, 1.0)
        starts = []
        # In the normal region y − dE/2 = (w + λ/4) + dE²/(4λ): linear in 1 and dE².
        if x.size >= 2:
            design = np.column_stack([np.ones_like(x), x * x])
            (a, b), *_ = np.linalg.lstsq(design, y - 0.5 * x, rcond=None)
            if b > 0:
                lam = max(1.0 / (4.0 * b), 1.05 * scale)
                starts.append(np.array([lam, a - lam / 4.0]))
        for lam in (1.5 * scale, 4.0 * scale, 20.0 * scale):
            w = float(np.mean(y - (lam / 4.0) * (1.0 + x / lam) ** 2)) if x.size else 0.0
            starts.append(np.array([lam, w]))
        return starts

    def derived(self, theta):
        lam, w = np.asarray(theta, dtype=float)
        return {"intrinsic_barrier": float(w + lam / 4.0)}

    def outside_validity(self, energy, theta):
        lam, _ = np.asarray(theta, dtype=float)
        return np.abs(np.asarray(energy, dtype=float)) >= lam


class MarcusNoWorkRelation(MarcusRelation):
    """Marcus with the work term fixed at zero: one parameter, λ."""

    name = "marcus_nowork"
    label = "Marcus (no work term)"
    param_names = ("lambda",)

    def _full(self, theta):
        t = np.asarray(theta, dtype=float)
        return np.concatenate([t, np.zeros(t.shape[:-1] + (1,))], axis=-1)

    def barrier(self, energy, theta):
        return super().barrier(energy, self._full(theta))

    def slope(self, energy, theta):
        return super().slope(energy, self._full(theta))

    def jacobian(self, energy, theta):
        return super().jacobian(energy, self._full(theta))[..., :1]

    def bounds(self, energy, barrier):
        lo, hi = super().bounds(energy, barrier)
        return lo[:1], hi[:1]

    def starts(self, energy, barrier):
        return [s[:1] for s in super().starts(energy, barrier)]

    def derived(self, theta):
        return {"intrinsic_barrier": float(np.asarray(theta, dtype=float)[0] / 4.0)}

    def outside_validity(self, energy, theta):
        return super().outside_validity(energy, self._full(theta))
