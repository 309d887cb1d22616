"""The one place that knows the user's energy unit: results in kcal/mol → the user's unit.

Every job works and returns in kcal/mol. :func:`in_unit` converts a whole result (nested
dicts and lists) by one rule: a number is converted according to the key it sits under —
the nearest enclosing key that is listed here decides. Keys in :data:`ENERGY` hold energies
(divide by the factor), keys in :data:`ENERGY_SQUARED` squared energies (divide by its
square), keys in :data:`PLAIN` anything else (counts, probabilities, Leffler α, distances in
descriptor space, seconds). Unlisted keys inherit from their parent; the top level is plain.
Information criteria (AICc, BIC) are computed from residuals in kcal/mol and left as they
are: only their differences between relations mean anything, and those do not depend on
the unit.
"""

from __future__ import annotations

import numpy as np

from ..relations import EXTRA_RELATIONS, RELATIONS
from ..units import factor_to_kcal, normalize_unit


def _relation_keys():
    energy, plain = set(), set()
    for cls in [*RELATIONS.values(), *EXTRA_RELATIONS.values()]:
        for name in cls.param_names:
            (plain if name in cls.dimensionless else energy).add(name)
    return energy, plain


_REL_ENERGY, _REL_PLAIN = _relation_keys()

ENERGY = frozenset({
    "mae", "rmse", "loo_mae", "loo_rmse", "delta_mae", "ci95", "energy", "barrier", "energy_pred", "energy_sd", "barrier_sd", "pred",
    "low", "high", "mae_mean", "mae_std", "direct_mae_mean", "mean_predictor_mae", "energy_range",
    "barrier_range", "sigma", "span", "center", "barrier_at_center", "intrinsic_barrier", "uphill_excess",
    "misses", "margin", "floor", "gap", "below", "above", "energy_stage_importance", "barrier_per_sigma",
    "barrier_per_sigma_ci95", "barrier_at_zero_sigma", "centre", "family_floors",
}) | _REL_ENERGY
ENERGY_SQUARED = frozenset({"delta_mse", "mse_ci95"})
PLAIN = frozenset({
    "r2", "pi90_coverage", "coverage", "alpha", "alpha_ci95", "alpha_at_zero", "alpha_members", "wilcoxon_p", "p",
    "curvature_p", "span_over_width", "n", "n_test", "n_shuffles", "correlation", "aicc", "bic", "dof", "rows",
    "ok", "seconds", "score", "ad_distance", "temperature", "half_life_s", "rate_constant_per_s", "leffler_alpha",
    "unusual", "energy_clipped", "unusual_descriptors", "energy_outside_span", "folds", "level", "ad_out",
    "energy_pred_outside",
    "energy_true_outside", "n_train", "threshold", "rank", "rho", "rho_ci95", "sigma_sum", "alpha_at_centre", "lr",
    "df", "aicc_shared", "aicc_separate",
    "rows_per_second", "loo_mae_rank", "n_outside_validity", "candidates", "considered", "k",
}) | _REL_PLAIN


def _scale(key, parent: float, f: float) -> float:
    if key in ENERGY:
        return f
    if key in ENERGY_SQUARED:
        return f * f
    if key in PLAIN:
        return 1.0
    return parent


def to_unit(values, unit: str):
    """Energies (kcal/mol; a number or an array) in ``unit`` — for figures and tables."""
    f = factor_to_kcal(normalize_unit(unit))
    return np.asarray(values, dtype=float) / f if np.ndim(values) else float(values) / f


def in_unit(obj, unit: str):
    """``obj`` (results in kcal/mol) with every energy expressed in ``unit``; see the module
    docstring for the rule. Returns new containers; strings, booleans and None pass through."""
    f = factor_to_kcal(normalize_unit(unit))

    def walk(o, scale):
        if isinstance(o, dict):
            return {k: walk(v, _scale(k, scale, f)) for k, v in o.items()}
        if isinstance(o, (list, tuple)):
            return [walk(v, scale) for v in o]
        if isinstance(o, np.ndarray):
            return walk(o.tolist(), scale)
        if isinstance(o, (bool, np.bool_)) or o is None or isinstance(o, str):
            return o
        if isinstance(o, (int, float, np.integer, np.floating)):
            return o if scale == 1.0 else float(o) / scale
        return o

    return walk(obj, 1.0)


def unit_slug(unit: str) -> str:
    """The unit as it appears in column names: ``barrier_kcal_mol``, ``barrier_kJ_mol``..."""
    return {"kcal/mol": "kcal_mol", "kJ/mol": "kJ_mol", "eV": "eV", "hartree": "hartree"}[normalize_unit(unit)]
