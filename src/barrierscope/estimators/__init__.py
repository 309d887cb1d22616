"""scikit-learn estimators for a reaction family (parameters set in ``__init__``, learned state
ending in ``_``, fitted only through ``fit``):

- :class:`CurveRegressor` — reaction energy → barrier through one fitted relation;
- :class:`DescriptorRegressor` — descriptors → one target (the energy stage, the black-box
  baseline, the hybrid's correction);
- :class:`TwoStageRegressor` — descriptors → reaction energy → barrier;
- :class:`HybridRegressor` — two-stage plus a learned correction of its residuals.

Energies are kcal/mol throughout.
"""

__all__ = ["CurveRegressor", "DescriptorRegressor", "TwoStageRegressor", "HybridRegressor"]

_WHERE = {"CurveRegressor": "..curves.regressor", "DescriptorRegressor": ".descriptor_regressor",
          "TwoStageRegressor": ".two_stage", "HybridRegressor": ".hybrid"}


def __getattr__(name):  # loaded on first use: the curves package imports this one's base class
    if name in _WHERE:
        from importlib import import_module

        return getattr(import_module(_WHERE[name], __name__), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
