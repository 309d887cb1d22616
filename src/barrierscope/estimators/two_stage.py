"""The physics-constrained route: descriptors → reaction energy → barrier through a relation.

Stage 1 (:class:`DescriptorRegressor`) predicts the reaction energy Ê with its σ_E; stage 2
(:class:`~barrierscope.curves.regressor.CurveRegressor`, fitted on the members' true reaction energies)
maps it to a barrier. A member whose reaction energy is known (computed) skips stage 1.
Predictive variance (METHOD §4): (α(Ê)·σ_E)² + J·Cov·Jᵀ + s²_curve.

:class:`HybridRegressor` adds a learned correction of the two-stage residuals, trained on
out-of-fold residuals so the correction does not learn the energy stage's in-sample fit.
"""

from __future__ import annotations

import numpy as np
from sklearn.base import BaseEstimator
from sklearn.utils.validation import check_is_fitted

from ..curves.regressor import CurveRegressor
from .descriptor_regressor import DescriptorRegressor


def _known(energy, n: int) -> np.ndarray:
    if energy is None:
        return np.full(n, np.nan)
    e = np.asarray(energy, dtype=float).ravel()
    if e.size != n:
        raise ValueError(f"{e.size} reaction energies for {n} members")
    return e


class TwoStageRegressor(BaseEstimator):
    """Parameters
    ----------
    learner : str — the energy stage's learner
    relation : str — a relation name or "auto"
    curve_intervals : str — parameter intervals of the curve ("none" inside CV loops)
    random_state : int

    Attributes
    ----------
    energy_ : DescriptorRegressor or None (a curve-only model has no energy stage)
    curve_ : CurveRegressor
    """

    def __init__(self, learner: str = "ridge", relation: str = "asymptotic", curve_intervals: str = "none",
                 random_state: int = 0):
        self.learner = learner
        self.relation = relation
        self.curve_intervals = curve_intervals
        self.random_state = random_state

    def fit(self, X, barrier, energy):
        barrier = np.asarray(barrier, dtype=float).ravel()
        energy = np.asarray(energy, dtype=float).ravel()
        self.energy_ = None
        if X is not None and np.shape(X)[1] > 0:
            self.energy_ = DescriptorRegressor(self.learner, self.random_state).fit(X, energy)
        self.curve_ = CurveRegressor(self.relation, intervals=self.curve_intervals).fit(energy, barrier)
        return self

    def predict_parts(self, X, energy=None) -> dict:
        """Per member: energy (given or predicted), its σ, whether it was given, barrier, σ, α."""
        check_is_fitted(self, "curve_")
        n = len(X) if X is not None else len(energy)
        given = _known(energy, n)
        e = given.copy()
        e_std = np.zeros(n)
        need = ~np.isfinite(given)
        if need.any():
            if self.energy_ is None:
                raise ValueError("this model has no energy stage: every member needs a reaction energy")
            rows = np.flatnonzero(need)
            sub = X.iloc[rows] if hasattr(X, "iloc") else np.asarray(X)[rows]
            e[rows], e_std[rows] = self.energy_.predict(sub, return_std=True)
        barrier, b_std = self.curve_.predict(e, return_std=True, energy_std=e_std)
        return {"energy": e, "energy_std": e_std, "energy_given": ~need, "barrier": barrier,
                "barrier_std": b_std, "alpha": self.curve_.slope(e)}

    def predict(self, X, energy=None, return_std: bool = False):
        parts = self.predict_parts(X, energy)
        return (parts["barrier"], parts["barrier_std"]) if return_std else parts["barrier"]


def out_of_fold_energy(X, energy, learner: str, random_state: int = 0) -> np.ndarray:
    """Energy-stage predictions for training members from fits that did not see them:
    exact leave-one-out for ridge, 5-fold cross-validation otherwise."""
    reg = DescriptorRegressor(learner, random_state).fit(X, energy)
    loo = reg.loo_predictions(energy)
    if loo is not None:
        return loo
    from sklearn.model_selection import KFold

    energy = np.asarray(energy, dtype=float)
    out = np.empty(energy.size)
    for tr, te in KFold(n_splits=min(5, energy.size), shuffle=True, random_state=random_state).split(energy):
        sub = DescriptorRegressor(learner, random_state).fit(X.iloc[tr] if hasattr(X, "iloc") else X[tr], energy[tr])
        out[te] = sub.predict(X.iloc[te] if hasattr(X, "iloc") else X[te])
    return out


class HybridRegressor(BaseEstimator):
    """Two-stage prediction plus a correction of its residuals learned from the descriptors.

    Members whose reaction energy is given get the plain two-stage barrier: the correction
    was learned on residuals that include the energy stage's error, which they do not have.
    """

    def __init__(self, learner: str = "ridge", relation: str = "asymptotic", random_state: int = 0):
        self.learner = learner
        self.relation = relation
        self.random_state = random_state

    def fit(self, X, barrier, energy, two_stage: TwoStageRegressor | None = None):
        from ..curves.batch import refit_weighted

        barrier = np.asarray(barrier, dtype=float).ravel()
        energy = np.asarray(energy, dtype=float).ravel()
        self.two_stage_ = two_stage if two_stage is not None else TwoStageRegressor(
            self.learner, self.relation, random_state=self.random_state).fit(X, barrier, energy)
        e_oof = out_of_fold_energy(X, energy, self.learner, self.random_state)
        curve = self.two_stage_.curve_
        thetas = refit_weighted(curve.relation_, energy, barrier, 1.0 - np.eye(energy.size), curve.params_)
        b_oof = np.array([curve.relation_.barrier(e_oof[i:i + 1], thetas[i])[0] for i in range(energy.size)])
        self.oof_residuals_ = barrier - b_oof
        self.correction_ = DescriptorRegressor(self.learner, self.random_state).fit(X, self.oof_residuals_)
        return self

    def predict_parts(self, X, energy=None) -> dict:
        check_is_fitted(self, "correction_")
        parts = self.two_stage_.predict_parts(X, energy)
        corr, corr_std = self.correction_.predict(X, return_std=True)
        given = parts["energy_given"]
        parts = dict(parts)
        parts["barrier"] = np.where(given, parts["barrier"], parts["barrier"] + corr)
        parts["barrier_std"] = np.where(given, parts["barrier_std"], corr_std)
        return parts

    def predict(self, X, energy=None, return_std: bool = False):
        parts = self.predict_parts(X, energy)
        return (parts["barrier"], parts["barrier_std"]) if return_std else parts["barrier"]
