"""The scikit-learn estimator protocol, implemented without importing scikit-learn.

barrierscope's estimators follow scikit-learn's conventions exactly — parameters set in
``__init__`` and nothing else done there, ``get_params``/``set_params``, learned state ending
in ``_``, ``score`` as R², estimator tags — so ``clone``, ``Pipeline``, ``GridSearchCV`` and
``cross_val_score`` take them as they take scikit-learn's own (tested). They do not inherit
from ``sklearn.base.BaseEstimator`` because importing it loads scikit-learn and SciPy's
statistics module, about a second and a half on a 2-core machine: more than fitting a family
takes. scikit-learn's developer guide allows this (an estimator needs the protocol, not the
base class); the tags are built from scikit-learn's own classes when scikit-learn asks.
"""

from __future__ import annotations

import inspect

import numpy as np


class RegressorProtocol:
    """Base class: the scikit-learn regressor protocol (see the module docstring)."""

    #: Tag values subclasses set: what input the estimator takes.
    _accepts_1d = False
    _allows_nan = False

    @classmethod
    def _get_param_names(cls) -> list[str]:
        sig = inspect.signature(cls.__init__)
        return sorted(p.name for p in sig.parameters.values()
                      if p.name != "self" and p.kind not in (p.VAR_KEYWORD, p.VAR_POSITIONAL))

    def get_params(self, deep: bool = True) -> dict:
        return {name: getattr(self, name) for name in self._get_param_names()}

    def set_params(self, **params):
        valid = self._get_param_names()
        for key, value in params.items():
            if key not in valid:
                raise ValueError(f"invalid parameter {key!r} for {type(self).__name__}; valid: {', '.join(valid)}")
            setattr(self, key, value)
        return self

    def __repr__(self) -> str:
        args = ", ".join(f"{k}={v!r}" for k, v in self.get_params().items())
        return f"{type(self).__name__}({args})"

    def __sklearn_tags__(self):
        from sklearn.utils import InputTags, RegressorTags, Tags, TargetTags

        return Tags(estimator_type="regressor", target_tags=TargetTags(required=True),
                    regressor_tags=RegressorTags(),
                    input_tags=InputTags(one_d_array=self._accepts_1d, two_d_array=True, allow_nan=self._allows_nan))

    def score(self, X, y, sample_weight=None, **predict_params) -> float:
        """R² of ``predict(X)`` against ``y`` (the scikit-learn regressor score)."""
        y = np.asarray(y, dtype=float).ravel()
        pred = np.asarray(self.predict(X, **predict_params), dtype=float).ravel()
        w = np.ones_like(y) if sample_weight is None else np.asarray(sample_weight, dtype=float)
        mean = np.average(y, weights=w)
        ss_tot = float(np.sum(w * (y - mean) ** 2))
        return 1.0 - float(np.sum(w * (y - pred) ** 2)) / ss_tot if ss_tot > 0 else float("nan")


def check_fitted(estimator, attribute: str) -> None:
    """Raise scikit-learn's ``NotFittedError`` unless ``fit`` has set ``attribute``."""
    if not hasattr(estimator, attribute):
        from sklearn.exceptions import NotFittedError

        raise NotFittedError(f"this {type(estimator).__name__} is not fitted yet: call fit first")
