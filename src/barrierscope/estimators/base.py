"""The scikit-learn estimator protocol, implemented without importing scikit-learn.

barrierscope's estimators follow scikit-learn's conventions exactly — parameters set in
``__init__`` and nothing else done there, ``get_params``/``set_params``, learned state ending
in ``_``, ``n_features_in_`` and ``feature_names_in_``, ``score`` as R², estimator tags — so
``clone``, ``Pipeline``, ``GridSearchCV`` and ``cross_val_score`` take them as they take
scikit-learn's own, and scikit-learn's estimator checks run on them
(``tests/test_sklearn_checks.py``; the checks that cannot apply are listed with their reasons
in :data:`barrierscope.estimators.EXPECTED_FAILED_CHECKS`). They do not inherit from
``sklearn.base.BaseEstimator`` because importing it loads scikit-learn and SciPy's statistics
module, about a second and a half on a 2-core machine: more than fitting a family takes.
scikit-learn's developer guide allows this (an estimator needs the protocol, not the base
class); tags and warnings are built from scikit-learn's own classes only when needed.

One deliberate difference: a DataFrame whose columns arrive in another order than at ``fit``
is matched by column name, so it gives the same numbers (scikit-learn refuses it). Missing or
unknown columns are an error that names them.
"""

from __future__ import annotations

import inspect
import warnings

import numpy as np


def _column_names(X) -> list[str] | None:
    """A DataFrame's column names when every one is a string (scikit-learn's rule), else None."""
    cols = getattr(X, "columns", None)
    if cols is None:
        return None
    names = list(cols)
    return [str(c) for c in names] if names and all(isinstance(c, str) for c in names) else None


def _dense(X, what: str = "X") -> np.ndarray:
    if hasattr(X, "toarray") and hasattr(X, "nnz"):
        raise TypeError(f"a sparse matrix was passed as {what}; barrierscope's estimators take dense data "
                        f"(use X.toarray())")
    A = np.asarray(X)
    if np.iscomplexobj(A):
        raise ValueError("Complex data not supported")
    if A.dtype == object:
        A = A.astype(float)       # a non-number raises: "float() argument must be a string or a real number"
    return np.asarray(A, dtype=float)


class RegressorProtocol:
    """Base class: the scikit-learn regressor protocol (see the module docstring)."""

    #: Tag values subclasses set: what input the estimator takes.
    _accepts_1d = False
    _allows_nan = False
    #: Fewest descriptor columns ``fit`` needs (0 for estimators that may run on energies alone).
    _min_features = 1
    #: True where a good score on arbitrary regression data is not expected (one column used).
    _poor_score = False

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
                    regressor_tags=RegressorTags(poor_score=self._poor_score),
                    input_tags=InputTags(one_d_array=self._accepts_1d, two_d_array=True, allow_nan=self._allows_nan))

    def score(self, X, y, sample_weight=None, **predict_params) -> float:
        """R² of ``predict(X)`` against ``y`` (the scikit-learn regressor score)."""
        y = np.asarray(y, dtype=float).ravel()
        pred = np.asarray(self.predict(X, **predict_params), dtype=float).ravel()
        w = np.ones_like(y) if sample_weight is None else np.asarray(sample_weight, dtype=float)
        mean = np.average(y, weights=w)
        ss_tot = float(np.sum(w * (y - mean) ** 2))
        return 1.0 - float(np.sum(w * (y - pred) ** 2)) / ss_tot if ss_tot > 0 else float("nan")

    # -- input validation (scikit-learn's messages where its checks look for them) ------------
    def _validate_X(self, X, *, reset: bool) -> np.ndarray:
        """X as a float array (n, p), columns in fit order. ``reset`` (in fit) records
        ``n_features_in_`` and, for a DataFrame with string column names, ``feature_names_in_``;
        otherwise both are checked."""
        if X is None:
            raise ValueError(f"{type(self).__name__} needs X (descriptors), got None")
        names = _column_names(X)
        if reset:
            if names is not None:
                self.feature_names_in_ = np.asarray(names, dtype=object)
            elif hasattr(self, "feature_names_in_"):
                del self.feature_names_in_
        elif names is not None and hasattr(self, "feature_names_in_"):
            order = self._reordered(names)
            X = X if order is None else X[order]
        elif names is not None or hasattr(self, "feature_names_in_"):
            warnings.warn(f"X {'has' if names is not None else 'does not have valid'} feature names, but "
                          f"{type(self).__name__} was fitted {'without' if names is not None else 'with'} "
                          f"feature names", UserWarning, stacklevel=3)
        A = _dense(X)
        if A.ndim == 1:
            if not self._accepts_1d:
                raise ValueError("Expected 2D array, got 1D array instead. Reshape your data either using "
                                 "array.reshape(-1, 1) if your data has a single feature or array.reshape(1, -1) "
                                 "if it contains a single sample.")
            A = A[:, None]
        if A.ndim != 2:
            raise ValueError(f"Expected a 2D array, got an array of shape {A.shape}")
        if A.shape[0] == 0:
            raise ValueError(f"Found array with 0 sample(s) (shape={A.shape}) while a minimum of 1 is required.")
        if reset and A.shape[1] < self._min_features:
            raise ValueError(f"Found array with {A.shape[1]} feature(s) (shape={A.shape}) while a minimum of "
                             f"{self._min_features} is required.")
        if np.isinf(A).any():
            raise ValueError("Input X contains infinity" + (" (a missing value is NaN)" if self._allows_nan else ""))
        if not self._allows_nan and np.isnan(A).any():
            raise ValueError("Input X contains NaN.")
        if reset:
            self.n_features_in_ = int(A.shape[1])
        elif A.shape[1] != self.n_features_in_:
            raise ValueError(f"X has {A.shape[1]} features, but {type(self).__name__} is expecting "
                             f"{self.n_features_in_} features as input.")
        return A

    def _reordered(self, names: list[str]) -> list[str] | None:
        """None when X's columns are the fit-time ones in the fit-time order; the fit-time order
        when they come in another; else the error naming what is missing or unknown."""
        fitted = [str(c) for c in self.feature_names_in_]
        if names == fitted:
            return None
        unseen = [c for c in names if c not in set(fitted)]
        missing = [c for c in fitted if c not in set(names)]
        if not unseen and not missing and len(names) == len(fitted):
            return fitted
        msg = "The feature names should match those that were passed during fit.\n"
        if unseen:
            msg += "Feature names unseen at fit time:\n" + "".join(f"- {c}\n" for c in unseen)
        if missing:
            msg += "Feature names seen at fit time, yet now missing:\n" + "".join(f"- {c}\n" for c in missing)
        if len(set(names)) != len(names):
            msg += "Feature names repeated in X.\n"
        raise ValueError(msg)

    def _validate_y(self, y, n: int) -> np.ndarray:
        """y as a float vector of n finite values (a column vector is accepted with scikit-learn's
        DataConversionWarning)."""
        if y is None:
            raise ValueError(f"{type(self).__name__} requires y to be passed, but the target y is None")
        v = _dense(y, "y")
        if v.ndim == 2 and v.shape[1] == 1:
            from sklearn.exceptions import DataConversionWarning

            warnings.warn("A column-vector y was passed when a 1d array was expected. Please change the shape of "
                          "y to (n_samples, ), for example using ravel().", DataConversionWarning, stacklevel=3)
            v = v[:, 0]
        if v.ndim != 1:
            raise ValueError(f"y should be a 1d array, got an array of shape {v.shape} instead.")
        if v.size != n:
            raise ValueError(f"Found input variables with inconsistent numbers of samples: [{n}, {v.size}]")
        if not np.all(np.isfinite(v)):
            raise ValueError("Input y contains NaN or infinity")
        return v


def check_fitted(estimator, attribute: str) -> None:
    """Raise scikit-learn's ``NotFittedError`` unless ``fit`` has set ``attribute``."""
    if not hasattr(estimator, attribute):
        from sklearn.exceptions import NotFittedError

        raise NotFittedError(f"this {type(estimator).__name__} is not fitted yet: call fit first")


def select_column(A: np.ndarray, column, names) -> int:
    """Position of ``column`` (a name, with ``names`` the fit-time column names, or an index)
    in the columns of A; the error says what exists."""
    if isinstance(column, str):
        if names is None or column not in list(names):
            raise ValueError(f"energy column {column!r} is not among X's columns "
                             f"({', '.join(map(str, names)) if names is not None else 'X has no column names'})")
        return list(names).index(column)
    j = int(column)
    if not -A.shape[1] <= j < A.shape[1]:
        raise ValueError(f"energy column {column} is out of range for X with {A.shape[1]} column(s)")
    return j % A.shape[1]
