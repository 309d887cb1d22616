"""The physics-constrained route: descriptors → reaction energy → barrier through a relation.

Stage 1 (:class:`DescriptorRegressor`) predicts the reaction energy Ê with its σ_E; stage 2
(:class:`~barrierscope.curves.regressor.CurveRegressor`, fitted on the members' true
reaction energies) maps it to a barrier. A member whose reaction energy is known (computed)
skips stage 1. Predictive variance (METHOD §4): (α(Ê)·σ_E)² + J·Cov·Jᵀ + s²_curve.

Composes with scikit-learn: ``cross_val_score(TwoStageRegressor(), X, barrier,
params={"energy": E})`` refits both stages inside every fold (``energy`` is sliced with the
rows) and scores by R² of the barrier predicted from descriptors alone.
"""

from __future__ import annotations

import numpy as np

from .base import RegressorProtocol, check_fitted, select_column
from ..curves.regressor import CurveRegressor
from .descriptor_regressor import DescriptorRegressor
from .ridge import GUARD_FLAG


#: A predicted reaction energy is clipped to the training span widened by this share of the span
#: on each side (and flagged): the second half of the energy stage's guard (see :mod:`.ridge`).
ENERGY_MARGIN = 0.25


def clip_energy(energy, lo: float, hi: float, *, exempt=None) -> tuple[np.ndarray, np.ndarray]:
    """(energies clipped to [lo − m·span, hi + m·span], mask of those clipped), kcal/mol.
    ``exempt``: rows left as they are (predicted through an anchored computed energy, which
    is meant to carry the stage beyond the members)."""
    e = np.asarray(energy, dtype=float)
    pad = ENERGY_MARGIN * (hi - lo)
    out = np.clip(e, lo - pad, hi + pad)
    if exempt is not None:
        out = np.where(exempt, e, out)
    return out, out != e


def known_energies(energy, n: int) -> np.ndarray:
    """Reaction energies (kcal/mol) as a float vector of length n; NaN where unknown."""
    if energy is None:
        return np.full(n, np.nan)
    e = np.asarray(energy, dtype=float).ravel()
    if e.size != n:
        raise ValueError(f"{e.size} reaction energies for {n} members")
    return e


def n_rows(X, energy=None) -> int:
    if X is not None:
        return len(X)
    if energy is None:
        raise ValueError("give descriptors X, reaction energies, or both")
    return int(np.size(energy))


def rows(X, idx):
    """Rows ``idx`` of a DataFrame or an array."""
    return X.iloc[idx] if hasattr(X, "iloc") else np.asarray(X)[idx]


class EnergyRouteMixin:
    """How the energy-aware estimators (two-stage, hybrid) read their input: descriptors X and
    the members' reaction energies, either passed as ``energy`` or held in X's column
    ``energy_column`` (NaN there, at predict, means "unknown: predict it")."""

    @property
    def _min_features(self) -> int:
        return 0 if self.energy_column is None else 1

    def _inputs(self, X, energy, *, reset: bool):
        """(descriptors for the energy stage — the caller's DataFrame or an array, None when
        there are none —, reaction energies (n,) kcal/mol with NaN where unknown)."""
        if self.energy_column is None:
            if X is not None and np.ndim(X) == 2 and np.shape(X)[1] > 0:
                self._validate_X(X, reset=reset)
            elif reset:
                self.n_features_in_ = 0 if X is None else int(np.shape(X)[1])
            n = n_rows(X, energy)
            return (X if X is not None and np.shape(X)[1] > 0 else None), known_energies(energy, n)
        if energy is not None:
            raise ValueError(f"the reaction energies are X's column {self.energy_column!r}: do not pass energy= too")
        A = self._validate_X(X, reset=reset)
        names = getattr(self, "feature_names_in_", None)
        j = select_column(A, self.energy_column, names)
        D = np.delete(A, j, axis=1)
        if D.shape[1] == 0:
            return None, A[:, j]
        if names is not None:
            import pandas as pd

            D = pd.DataFrame(D, columns=[str(c) for k, c in enumerate(names) if k != j])
        return D, A[:, j]


class TwoStageRegressor(EnergyRouteMixin, RegressorProtocol):
    """Barrier (kcal/mol) from descriptors through the reaction energy.

    Parameters
    ----------
    learner : {"ridge", "pls", "gp", "forest"}
        The energy stage's learner.
    relation : str
        A relation name (``"asymptotic"`` by default) or ``"auto"``.
    curve_intervals : {"none", "profile", "wald", "bootstrap"}
        Parameter intervals of the curve ("none" is fast, for use inside validation loops).
    random_state : int
    anchor, fixed : str or None, tuple of str
        The energy stage's anchor: a column of D holding a computed reaction energy, fitted
        unpenalised (see :class:`DescriptorRegressor`); ``fixed`` further unpenalised columns.
        Energies predicted through the anchor are not clipped to the training span: following
        the computed energy beyond the members is the anchor's purpose.
    energy_column : int, str or None
        None: the reaction energies are passed as ``fit(X, y, energy=E)`` (required) and
        ``predict(X, energy=E)`` (optional: NaN or None means "predict it"). A column position
        or DataFrame name: X holds them there (a computed energy where known, NaN elsewhere at
        predict), so the estimator works in a pipeline or ``cross_val_score`` fed one table.

    Attributes
    ----------
    energy_ : DescriptorRegressor or None — None when there are no descriptors (a curve-only model)
    curve_ : CurveRegressor
    n_features_in_ : int — columns of X (the energy column included)
    feature_names_in_ : ndarray of str (when X was a DataFrame with string column names)
    """

    _allows_nan = True   # descriptors may be missing (imputed in fit)
    _poor_score = True   # the barrier follows one column of X through the curve

    def __init__(self, learner: str = "ridge", relation: str = "asymptotic", curve_intervals: str = "none",
                 random_state: int = 0, *, energy_column=None, anchor=None, fixed=()):
        self.learner = learner
        self.relation = relation
        self.curve_intervals = curve_intervals
        self.random_state = random_state
        self.energy_column = energy_column
        self.anchor = anchor
        self.fixed = fixed

    def fit(self, X, y, energy=None):
        """Fit both stages.

        X : DataFrame or array (n, p) of descriptors (p may be 0 or X None: a curve-only model)
        y : array (n,), barriers in kcal/mol
        energy : array (n,), the members' reaction energies in kcal/mol (required unless
            ``energy_column`` names X's column that holds them)
        """
        if energy is None and self.energy_column is None:
            raise ValueError("TwoStageRegressor.fit needs the members' reaction energies: fit(X, y, energy=E), or "
                             "energy_column naming X's column that holds them")
        D, energy = self._inputs(X, energy, reset=True)
        barrier = self._validate_y(y, energy.size)
        if not np.all(np.isfinite(energy)):
            raise ValueError("every training member needs a finite reaction energy")
        self.energy_ = (DescriptorRegressor(self.learner, self.random_state, anchor=self.anchor, fixed=self.fixed)
                        .fit(D, energy) if D is not None else None)
        self.curve_ = CurveRegressor(self.relation, intervals=self.curve_intervals).fit(energy, barrier)
        return self

    def predict_parts(self, X, energy=None) -> dict:
        """Per member (kcal/mol): energy (given or predicted), its σ, whether it was given,
        barrier, its σ, the local Leffler α, and the guard's flags: ``off_manifold`` (a
        descriptor combination unlike the members': the guard moved the predicted energy by
        more than the stage's residual standard deviation) and ``energy_clipped``
        (a predicted energy beyond the training span plus :data:`ENERGY_MARGIN`)."""
        check_fitted(self, "curve_")
        D, given = self._inputs(X, energy, reset=False)
        n = given.size
        e = given.copy()
        e_std = np.zeros(n)
        off, clipped = np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
        need = ~np.isfinite(given)
        Z = None
        if self.energy_ is not None and D is not None:
            # Every row is described once (the domain needs the descriptors of given-energy rows too).
            detail = self.energy_.predict_detail(D)
            Z = detail["Z"]
            e[need], e_std[need] = detail["mean"][need], detail["std"][need]
            e[need], clipped[need] = clip_energy(e[need], *self.curve_.energy_range_,
                                                 exempt=self.energy_.anchored_rows(D)[need])
            off[need] = detail["excess"][need] > GUARD_FLAG
        elif need.any():
            raise ValueError("this model has no energy stage: every member needs a reaction energy")
        barrier, b_std = self.curve_.predict(e, return_std=True, energy_std=e_std)
        return {"energy": e, "energy_std": e_std, "energy_given": ~need, "barrier": barrier,
                "barrier_std": b_std, "alpha": self.curve_.slope(e), "off_manifold": off, "energy_clipped": clipped,
                "Z": Z}

    def predict(self, X, energy=None, return_std: bool = False):
        """Barriers (kcal/mol); reaction energies given in ``energy`` (or X's energy column) skip
        the energy stage."""
        parts = self.predict_parts(X, energy)
        return (parts["barrier"], parts["barrier_std"]) if return_std else parts["barrier"]

    # -- persistence (plain numbers; see barrierscope.io.modelfile) ------------------------
    def as_dict(self) -> dict:
        check_fitted(self, "curve_")
        names = getattr(self, "feature_names_in_", None)
        return {"params": self.get_params(), "n_features_in": self.n_features_in_,
                "feature_names": None if names is None else [str(c) for c in names],
                "energy_stage": None if self.energy_ is None else self.energy_.as_dict(),
                "curve": self.curve_.as_dict()}

    @classmethod
    def from_dict(cls, d: dict) -> "TwoStageRegressor":
        self = cls(**d["params"])
        self.n_features_in_ = int(d["n_features_in"])
        if d.get("feature_names") is not None:
            self.feature_names_in_ = np.asarray(d["feature_names"], dtype=object)
        self.energy_ = DescriptorRegressor.from_dict(d["energy_stage"]) if d.get("energy_stage") else None
        self.curve_ = CurveRegressor.from_dict(d["curve"])
        return self
