"""The family's Hammett plot data, when the table tier gives σ (kcal/mol; see
:mod:`..curves.hammett` for the choice of σm or σp per position)."""

from __future__ import annotations

import numpy as np

from ..curves.hammett import hammett_fit, ring_relations, sigma_sum
from .records import HammettRecord


def hammett_record(X, spec, barrier, temperature: float = 298.15) -> HammettRecord | None:
    """Σσ per member, the constants used, and the fitted line with ρ; None without table σ
    or with fewer than four members that have every σ."""
    if X is None or not any(str(c).endswith("_sigma_p") for c in X.columns):
        return None
    relations = ring_relations(spec.core) if spec.mode == "core" and spec.core else {}
    sigma, used = sigma_sum(X, spec.positions, relations)
    fit = hammett_fit(sigma, barrier, temperature)
    if fit is None:
        return None
    basis = ("the core: σm for positions meta to the reaction centre, σp for para" if relations else
             "σp for every position (where a position sits relative to the reaction centre is known only from a "
             "core with the centre on a benzene ring)")
    left_out = sorted(set(spec.positions) - set(used))
    return HammettRecord(**fit, sigma_sum=np.where(np.isfinite(sigma), sigma, np.nan).tolist(), constants=used,
                         basis=basis, left_out_positions=left_out, n_missing=int(np.sum(~np.isfinite(sigma))))
