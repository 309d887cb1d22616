"""Descriptors → one target (reaction energy, barrier, or a residual) with one learner.

The same class serves the energy stage (descriptors → reaction energy), the black-box
baseline (descriptors → barrier, same learner, same tuning) and the hybrid's correction.
Scaling, imputation and hyper-parameter choice all happen inside :meth:`fit`, so the
estimator can be refitted inside any cross-validation fold without leakage.
"""

from __future__ import annotations

import numpy as np

from .base import RegressorProtocol, check_fitted
from .learners import check_learner, fit_state, loo_residuals, manifold_excess, predict_state
from .preprocess import Preprocessor


def _plain(v):
    """Numbers and lists only (the forest's trees are dicts of arrays)."""
    if isinstance(v, np.ndarray):
        return v.tolist()
    if isinstance(v, dict):
        return {k: _plain(x) for k, x in v.items()}
    if isinstance(v, list):
        return [_plain(x) for x in v]
    return v


class DescriptorRegressor(RegressorProtocol):
    """Parameters
    ----------
    learner : {"auto", "ridge", "pls", "gp", "forest"}
        ``"auto"`` fits ridge and a Gaussian process and keeps the one with the lower exact
        leave-one-out error (``state_["auto"]`` says which, and why).
    random_state : int
    effort : {"full", "refit"}
        ``"refit"`` bounds the cost of a validation refit: forests of half the trees (a
        Gaussian process's search is bounded by ``warm_start`` instead).
    anchor : str, int or None
        A column holding a computed reaction energy (kcal/mol or any unit: the fit is linear in
        it): fitted unpenalised, target = a + b·anchor + ridge correction, or the free learner,
        whichever an inner score with end splits prefers (:mod:`.anchored`). Every training
        member must have it; a row without it at predict time gets the free learner's value.
    fixed : tuple of str
        Further columns fitted unpenalised with the anchor (one indicator per family: a
        per-family intercept under a shared slope). Ignored without ``anchor``.

    Attributes
    ----------
    n_features_in_ : int — descriptor columns seen at fit
    feature_names_in_ : ndarray of str — their names, when X was a DataFrame with string column
        names; a DataFrame at predict is matched by these names (any order)
    preprocessor_ : Preprocessor
    state_ : dict — the learner's fitted numbers
    n_train_ : int
    """

    _allows_nan = True   # missing descriptors are imputed inside fit

    def __init__(self, learner: str = "ridge", random_state: int = 0, effort: str = "full", *, anchor=None,
                 fixed=()):
        self.learner = learner
        self.random_state = random_state
        self.effort = effort
        self.anchor = anchor
        self.fixed = fixed

    def fit(self, X, y, warm_start=None):
        """Fit on descriptors X (n, p; NaN = missing; a DataFrame's column names are kept in
        ``feature_names_in_``) and target y (n,). ``warm_start``: a fitted DescriptorRegressor
        of the same learner whose hyper-parameters start this fit's search (Gaussian process
        only; validation refits use it to bound their cost)."""
        A = self._validate_X(X, reset=True)
        y = self._validate_y(y, A.shape[0])
        learner = check_learner(self.learner)
        if y.size < 2:
            raise ValueError(f"{y.size} sample(s) (n_samples={y.size}): a regression needs at least 2")
        names = getattr(self, "feature_names_in_", None)
        cols = [str(c) for c in names] if names is not None else [f"x{j}" for j in range(A.shape[1])]
        self.preprocessor_ = Preprocessor.fit(A, cols)
        Z = self.preprocessor_.transform(A)
        warm = getattr(warm_start, "state_", warm_start if isinstance(warm_start, dict) else None)
        anchor = self._anchor_columns(A, cols)
        self.state_ = fit_state(learner, Z, y, self.random_state, warm=warm, effort=self.effort, anchor=anchor)
        self.n_train_ = int(y.size)
        return self

    def _anchor_columns(self, A, cols) -> list[int] | None:
        """Kept-column indices of the anchor and the fixed columns (None without an anchor)."""
        if self.anchor is None:
            return None
        j = self.anchor if isinstance(self.anchor, (int, np.integer)) else \
            (cols.index(str(self.anchor)) if str(self.anchor) in cols else None)
        if j is None or not 0 <= j < len(cols):
            raise ValueError(f"anchor column {self.anchor!r} is not among the descriptors")
        missing = np.flatnonzero(~np.isfinite(A[:, j]))
        if missing.size:
            raise ValueError(f"the anchor column {cols[j]!r} is missing for {missing.size} training member(s) "
                             f"(first: position {missing[0]}); every member needs its computed reaction energy")
        keep = self.preprocessor_.keep
        if j not in keep:
            raise ValueError(f"the anchor column {cols[j]!r} is the same for every training member")
        fixed = [keep.index(cols.index(c)) for c in self.fixed if c in cols and cols.index(c) in keep]
        return [keep.index(j), *fixed]

    def _through_anchor(self, A) -> np.ndarray | None:
        """Rows (raw descriptors A) predicted through the anchor: an anchored choice and the row's
        computed energy given; None when the stage does not predict through an anchor."""
        if self.state_.get("kind") != "anchored" or self.state_.get("choice") == "free":
            return None
        return np.isfinite(A[:, self.preprocessor_.keep[self.state_["fixed"][0]]])

    def anchored_rows(self, X) -> np.ndarray:
        """Rows predicted through the anchor (an anchored choice, and the row's computed energy given)."""
        check_fitted(self, "state_")
        A = self._validate_X(X, reset=False)
        through = self._through_anchor(A)
        return np.zeros(A.shape[0], dtype=bool) if through is None else through

    def _predict(self, X, with_excess: bool):
        A = self._validate_X(X, reset=False)
        Z = self.preprocessor_.transform(A)
        out = predict_state(self.state_, Z, with_excess=with_excess)
        through = self._through_anchor(A)
        if through is not None and not through.all():      # rows without a computed energy: the free learner
            bad = ~through
            free = predict_state(self.state_["free"], Z[bad], with_excess=with_excess)
            for full, part in zip(out, free):
                full[bad] = part
        return (*out, Z)

    def standardise(self, X) -> np.ndarray:
        """The imputed, standardised descriptors the learner sees (n, kept columns)."""
        check_fitted(self, "state_")
        return self.preprocessor_.transform(self._validate_X(X, reset=False))

    def predict(self, X, return_std: bool = False):
        """Prediction in y's unit; with ``return_std`` also its predictive standard deviation."""
        check_fitted(self, "state_")
        mean, std, _ = self._predict(X, with_excess=False)
        return (mean, std) if return_std else mean

    def predict_detail(self, X) -> dict:
        """One pass over X: ``mean`` and ``std`` (y's unit), the manifold ``excess`` and the
        standardised descriptors ``Z`` (for the applicability domain)."""
        check_fitted(self, "state_")
        mean, std, excess, Z = self._predict(X, with_excess=True)
        return {"mean": mean, "std": std, "excess": excess, "Z": Z}

    def manifold_excess(self, X) -> np.ndarray:
        """How far each row's descriptor combination lies outside the training members' (0
        inside): its predictions were clipped to the training box there (see :mod:`.ridge`)."""
        return manifold_excess(self.state_, self.standardise(X))

    @property
    def chosen_learner(self) -> str:
        """The learner that predicts: the one asked for, or ``auto``'s choice."""
        check_fitted(self, "state_")
        if self.state_["kind"] == "anchored":
            return self.state_["choice"] if self.state_["choice"] != "free" else self.state_["free"]["kind"]
        return self.state_["kind"]

    def calibration(self, level: float = 0.95) -> dict | None:
        """The anchor alone as a line, target = a + b·(computed energy) in the column's own
        unit, with ``level`` intervals, residual SD, n, the choice made and every candidate's
        inner scores; None when the stage is not anchored."""
        check_fitted(self, "state_")
        if self.state_["kind"] != "anchored":
            return None
        from .anchored import calibration

        j = self.state_["fixed"][0]
        out = calibration(self.state_, self.preprocessor_.mean[j], self.preprocessor_.scale[j], level)
        out.update(choice=self.state_["choice"], scores=self.state_["scores"],
                   column=self.preprocessor_.kept_columns[j])
        return out

    def loo_predictions(self, y) -> np.ndarray | None:
        """Exact leave-one-out predictions of the training targets, when available in closed
        form (ridge with its penalty held at the chosen value), else None."""
        r = loo_residuals(self.state_)
        return None if r is None else np.asarray(y, dtype=float) - r

    def as_dict(self) -> dict:
        check_fitted(self, "state_")
        state = {k: _plain(v) for k, v in self.state_.items() if not k.startswith("_") and k != "loo_residuals"}
        names = getattr(self, "feature_names_in_", None)
        return {"learner": self.learner, "random_state": self.random_state, "effort": self.effort, "n_train": self.n_train_,
                "anchor": self.anchor if not isinstance(self.anchor, np.integer) else int(self.anchor),
                "fixed": list(self.fixed),
                "feature_names": None if names is None else [str(c) for c in names],
                "preprocess": self.preprocessor_.as_dict(), "state": state}

    @classmethod
    def from_dict(cls, d: dict) -> "DescriptorRegressor":
        self = cls(learner=d["learner"], random_state=d.get("random_state", 0), effort=d.get("effort", "full"),
                   anchor=d.get("anchor"), fixed=tuple(d.get("fixed") or ()))
        self.preprocessor_ = Preprocessor.from_dict(d["preprocess"])
        self.n_features_in_ = len(self.preprocessor_.columns)
        names = d.get("feature_names")
        if names is not None:
            self.feature_names_in_ = np.asarray(names, dtype=object)
        self.state_ = dict(d["state"])
        self.n_train_ = int(d["n_train"])
        return self
