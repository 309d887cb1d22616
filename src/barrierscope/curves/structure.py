"""A barrier curve whose intrinsic barrier moves with structure.

Within one family the barrier follows the reaction energy through a relation, but centres of
different kinds carry their own intrinsic barriers (C. F. Bernasconi, Acc. Chem. Res. 1987,
20, 301: resonance that lags behind bond changes raises the intrinsic barrier; polar effects
in the transition state lower it). Here the relation's intrinsic-barrier parameters are linear
in standardised descriptors z of each member,

    θ_i = θ0 + B·z_i   (for the moving parameters: the asymptotic curve's floor and midpoint,
                        Marcus's λ, the intrinsic barrier G0 of the one-parameter relations),

and the barrier is still the relation's: barrier_i = f(reaction energy_i; θ_i). So the curve
stays physics — downhill it levels to each member's own floor, uphill it runs parallel to the
reaction energy — while Leffler α changes with structure. θ0 and B are fitted together by
penalised least squares (ridge on B: A. E. Hoerl, R. W. Kennard, Technometrics 1970, 12, 55)
with the analytic Jacobian; the penalty is chosen by approximate leave-one-out at the
solution (the linearised hat matrix: the leverage rule of penalised regression, e.g. T.
Hastie, R. Tibshirani, J. Friedman, *The Elements of Statistical Learning*, 2nd ed., 2009,
§7.10), so it is chosen afresh in every validation split. Energies in kcal/mol.

Which descriptors: the reaction-centre columns (the ``centre`` tier) when there are any, the
question being where the reaction happens; otherwise every descriptor. When those exceed
:data:`MAX_FEATURES` (or a quarter of the members) they are reduced to their leading principal
components, and the effects are reported back on the descriptors (kcal/mol per standard
deviation of each descriptor).
"""

from __future__ import annotations

import numpy as np

from ..estimators.preprocess import Preprocessor
from ..relations import get_relation
from .fit import fit_relation
from .intervals import t_quantile

#: Which parameters move with structure, per relation (the intrinsic barrier and, for the
#: asymptotic curve, the asymmetry that sets Leffler α at a given reaction energy).
MOVING = {"asymptotic": ("floor", "midpoint"), "marcus": ("lambda",), "marcus_nowork": ("lambda",),
          "linear": ("intercept",), "agmon_levine": ("g0",), "rehm_weller": ("g0",), "blowers_masel": ("e0",)}
#: Penalties tried (dimensionless: squared kcal/mol of misfit per squared kcal/mol of effect);
#: decades: the choice is approximate by nature, and each one tried costs a solve per split.
PENALTIES = (0.01, 0.1, 1.0, 10.0, 100.0)
MAX_FEATURES = 6


def is_centre_column(name: str) -> bool:
    n = str(name)
    return n.startswith("centre") or "_centre_" in n


def structure_relation(relation) -> str:
    """The relation a structure curve uses: the curve's own when it has a moving form."""
    name = getattr(relation, "name", relation)
    return name if name in MOVING else "asymptotic"


def fit_beside(curve, X, energy, barrier) -> "StructureCurve":
    """The structure curve of a fitted plain curve (a CurveRegressor): its relation (or the
    asymptotic curve when it has no moving form), started from its parameters."""
    return StructureCurve(structure_relation(curve.relation_)).fit(X, energy, barrier, theta_start=curve.params_)


def basis(A: np.ndarray, names: list[str], n: int, max_features: int = None):
    """(Preprocessor, components or None) fitted on the training members' descriptors A
    (n_train, d): imputed and standardised, reduced to the leading principal components when
    there are more than ``max_features`` or a quarter of the members."""
    pre = Preprocessor.fit(A, names)
    S = pre.transform(A)
    q = min(int(max_features or MAX_FEATURES), max(1, n // 4), S.shape[1])
    if S.shape[1] > q:
        _, _, Vt = np.linalg.svd(S - S.mean(axis=0), full_matrices=False)
        return pre, Vt[:q]
    return pre, None


def project(pre, components, A: np.ndarray) -> np.ndarray:
    """Rows A (raw descriptors) in a basis from :func:`basis` (n, q)."""
    S = pre.transform(A)
    return S if components is None else S @ np.asarray(components).T


def select(X) -> tuple[np.ndarray, list[str]]:
    """The descriptors a structure curve uses: the centre tier's columns when there are any,
    else every one (raw values, n × d, and their names)."""
    names = [str(c) for c in X.columns] if hasattr(X, "columns") else [f"x{j}" for j in range(np.shape(X)[1])]
    A = X.to_numpy(dtype=float) if hasattr(X, "to_numpy") else np.asarray(X, dtype=float)
    centre = [j for j, c in enumerate(names) if is_centre_column(c)]
    cols = centre if centre else list(range(len(names)))
    return A[:, cols], [names[j] for j in cols]


class StructureCurve:
    """Relation ``relation`` with its intrinsic-barrier parameters linear in the descriptors.

    Parameters
    ----------
    relation : str
        A relation with an entry in :data:`MOVING`.
    penalties : tuple of float
        Ridge penalties tried on B; the one with the lowest approximate leave-one-out error wins.
    max_features : int
        Descriptors beyond this many are reduced to their leading principal components.

    Attributes (after ``fit``): ``theta0_`` (p,), ``coef_`` (k moving, q features), ``penalty_``,
    ``loo_rmse_`` (kcal/mol), ``sigma_`` (kcal/mol), ``dof_``, ``features_`` (the descriptors
    used), ``components_`` (q, len(features_)) or None, ``preprocessor_``, ``cov_``.
    """

    def __init__(self, relation: str = "asymptotic", penalties=PENALTIES, max_features: int = MAX_FEATURES):
        self.relation = relation
        self.penalties = penalties
        self.max_features = max_features

    # -- features -------------------------------------------------------------------------
    def _z(self, X) -> np.ndarray:
        cols = self.preprocessor_.columns
        if hasattr(X, "columns") and all(c in X.columns for c in cols):
            A = X[list(cols)].to_numpy(dtype=float)
        else:
            A = select(X)[0]
        return project(self.preprocessor_, self.components_, A)

    # -- fitting --------------------------------------------------------------------------
    def fit(self, X, energy, barrier, theta_start=None):
        """Fit on descriptors X (n, d; DataFrame or array), reaction energies and barriers (n,),
        kcal/mol. ``theta_start``: the plain curve's parameters, to start from (optional)."""
        from .structure_solve import solve_path

        rel = get_relation(self.relation)
        if rel.name not in MOVING:
            raise ValueError(f"the {rel.name} relation has no structure-dependent form; valid choices: "
                             f"{', '.join(MOVING)}")
        x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
        A, names = select(X)
        pre, comps = basis(A, names, x.size, self.max_features)
        Z = project(pre, comps, A)
        lo, hi = rel.bounds(x, y)
        if theta_start is None:
            theta_start = fit_relation(rel, x, y).params
        moving = [rel.param_names.index(mv) for mv in MOVING[rel.name]]
        u0 = np.concatenate([np.clip(np.asarray(theta_start, dtype=float), lo, hi), np.zeros(len(moving) * Z.shape[1])])
        grid = np.array([sorted(self.penalties, reverse=True)], dtype=float)
        sol = solve_path(rel, x, y, np.ones((1, x.size)), Z=Z[None], u0=u0[None], grid=grid, lo=lo[None], hi=hi[None],
                         moving=moving)
        one = {k: (v[0] if k != "weak" else {kk: vv[0] for kk, vv in v.items()}) for k, v in sol.items()}
        return self._set(rel, (pre, comps), one, bounds=(lo, hi), n=x.size, Z=Z)

    def _set(self, rel, basis_: tuple, sol: dict, *, bounds, n: int, Z):
        """The fitted state from one training set's solution (:func:`.structure_solve.solve_path`);
        ``basis_`` (preprocessor, components), ``Z`` the training members in that basis."""
        pre, comps = basis_
        p = rel.n_params
        moving = [rel.param_names.index(mv) for mv in MOVING[rel.name]]
        q = Z.shape[1]
        self.preprocessor_, self.components_ = pre, None if comps is None else np.asarray(comps).tolist()
        self.features_ = pre.kept_columns
        u = np.asarray(sol["u"], dtype=float)
        self.penalty_ = float(sol["lam"])
        self.theta0_ = u[:p].copy()
        self.coef_ = u[p:].reshape(len(moving), q).copy()
        self.loo_rmse_ = float(np.sqrt(sol["score"]))
        h, r = np.asarray(sol["h"]), np.asarray(sol["r"])
        self.dof_ = max(n - float(np.sum(h)), 1.0)
        self.sigma_ = float(np.sqrt(np.sum(r ** 2) / self.dof_))
        Ainv, JtJ = np.asarray(sol["Ainv"]), np.asarray(sol["JtJ"])
        # Sandwich covariance of the penalised estimate (kcal/mol²).
        self.cov_ = (self.sigma_ ** 2 * Ainv @ JtJ @ Ainv).tolist()
        # The effects a chemist reads come from the weakest penalty: the predicting coefficients
        # are shrunk toward zero by design, which would bias every reported effect low.
        w = sol["weak"]
        s2 = float(np.sum(np.asarray(w["r"]) ** 2) / max(n - float(np.sum(w["h"])), 1.0))
        self.effect_coef_ = np.asarray(w["u"])[p:].reshape(len(moving), q).tolist()
        Aw = np.asarray(w["Ainv"])
        self.effect_cov_ = (s2 * Aw @ np.asarray(w["JtJ"]) @ Aw)[p:, p:].tolist()
        self.moving_ = list(MOVING[rel.name])
        self.relation_ = rel
        self.bounds_ = (np.asarray(bounds[0]).tolist(), np.asarray(bounds[1]).tolist())
        self.train_theta_ = self.member_params_z(Z).tolist()
        return self

    # -- prediction -----------------------------------------------------------------------
    def member_params(self, X) -> np.ndarray:
        """Each member's relation parameters Θ (n, p)."""
        return self.member_params_z(self._z(X))

    def member_params_z(self, Z) -> np.ndarray:
        """Θ (n, p) of members given in the curve's own basis Z (n, q)."""
        from .structure_solve import member_params

        rel = self.relation_
        moving = [rel.param_names.index(m) for m in self.moving_]
        u = np.concatenate([np.asarray(self.theta0_, dtype=float), np.asarray(self.coef_, dtype=float).ravel()])
        lo, hi = (np.asarray(b, dtype=float)[None] for b in self.bounds_)
        return member_params(rel, u[None], np.asarray(Z, dtype=float)[None], moving=moving, lo=lo, hi=hi)[0][0]

    def _theta(self, X, Z):
        return self.member_params_z(Z) if Z is not None else self.member_params(X)

    def predict(self, X, energy, *, Z=None) -> np.ndarray:
        """Barrier (kcal/mol) of each member at its reaction energy (kcal/mol); ``Z``: the
        members already in the curve's basis (then X is ignored)."""
        x = np.asarray(energy, dtype=float)
        return self.relation_.barrier(x[:, None], self._theta(X, Z))[:, 0]

    def slope(self, X, energy, *, Z=None) -> np.ndarray:
        """Each member's Leffler α at its reaction energy."""
        x = np.asarray(energy, dtype=float)
        return self.relation_.slope(x[:, None], self._theta(X, Z))[:, 0]

    def predict_std(self, X, energy, energy_std=None, *, Z=None) -> np.ndarray:
        """Predictive standard deviation (kcal/mol): the residual scatter and, with
        ``energy_std``, the reaction energy's uncertainty through the local slope."""
        var = np.full(np.shape(energy), self.sigma_ ** 2)
        if energy_std is not None:
            var = var + (self.slope(X, energy, Z=Z) * np.asarray(energy_std, dtype=float)) ** 2
        return np.sqrt(var)

    def interval_quantile(self, level: float) -> float:
        return t_quantile(level, int(round(self.dof_)))

    # -- what moves the intrinsic barrier ---------------------------------------------------
    def effects(self, level: float = 0.95) -> list[dict]:
        """Per moving parameter and descriptor: the change (kcal/mol) per standard deviation
        of the descriptor (``effect``, ``low``, ``high``: its ``level`` interval, Wald, from the
        sandwich covariance) and per unit of the descriptor (``per_unit``, ``per_unit_low``,
        ``per_unit_high``), read from the fit at the weakest penalty tried (nearly unshrunk).
        Sorted by the size of the effect per standard deviation."""
        q = np.asarray(self.coef_).shape[1]
        V = np.eye(q) if self.components_ is None else np.asarray(self.components_)      # (q, d)
        cov = np.asarray(self.effect_cov_)
        z = t_quantile(level, int(round(self.dof_)))
        out = []
        for j, name in enumerate(self.moving_):
            block = cov[j * q: (j + 1) * q, j * q: (j + 1) * q]
            beta = np.asarray(self.effect_coef_)[j] @ V                               # per descriptor
            se = np.sqrt(np.clip(np.einsum("ki,kl,li->i", V, block, V), 0.0, None))
            for f, b, s, sd in zip(self.features_, beta, se, self.preprocessor_.scale):
                out.append({"parameter": name, "descriptor": f, "effect": float(b), "low": float(b - z * s),
                            "high": float(b + z * s), "sd": float(sd), "per_unit": float(b / sd),
                            "per_unit_low": float((b - z * s) / sd), "per_unit_high": float((b + z * s) / sd)})
        return sorted(out, key=lambda e: -abs(e["effect"]))

    # -- persistence ----------------------------------------------------------------------
    def as_dict(self) -> dict:
        return {"relation": self.relation, "penalties": list(self.penalties), "max_features": self.max_features,
                "theta0": np.asarray(self.theta0_).tolist(), "coef": np.asarray(self.coef_).tolist(),
                "penalty": self.penalty_, "loo_rmse": self.loo_rmse_, "sigma": self.sigma_, "dof": self.dof_,
                "features": list(self.features_), "components": self.components_,
                "preprocessor": self.preprocessor_.as_dict(), "cov": self.cov_, "moving": self.moving_,
                "effect_coef": self.effect_coef_, "effect_cov": self.effect_cov_,
                "bounds": [list(b) for b in self.bounds_], "train_theta": self.train_theta_}

    @classmethod
    def from_dict(cls, d: dict) -> "StructureCurve":
        self = cls(d["relation"], tuple(d["penalties"]), int(d["max_features"]))
        self.theta0_ = np.asarray(d["theta0"], dtype=float)
        self.coef_ = np.asarray(d["coef"], dtype=float)
        self.penalty_, self.loo_rmse_ = float(d["penalty"]), float(d["loo_rmse"])
        self.sigma_, self.dof_ = float(d["sigma"]), float(d["dof"])
        self.features_ = list(d["features"])
        self.components_ = d["components"]
        self.preprocessor_ = Preprocessor.from_dict(d["preprocessor"])
        self.cov_ = d["cov"]
        self.effect_coef_, self.effect_cov_ = d["effect_coef"], d["effect_cov"]
        self.moving_ = list(d["moving"])
        self.relation_ = get_relation(d["relation"])
        self.bounds_ = (list(d["bounds"][0]), list(d["bounds"][1]))
        self.train_theta_ = d.get("train_theta")
        return self
