"""The per-member leave-one-out table (`fit --members`, the demo's ``members.csv``).

One row per member: id, the given reaction energy and barrier, the leave-one-out reaction
energy of the energy stage, and for every route its leave-one-out prediction, residual
(prediction − barrier) and 90 % interval; then the domain and extrapolation flags (``energy_pred_outside``: the leave-one-out reaction
energy outside the other members' span; ``energy_clipped`` and ``unusual_descriptors``: the
energy stage's guard acted, see :mod:`..estimators.ridge`), and
``unusual``: a residual of the curve fed the member's own reaction energy beyond three
robust standard deviations (a suspect transition state or a mis-assigned energy).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .units import in_unit, unit_slug

ROUTE_ORDER = ("two_stage", "hybrid", "direct", "structure_curve", "curve_on_true_energy", "structure_curve_on_true_energy",
               "family_mean")


def members_frame(record, unit: str, rounded: bool = True) -> pd.DataFrame:
    """``record``: a FitRecord (kcal/mol); the table in ``unit``."""
    m = in_unit(record.members, unit)
    u = unit_slug(unit)
    r = (lambda v: np.round(np.asarray(v, dtype=float), 3)) if rounded else (lambda v: np.asarray(v, dtype=float))
    out = pd.DataFrame({"id": m["id"], f"reaction_energy_{u}": r(m["energy"]), f"barrier_{u}": r(m["barrier"])})
    if m.get("energy_pred") is not None:
        out[f"reaction_energy_loo_{u}"] = r(m["energy_pred"])
        out[f"reaction_energy_loo_sd_{u}"] = r(m["energy_sd"])
    barrier = np.asarray(m["barrier"], dtype=float)
    for route in ROUTE_ORDER:
        if route not in m["pred"]:
            continue
        pred = np.asarray(m["pred"][route], dtype=float)
        out[f"{route}_{u}"] = r(pred)
        out[f"{route}_residual_{u}"] = r(pred - barrier)
        out[f"{route}_low90_{u}"] = r(m["low"][route])
        out[f"{route}_high90_{u}"] = r(m["high"][route])
    for flag in ("ad_distance", "ad_out", "energy_pred_outside", "energy_true_outside", "energy_clipped",
                 "unusual_descriptors", "unusual"):
        if flag in m:
            out[flag] = r(m[flag]) if flag == "ad_distance" else m[flag]
    return out
