"""The one place views get the user's energy unit from: results in kcal/mol → the user's unit.

Every job works and returns in kcal/mol, as typed records whose fields declare their unit
class (:mod:`barrierscope.records`); :func:`in_unit` converts a record by those declarations
(energies divided by the unit's factor, squared energies by its square, everything else left
alone). :func:`to_unit` converts bare arrays for figures and tables; :func:`unit_slug` names
the unit in column names.
"""

from __future__ import annotations

import numpy as np

from ..records import in_unit
from ..units import factor_to_kcal, normalize_unit

__all__ = ["in_unit", "to_unit", "unit_slug"]


def to_unit(values, unit: str):
    """Energies (kcal/mol; a number or an array) in ``unit`` — for figures and tables."""
    f = factor_to_kcal(normalize_unit(unit))
    return np.asarray(values, dtype=float) / f if np.ndim(values) else float(values) / f


def unit_slug(unit: str) -> str:
    """The unit as it appears in column names: ``barrier_kcal_mol``, ``barrier_kJ_mol``..."""
    return {"kcal/mol": "kcal_mol", "kJ/mol": "kJ_mol", "eV": "eV", "hartree": "hartree"}[normalize_unit(unit)]
