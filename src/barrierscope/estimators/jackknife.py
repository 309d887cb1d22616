"""Jackknife+ and CV+ prediction intervals for one route (R. F. Barber, E. J. Candès,
A. Ramdas, R. J. Tibshirani, Ann. Statist. 2021, 49, 486).

The route is refitted without each member (jackknife+; for families above
:data:`MAX_JACKKNIFE` members, without each of :data:`CV_FOLDS` folds: CV+). For a new member
x, with R_i = |y_i − μ₋ᵢ(x_i)| the held-out residuals of the training members:

    low  = the ⌊α(n+1)⌋-th smallest of μ₋ᵢ(x) − R_i
    high = the ⌈(1−α)(n+1)⌉-th smallest of μ₋ᵢ(x) + R_i      (α = 1 − level)

Barber et al. prove coverage ≥ 1 − 2α for any fitting procedure and exchangeable members
(CV+: ≥ 1 − 2α − √(2/n) roughly), and about 1 − α in practice; unlike the model's own
intervals the width comes from the family's held-out errors, not from the model's
assumptions. With too few members for the rank (n < 1/α − 1) an end is infinite.

Members whose reaction energy is given go through the folds' curves, with the residuals of
the curve fed each member's own reaction energy (the computed-energy path has its own
error). Energies in kcal/mol.
"""

from __future__ import annotations

import math

import numpy as np

from .base import check_fitted
from .two_stage import known_energies, n_rows, rows

#: Families up to this size refit once per member (jackknife+); larger ones use CV+.
MAX_JACKKNIFE = 40
CV_FOLDS = 10


def folds(n: int, random_state: int = 0) -> list[np.ndarray]:
    """Held-out index sets: one member each for n ≤ MAX_JACKKNIFE, else CV_FOLDS shuffled folds."""
    from ..validation.splits import held_out_sets

    return held_out_sets(n, random_state, single_up_to=MAX_JACKKNIFE, k=CV_FOLDS)


def conformal_bounds(mu, resid, level: float) -> tuple[np.ndarray, np.ndarray]:
    """Jackknife+ ends from ``mu`` (m, n): each training member's fold model predicting the m
    new members, and ``resid`` (n,): the members' held-out |residuals|."""
    mu = np.atleast_2d(np.asarray(mu, dtype=float))
    r = np.asarray(resid, dtype=float)
    n = r.size
    alpha = 1.0 - level
    # The tolerance keeps 1 − 0.9 = 0.0999… from losing a rank: ⌊0.1 · 10⌋ is 1.
    k_lo, k_hi = math.floor(alpha * (n + 1) + 1e-9), math.ceil((1.0 - alpha) * (n + 1) - 1e-9)
    low = np.sort(mu - r, axis=1)[:, k_lo - 1] if k_lo >= 1 else np.full(mu.shape[0], -np.inf)
    high = np.sort(mu + r, axis=1)[:, k_hi - 1] if k_hi <= n else np.full(mu.shape[0], np.inf)
    return low, high


def route_estimator(route: str, learner: str, relation: str, random_state: int, *, anchor=None, fixed=()):
    from .descriptor_regressor import DescriptorRegressor
    from .hybrid import HybridRegressor
    from .two_stage import TwoStageRegressor

    a = dict(anchor=anchor, fixed=fixed)
    if route == "two_stage":
        return TwoStageRegressor(learner, relation, random_state=random_state, **a)
    if route == "hybrid":
        return HybridRegressor(learner, relation, random_state, **a)
    if route == "direct":
        return DescriptorRegressor(learner, random_state, **a)
    if route == "structure_curve":
        from .structure_route import StructureRouteRegressor

        return StructureRouteRegressor(learner, relation, random_state, **a)
    raise ValueError(f"no jackknife+ intervals for the route {route!r}")


def _load(route: str, d: dict):
    from .descriptor_regressor import DescriptorRegressor
    from .hybrid import HybridRegressor
    from .two_stage import TwoStageRegressor

    from .structure_route import StructureRouteRegressor

    return {"two_stage": TwoStageRegressor, "hybrid": HybridRegressor, "direct": DescriptorRegressor,
            "structure_curve": StructureRouteRegressor}[route].from_dict(d)


class JackknifePlus:
    """Jackknife+ (CV+) intervals of one route's barrier, kcal/mol.

    Parameters
    ----------
    route : {"two_stage", "hybrid", "direct", "structure_curve"}
    learner, relation, random_state, anchor, fixed : as the route's estimator
    level : float — nominal coverage (0.90)

    Attributes
    ----------
    folds_ : list of index arrays — who each fold model did not see
    models_ : list of fitted route estimators, one per fold
    resid_ : ndarray (n,) — |barrier − the fold model's prediction from descriptors|
    curve_resid_ : ndarray (n,) — |barrier − the fold curve fed the member's own energy|
    """

    def __init__(self, route: str = "two_stage", learner: str = "ridge", relation: str = "asymptotic",
                 level: float = 0.90, *, random_state: int = 0, anchor=None, fixed=()):
        self.route = route
        self.learner = learner
        self.relation = relation
        self.level = level
        self.random_state = random_state
        self.anchor = anchor
        self.fixed = fixed

    def fit(self, X, y, energy=None):
        """X (n, p) descriptors, y (n,) barriers, ``energy`` (n,) reaction energies, kcal/mol."""
        y = np.asarray(y, dtype=float).ravel()
        n = y.size
        self.folds_ = folds(n, self.random_state)
        self.models_, self.resid_, self.curve_resid_ = [], np.empty(n), np.full(n, np.nan)
        for held in self.folds_:
            keep = np.setdiff1d(np.arange(n), held)
            est = route_estimator(self.route, self.learner, self.relation, self.random_state, anchor=self.anchor,
                                  fixed=self.fixed)
            if self.route == "direct":
                est.fit(rows(X, keep), y[keep])
            else:
                e = np.asarray(energy, dtype=float)
                est.fit(None if X is None else rows(X, keep), y[keep], energy=e[keep])
                self.curve_resid_[held] = np.abs(y[held] - self._given(est, None if X is None else rows(X, held),
                                                                       e[held]))
            # A curve-only model predicts every member from its given reaction energy.
            self.resid_[held] = (self.curve_resid_[held] if X is None
                                 else np.abs(y[held] - est.predict(rows(X, held))))
            self.models_.append(est)
        return self

    def _given(self, est, X, energy) -> np.ndarray:
        """A fold model's barrier at given reaction energies: its curve (the structure curve
        route: its member-specific curve, which needs the members' descriptors)."""
        if self.route == "structure_curve":
            return est.predict(X, energy=energy)
        return (est.two_stage_.curve_ if self.route == "hybrid" else est.curve_).predict(energy)

    def _fold_of(self) -> np.ndarray:
        owner = np.empty(sum(f.size for f in self.folds_), dtype=int)
        for k, f in enumerate(self.folds_):
            owner[f] = k
        return owner

    def interval(self, X, energy=None) -> tuple[np.ndarray, np.ndarray]:
        """(low, high) for new members; rows with a given reaction energy use the curve path."""
        check_fitted(self, "models_")
        m = n_rows(X, energy)
        given = np.isfinite(known_energies(energy, m))
        owner = self._fold_of()
        low, high = np.full(m, np.nan), np.full(m, np.nan)
        if (~given).any():
            sub = None if X is None else rows(X, np.flatnonzero(~given))
            mu = np.column_stack([est.predict(sub) for est in self.models_])[:, owner]
            low[~given], high[~given] = conformal_bounds(mu, self.resid_, self.level)
        if given.any() and self.route != "direct":
            e = np.asarray(energy, dtype=float)[given]
            sub = None if X is None else rows(X, np.flatnonzero(given))
            mu = np.column_stack([self._given(est, sub, e) for est in self.models_])[:, owner]
            low[given], high[given] = conformal_bounds(mu, self.curve_resid_, self.level)
        return low, high

    @property
    def method(self) -> str:
        return "jackknife+" if all(f.size == 1 for f in self.folds_) else f"cv+ ({len(self.folds_)} folds)"

    def as_dict(self) -> dict:
        check_fitted(self, "models_")
        return {"route": self.route, "learner": self.learner, "relation": self.relation, "level": self.level,
                "random_state": self.random_state, "method": self.method, "anchor": self.anchor,
                "fixed": list(self.fixed),
                "folds": [f.tolist() for f in self.folds_], "models": [m.as_dict() for m in self.models_],
                "resid": self.resid_.tolist(), "curve_resid": self.curve_resid_.tolist()}

    @classmethod
    def from_dict(cls, d: dict) -> "JackknifePlus":
        self = cls(d["route"], d["learner"], d["relation"], float(d["level"]), random_state=int(d["random_state"]),
                   anchor=d.get("anchor"), fixed=tuple(d.get("fixed") or ()))
        self.folds_ = [np.asarray(f, dtype=int) for f in d["folds"]]
        self.models_ = [_load(self.route, m) for m in d["models"]]
        self.resid_ = np.asarray(d["resid"], dtype=float)
        self.curve_resid_ = np.asarray([np.nan if v is None else v for v in d["curve_resid"]], dtype=float)
        return self
