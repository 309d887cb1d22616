"""Does a family's data pin the asymptotic curve's curvature, or only its tangent?

W and M are determined only when the reaction energies span several widths and reach the
curved region. With a narrow span the three-parameter fit degenerates to its tangent line:
the profile intervals of M and W then run to the search bounds. The verdict here says so,
and reports what the data do determine: the tangent at the centre of the data, with a
t-interval on its slope (the local Leffler α). The extra-sum-of-squares F-test of curve
against line (Bates & Watts 1988, §3.5; the line is the curve's W → ∞ limit, so the
test is approximate) says whether the curvature rises above the noise.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from ..relations import LinearRelation
from .fit import RelationFit, fit_relation
from .intervals import ProfileInterval, t_quantile


@dataclass
class Identifiability:
    identifiable: bool
    span: float                 # kcal/mol
    width: float                # kcal/mol
    span_over_width: float
    unpinned: tuple[str, ...]   # parameters whose interval runs to a search bound
    curvature_p: float          # F-test p of the curve against the line
    tangent_center: float       # kcal/mol, mean reaction energy
    tangent_barrier: float      # kcal/mol, tangent's barrier at the centre
    tangent_alpha: float
    tangent_alpha_ci95: tuple[float, float]

    def as_dict(self) -> dict:
        """JSON-ready verdict (energies in kcal/mol); the words are written by the views."""
        return {
            "identifiable": self.identifiable,
            "span": self.span,
            "width": self.width,
            "span_over_width": self.span_over_width,
            "unpinned": list(self.unpinned),
            "curvature_p": self.curvature_p,
            "tangent": {"center": self.tangent_center, "barrier_at_center": self.tangent_barrier,
                        "alpha": self.tangent_alpha, "alpha_ci95": list(self.tangent_alpha_ci95)},
        }

    @classmethod
    def from_dict(cls, d: dict) -> "Identifiability":
        t = d["tangent"]
        return cls(identifiable=bool(d["identifiable"]), span=float(d["span"]), width=float(d["width"]),
                   span_over_width=float(d["span_over_width"]), unpinned=tuple(d["unpinned"]),
                   curvature_p=float(d["curvature_p"]), tangent_center=float(t["center"]),
                   tangent_barrier=float(t["barrier_at_center"]), tangent_alpha=float(t["alpha"]),
                   tangent_alpha_ci95=tuple(t["alpha_ci95"]))


def assess_identifiability(fit: RelationFit, energy, barrier,
                           intervals: dict[str, ProfileInterval] | None) -> Identifiability:
    """Verdict on an asymptotic-curve fit. ``intervals`` are its profile intervals (or None)."""
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    span = float(np.ptp(x))
    width = float(fit.params_dict()["width"])
    unpinned = set(fit.at_bound)
    if intervals is not None:
        unpinned |= {k for k, iv in intervals.items() if not iv.closed}
    unpinned_t = tuple(n for n in fit.relation.param_names if n in unpinned)

    line = fit_relation(LinearRelation(), x, y)
    center = float(np.mean(x))
    alpha = float(line.params[1])
    t = t_quantile(0.95, line.dof)
    se_alpha = float(line.stderr[1])
    alpha_ci = (alpha - t * se_alpha, alpha + t * se_alpha)
    barrier_c = float(line.params[0] + alpha * center)

    dof = fit.dof
    if dof > 0 and fit.rss > 0 and line.rss > fit.rss:
        fstat = (line.rss - fit.rss) / (fit.rss / dof)
        p = float(special.fdtrc(1, dof, fstat))  # upper tail of F(1, dof)
    else:
        p = 1.0

    identifiable = not unpinned_t and fit.success
    return Identifiability(identifiable=identifiable, span=span, width=width,
                           span_over_width=span / width if width > 0 else float("inf"),
                           unpinned=unpinned_t, curvature_p=p, tangent_center=center,
                           tangent_barrier=barrier_c, tangent_alpha=alpha, tangent_alpha_ci95=alpha_ci)
