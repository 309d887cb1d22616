"""The barrier-from-reaction-energy stage as a scikit-learn regressor.

:class:`CurveRegressor` fits one relation (or picks one by leave-one-out, ``relation="auto"``)
to reaction energies X (kcal/mol, shape (n,) or (n, 1)) and barriers y (kcal/mol), and
predicts barriers with an uncertainty that adds three parts (METHOD §4): the propagated
reaction-energy uncertainty (local slope α times its standard deviation), the curve
parameters' covariance (through the Jacobian), and the curve's own residual scatter.
"""

from __future__ import annotations

import numpy as np

from ..estimators.base import RegressorProtocol, check_fitted, select_column
from ..relations import DEFAULT_RELATION, get_relation
from .compare import compare_relations
from .fit import check_pairs, fit_relation, loss_name
from .identifiability import assess_identifiability
from .records import CurveRecord, Identifiability
from .stats import predictive_variance
from .intervals import bootstrap_intervals, correlation_matrix, profile_intervals, t_quantile, wald_intervals

INTERVAL_METHODS = ("profile", "wald", "bootstrap", "none")


def energy_column(X) -> np.ndarray:
    """Reaction energies from X of shape (n,) or (n, 1), as a float vector."""
    a = np.asarray(X, dtype=float)
    if a.ndim == 2 and a.shape[1] == 1:
        a = a[:, 0]
    if a.ndim != 1:
        raise ValueError(f"expected reaction energies of shape (n,) or (n, 1), got {a.shape}; with more columns, "
                         f"name the reaction energy's with energy_column")
    return a


class CurveRegressor(RegressorProtocol):
    """Barrier (kcal/mol) from reaction energy (kcal/mol) through one fitted relation.

    Parameters
    ----------
    relation : str
        ``"asymptotic"`` (default), ``"linear"``, ``"marcus"``, ``"agmon_levine"``,
        ``"rehm_weller"``, ``"marcus_nowork"``, or ``"auto"`` (lowest exact leave-one-out
        RMSE among the five compared relations).
    loss : {"squared", "soft", "huber", "cauchy"}
        ``"squared"`` is least squares; the others are robust losses (soft-L1, Huber, Cauchy).
    f_scale : float, kcal/mol
        Residual scale of the robust loss.
    intervals : {"profile", "wald", "bootstrap", "none"}
        How parameter intervals are computed at ``level``; "none" skips them (fast, for
        use inside cross-validation loops).
    n_bootstrap : int
    level : float
        Coverage of the parameter intervals (default 0.95).
    random_state : int or None
        Seed of the bootstrap.
    energy_column : int, str or None
        Where X holds the reaction energy: None (X is the energies, shape (n,) or (n, 1)), a
        column position, or a DataFrame column name (the other columns are ignored: this lets
        the curve sit in a pipeline fed a whole table).

    Attributes
    ----------
    n_features_in_ : int
    feature_names_in_ : ndarray of str (when X was a DataFrame with string column names)
    relation_ : Relation
    params_ : ndarray (p,)
    cov_ : ndarray (p, p)
    sigma_ : float, kcal/mol — residual standard deviation
    dof_ : int
    ci_ : dict name → (low, high), or {} when intervals="none"
    ci_open_ : dict name → (low_open, high_open) for profile intervals
    correlation_ : ndarray (p, p)
    energy_range_ : (float, float), kcal/mol
    identifiability_ : Identifiability or None (asymptotic curve only)
    comparison_ : Comparison or None (relation="auto")
    """

    _poor_score = True   # one column of X is used: other columns' signal is not its business

    def __init__(self, relation: str = DEFAULT_RELATION, loss: str = "squared", f_scale: float = 1.0,
                 intervals: str = "profile", *, n_bootstrap: int = 1000, level: float = 0.95,
                 random_state: int | None = 0, energy_column=None):
        self.relation = relation
        self.loss = loss
        self.f_scale = f_scale
        self.intervals = intervals
        self.n_bootstrap = n_bootstrap
        self.level = level
        self.random_state = random_state
        self.energy_column = energy_column

    @property
    def _accepts_1d(self) -> bool:
        """Reaction energies may come as (n,) when X is the energies alone."""
        return self.energy_column is None

    def _energies(self, X, reset: bool) -> np.ndarray:
        A = self._validate_X(X, reset=reset)
        if self.energy_column is None:
            return energy_column(A)
        return A[:, select_column(A, self.energy_column, getattr(self, "feature_names_in_", None))]

    def fit(self, X, y):
        if self.intervals not in INTERVAL_METHODS:
            raise ValueError(f"unknown interval method {self.intervals!r}; valid choices: "
                             f"{', '.join(INTERVAL_METHODS)}")
        e = self._energies(X, reset=True)
        yv = self._validate_y(y, e.size)
        if e.size < 2:
            raise ValueError(f"{e.size} sample(s) (n_samples={e.size}): a curve needs at least 2 members")
        x, yv = check_pairs(e, yv, min_n=2)
        self.comparison_ = None
        name = self.relation
        if str(name).lower() == "auto":
            self.comparison_ = compare_relations(x, yv, loss=loss_name(self.loss))
            if self.comparison_.best is None:
                raise ValueError("no relation could be fitted to these data")
            name = self.comparison_.best
        relation = get_relation(name)
        fit = fit_relation(relation, x, yv, loss=loss_name(self.loss), f_scale=self.f_scale)
        self.relation_ = relation
        self.fit_ = fit
        self.params_ = fit.params
        self.cov_ = fit.cov
        self.sigma_ = fit.sigma
        self.dof_ = fit.dof
        self.n_train_ = int(x.size)
        self.energy_range_ = (float(np.min(x)), float(np.max(x)))
        self.correlation_ = correlation_matrix(fit.cov)
        self.ci_, self.ci_open_ = {}, {}
        profile = None
        method = self.intervals
        if method == "profile" and self.loss != "squared":
            method = "wald"  # profile-t assumes least squares
        if method == "profile":
            profile = profile_intervals(fit, x, yv, level=self.level)
            self.ci_ = {k: (iv.low, iv.high) for k, iv in profile.items()}
            self.ci_open_ = {k: (iv.low_open, iv.high_open) for k, iv in profile.items()}
        elif method == "wald":
            self.ci_ = wald_intervals(fit, self.level)
        elif method == "bootstrap":
            self.ci_ = bootstrap_intervals(fit, x, yv, self.level, n_boot=self.n_bootstrap, random_state=self.random_state)
        self.identifiability_ = None
        if relation.name == "asymptotic" and self.intervals != "none":
            self.identifiability_ = assess_identifiability(fit, x, yv, profile)
        return self

    # -- prediction -------------------------------------------------------------------------
    def predict(self, X, return_std: bool = False, energy_std=None):
        """Barrier (kcal/mol); with ``return_std`` also its predictive standard deviation."""
        check_fitted(self, "params_")
        x = self._energies(X, reset=False)
        mean = self.relation_.barrier(x, self.params_)
        if not return_std:
            return mean
        return mean, np.sqrt(self.barrier_variance(x, energy_std))

    def slope(self, energy) -> np.ndarray:
        """Local Leffler α at each reaction energy (kcal/mol; dimensionless result)."""
        check_fitted(self, "params_")
        return self.relation_.slope(energy_column(energy), self.params_)

    def barrier_variance(self, energy, energy_std=None) -> np.ndarray:
        """Predictive variance (kcal/mol)² at reaction energies ``energy`` (kcal/mol):
        (α·σ_E)² + J·Cov·Jᵀ + σ²_residual."""
        x = energy_column(energy)
        s = None if energy_std is None else np.broadcast_to(np.asarray(energy_std, dtype=float), x.shape)
        return predictive_variance(self.relation_.jacobian(x, self.params_), self.cov_, self.sigma_,
                                   self.relation_.slope(x, self.params_), energy_std=s)

    def interval_quantile(self, level: float) -> float:
        """Two-sided t quantile (dof of the curve fit) for a predictive interval."""
        return t_quantile(level, max(int(self.dof_), 1))

    def predict_interval(self, X, level: float = 0.90, energy_std=None):
        """(mean, low, high) of the barrier, kcal/mol, at coverage ``level``."""
        mean, std = self.predict(X, return_std=True, energy_std=energy_std)
        q = self.interval_quantile(level)
        return mean, mean - q * std, mean + q * std

    def reverse_params(self) -> dict[str, float]:
        """Parameters of the reverse-direction curve (asymptotic relation only)."""
        check_fitted(self, "params_")
        if self.relation_.name != "asymptotic":
            raise ValueError("the reverse-direction curve is defined for the asymptotic relation")
        return self.relation_.as_dict(self.relation_.reverse(self.params_))

    def params_dict(self) -> dict[str, float]:
        check_fitted(self, "params_")
        return self.relation_.as_dict(self.params_)

    def derived(self) -> dict[str, float]:
        check_fitted(self, "params_")
        return self.relation_.derived(self.params_)

    # -- persistence ----------------------------------------------------------------------
    def record(self) -> CurveRecord:
        """The fitted curve as a typed record (kcal/mol): everything needed to predict, and what
        a chemist reads off it."""
        check_fitted(self, "params_")
        asym = self.relation_.name == "asymptotic"
        return CurveRecord(
            relation=self.relation_.name, requested_relation=self.relation, loss=self.loss,
            params=self.params_dict(), theta=[float(v) for v in self.params_],
            cov=np.asarray(self.cov_, dtype=float).tolist(), sigma=float(self.sigma_), dof=int(self.dof_),
            n_train=int(self.n_train_), energy_range=list(self.energy_range_),
            correlation=np.asarray(self.correlation_, dtype=float).tolist(),
            ci95={k: [float(a), float(b)] for k, (a, b) in self.ci_.items()},
            ci95_open={k: [bool(a), bool(b)] for k, (a, b) in self.ci_open_.items()},
            derived=self.derived(), intervals=self.intervals, identifiability=self.identifiability_,
            reverse=self.reverse_params() if asym else None)

    def as_dict(self) -> dict:
        """:meth:`record` as plain data (the model file's curve)."""
        return self.record().as_dict()

    @classmethod
    def from_dict(cls, d: dict) -> "CurveRegressor":
        self = cls(relation=d.get("requested_relation", d["relation"]), loss=d.get("loss", "squared"),
                   intervals=d.get("intervals", "none"))
        self.relation_ = get_relation(d["relation"])
        self.n_features_in_ = 1
        self.params_ = np.asarray(d["theta"], dtype=float)
        self.cov_ = np.asarray(d["cov"], dtype=float)
        self.sigma_ = float(d["sigma"])
        self.dof_ = int(d["dof"])
        self.n_train_ = int(d["n_train"])
        self.energy_range_ = tuple(d["energy_range"])
        self.correlation_ = np.asarray(d["correlation"], dtype=float)
        self.ci_ = {k: tuple(v) for k, v in d.get("ci95", {}).items()}
        self.ci_open_ = {k: tuple(v) for k, v in d.get("ci95_open", {}).items()}
        ident = d.get("identifiability")
        self.identifiability_ = Identifiability.from_dict(ident) if ident else None
        self.fit_ = None
        self.comparison_ = None
        return self
