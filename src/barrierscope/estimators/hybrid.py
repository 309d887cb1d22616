"""The hybrid route: the two-stage prediction plus a learned correction of its residuals.

The correction is trained on out-of-fold residuals — each member's barrier minus the
two-stage prediction from a curve and an energy stage that did not see it — so it learns
what the chain misses for a new member, not the energy stage's in-sample fit. Members whose
reaction energy is given get the plain curve: the correction was learned on residuals that
include the energy stage's error, which they do not have.
"""

from __future__ import annotations

import numpy as np

from .base import RegressorProtocol, check_fitted
from ..curves.batch import refit_weighted
from .descriptor_regressor import DescriptorRegressor
from .two_stage import EnergyRouteMixin, TwoStageRegressor, rows


def correction_learner(learner: str) -> str:
    """The learner of the hybrid's correction: the energy stage's, or ridge when that is
    ``auto`` (the correction is a small residual; choosing its learner too would double the
    cost of every validation split for a route judged on the same footing as the others)."""
    return "ridge" if learner == "auto" else learner


def out_of_fold_energy(X, energy, learner: str, random_state: int = 0, *, fitted: DescriptorRegressor | None = None,
                       anchor=None, fixed=()):
    """Energy-stage predictions for training members from fits that did not see them:
    exact leave-one-out for ridge (closed form), 5-fold cross-validation otherwise.
    ``fitted`` is the energy stage already fitted on (X, energy), when there is one."""
    energy = np.asarray(energy, dtype=float)
    reg = fitted if fitted is not None else DescriptorRegressor(learner, random_state, anchor=anchor,
                                                                 fixed=fixed).fit(X, energy)
    loo = reg.loo_predictions(energy)
    if loo is not None:  # closed form (ridge, GP) or out-of-bag (forest: a member in every tree's sample has none)
        missing = ~np.isfinite(loo)
        return np.where(missing, reg.predict(X) if missing.any() else loo, loo)
    from sklearn.model_selection import KFold

    out = np.empty(energy.size)
    for tr, te in KFold(n_splits=min(5, energy.size), shuffle=True, random_state=random_state).split(energy):
        out[te] = DescriptorRegressor(learner, random_state, anchor=reg.anchor, fixed=reg.fixed).fit(
            rows(X, tr), energy[tr]).predict(rows(X, te))
    return out


def out_of_fold_barrier(curve, energy, barrier, energy_oof, random_state: int = 0) -> np.ndarray:
    """Each member's barrier from the curve refitted without it (without its fold, above
    ``LOO_MAX`` members; warm-started at the full fit, which never saw the member a caller
    holds out), fed its out-of-fold energy."""
    from ..validation.splits import held_out_sets

    energy = np.asarray(energy, dtype=float)
    held = held_out_sets(energy.size, random_state)
    w = np.ones((len(held), energy.size))
    for r, h in enumerate(held):
        w[r, h] = 0.0
    thetas = refit_weighted(curve.relation_, energy, barrier, w, theta0=curve.params_,
                            bounds=curve.relation_.bounds(energy, barrier))
    member_theta = np.empty((energy.size, thetas.shape[1]))
    for r, h in enumerate(held):
        member_theta[h] = thetas[r]
    return curve.relation_.barrier(np.asarray(energy_oof, dtype=float)[:, None], member_theta)[:, 0]


class HybridRegressor(EnergyRouteMixin, RegressorProtocol):
    """Two-stage barrier (kcal/mol) plus a correction of its residuals from the descriptors.

    Parameters
    ----------
    learner : str — the learner of the energy stage and of the correction
    relation : str — the relation of the two-stage part
    random_state : int
    energy_column : int, str or None — as for :class:`TwoStageRegressor`
    anchor, fixed — the energy stage's anchor, as for :class:`TwoStageRegressor` (the
        correction is not anchored: it learns residuals of the barrier)

    Attributes
    ----------
    n_features_in_ : int
    feature_names_in_ : ndarray of str (when X was a DataFrame with string column names)
    two_stage_ : TwoStageRegressor
    correction_ : DescriptorRegressor
    oof_residuals_ : ndarray (n,) — the residuals the correction was trained on, kcal/mol
    """

    _allows_nan = True
    _poor_score = True   # one column of X (the energy) carries the curve's part

    def __init__(self, learner: str = "ridge", relation: str = "asymptotic", random_state: int = 0,
                 energy_column=None, *, anchor=None, fixed=()):
        self.learner = learner
        self.relation = relation
        self.random_state = random_state
        self.energy_column = energy_column
        self.anchor = anchor
        self.fixed = fixed

    def fit(self, X, y, energy=None):
        """X (n, p) descriptors, y (n,) barriers and ``energy`` (n,) reaction energies, kcal/mol
        (or, with ``energy_column``, X's column holding them)."""
        if energy is None and self.energy_column is None:
            raise ValueError("HybridRegressor.fit needs the members' reaction energies: fit(X, y, energy=E), or "
                             "energy_column naming X's column that holds them")
        D, energy = self._inputs(X, energy, reset=True)
        if D is None:
            raise ValueError(f"X has {self.n_features_in_} feature(s), the reaction energy's column alone: the hybrid "
                             f"route needs descriptors to learn its correction from")
        barrier = self._validate_y(y, energy.size)
        self.two_stage_ = TwoStageRegressor(self.learner, self.relation, random_state=self.random_state,
                                            anchor=self.anchor, fixed=self.fixed).fit(D, barrier, energy)
        e_oof = out_of_fold_energy(D, energy, self.learner, self.random_state, fitted=self.two_stage_.energy_)
        self.oof_residuals_ = barrier - out_of_fold_barrier(self.two_stage_.curve_, energy, barrier, e_oof,
                                                            self.random_state)
        self.correction_ = DescriptorRegressor(correction_learner(self.learner), self.random_state).fit(
            D, self.oof_residuals_)
        return self

    def predict_parts(self, X, energy=None, two_stage_parts: dict | None = None) -> dict:
        """As :meth:`TwoStageRegressor.predict_parts`, the barrier corrected; ``two_stage_parts``
        (this model's two-stage parts for the same rows, when the caller has them) saves a pass."""
        check_fitted(self, "correction_")
        D, given = self._inputs(X, energy, reset=False)
        parts = dict(two_stage_parts if two_stage_parts is not None else self.two_stage_.predict_parts(D, given))
        corr, corr_std = self.correction_.predict(D, return_std=True)
        given = parts["energy_given"]
        parts["barrier"] = np.where(given, parts["barrier"], parts["barrier"] + corr)
        parts["barrier_std"] = np.where(given, parts["barrier_std"], corr_std)
        return parts

    def predict(self, X, energy=None, return_std: bool = False):
        parts = self.predict_parts(X, energy)
        return (parts["barrier"], parts["barrier_std"]) if return_std else parts["barrier"]

    def as_dict(self) -> dict:
        check_fitted(self, "correction_")
        names = getattr(self, "feature_names_in_", None)
        return {"params": self.get_params(), "n_features_in": self.n_features_in_,
                "feature_names": None if names is None else [str(c) for c in names],
                "two_stage": self.two_stage_.as_dict(), "correction": self.correction_.as_dict()}

    @classmethod
    def from_dict(cls, d: dict) -> "HybridRegressor":
        self = cls(**d["params"])
        self.two_stage_ = TwoStageRegressor.from_dict(d["two_stage"])
        self.n_features_in_ = int(d.get("n_features_in", self.two_stage_.n_features_in_))
        if d.get("feature_names") is not None:
            self.feature_names_in_ = np.asarray(d["feature_names"], dtype=object)
        self.correction_ = DescriptorRegressor.from_dict(d["correction"])
        self.oof_residuals_ = None
        return self
