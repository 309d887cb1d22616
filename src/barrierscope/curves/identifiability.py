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

import numpy as np
from scipy import special

from ..relations import LinearRelation
from .fit import RelationFit, fit_relation
from .intervals import ProfileInterval, t_quantile
from .records import Identifiability, Tangent


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
    return Identifiability(identifiable=bool(identifiable), span=span, width=width,
                           span_over_width=span / width if width > 0 else float("inf"),
                           unpinned=list(unpinned_t), curvature_p=p,
                           tangent=Tangent(center=center, barrier_at_center=barrier_c, alpha=alpha,
                                           alpha_ci95=list(alpha_ci)))
