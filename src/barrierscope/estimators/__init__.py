"""scikit-learn estimators for a reaction family (parameters set in ``__init__``, learned state
ending in ``_``, fitted only through ``fit``):

- :class:`CurveRegressor` — reaction energy → barrier through one fitted relation;
- :class:`DescriptorRegressor` — descriptors → one target (the energy stage, the black-box
  baseline, the hybrid's correction);
- :class:`TwoStageRegressor` — descriptors → reaction energy → barrier;
- :class:`HybridRegressor` — two-stage plus a learned correction of its residuals.

Energies are kcal/mol throughout.
"""

from ..curves.regressor import CurveRegressor
from .descriptor_regressor import DescriptorRegressor
from .hybrid import HybridRegressor
from .two_stage import TwoStageRegressor

__all__ = ["CurveRegressor", "DescriptorRegressor", "TwoStageRegressor", "HybridRegressor"]
