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
#: Penalties tried (dimensionless: squared kcal/mol of misfit per squared kcal/mol of effect).
PENALTIES = (0.01, 0.03, 0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0)
MAX_FEATURES = 6


def is_centre_column(name: str) -> bool:
    n = str(name)
    return n.startswith("centre") or "_centre_" in n


def _design(relation, x, Z, moving_idx, u, p):
    """(per-member parameters Θ (n, p), B (k, q)) from the unknowns u = [θ0, B.ravel()]."""
    theta0 = u[:p]
    B = u[p:].reshape(len(moving_idx), Z.shape[1])
    Theta = np.tile(theta0, (x.size, 1))
    Theta[:, moving_idx] += Z @ B.T
    return Theta, B


def _clip_theta(Theta, lo, hi, moving_idx):
    """Keep each member's moving parameters inside the relation's bounds (λ > 0 ...)."""
    T = Theta.copy()
    T[:, moving_idx] = np.clip(T[:, moving_idx], lo[moving_idx], hi[moving_idx])
    return T


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
    def _select(self, X) -> tuple[np.ndarray, list[str]]:
        names = [str(c) for c in X.columns] if hasattr(X, "columns") else [f"x{j}" for j in range(np.shape(X)[1])]
        A = X.to_numpy(dtype=float) if hasattr(X, "to_numpy") else np.asarray(X, dtype=float)
        centre = [j for j, c in enumerate(names) if is_centre_column(c)]
        cols = centre if centre else list(range(len(names)))
        return A[:, cols], [names[j] for j in cols]

    def _z(self, X) -> np.ndarray:
        cols = self.preprocessor_.columns
        if hasattr(X, "columns"):
            A = X[[c for c in cols]].to_numpy(dtype=float) if all(c in X.columns for c in cols) else \
                X.to_numpy(dtype=float)
        else:
            A = np.asarray(X, dtype=float)
            if A.shape[1] != len(cols):
                A = self._select(A)[0]
        S = self.preprocessor_.transform(A)
        return S if self.components_ is None else S @ np.asarray(self.components_).T

    # -- fitting --------------------------------------------------------------------------
    def fit(self, X, energy, barrier, theta_start=None):
        """Fit on descriptors X (n, d; DataFrame or array), reaction energies and barriers (n,),
        kcal/mol. ``theta_start``: the plain curve's parameters, to start from (optional)."""
        from scipy.optimize import least_squares

        rel = get_relation(self.relation)
        if rel.name not in MOVING:
            raise ValueError(f"the {rel.name} relation has no structure-dependent form; valid choices: "
                             f"{', '.join(MOVING)}")
        x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
        A, names = self._select(X)
        self.preprocessor_ = Preprocessor.fit(A, names)
        S = self.preprocessor_.transform(A)
        self.features_ = self.preprocessor_.kept_columns
        q = min(int(self.max_features), max(1, x.size // 4), S.shape[1])
        self.components_ = None
        if S.shape[1] > q:
            _, _, Vt = np.linalg.svd(S - S.mean(axis=0), full_matrices=False)
            self.components_ = Vt[:q].tolist()
            S = S @ Vt[:q].T
        Z = S
        p = rel.n_params
        moving = [rel.param_names.index(m) for m in MOVING[rel.name]]
        lo, hi = rel.bounds(x, y)
        if theta_start is None:
            theta_start = fit_relation(rel, x, y).params
        k = len(moving) * Z.shape[1]
        u = np.concatenate([np.clip(np.asarray(theta_start, dtype=float), lo, hi), np.zeros(k)])
        lower = np.concatenate([lo, np.full(k, -np.inf)])
        upper = np.concatenate([hi, np.full(k, np.inf)])
        best = None
        for lam in sorted(self.penalties, reverse=True):       # strong to weak, each from the last
            root = np.sqrt(lam)

            def resid(v):
                Theta, B = _design(rel, x, Z, moving, v, p)
                b = rel.barrier(x[:, None], _clip_theta(Theta, lo, hi, moving))[:, 0]
                return np.concatenate([b - y, root * B.ravel()])

            def jac(v):
                Theta, _ = _design(rel, x, Z, moving, v, p)
                Jt = rel.jacobian(x[:, None], _clip_theta(Theta, lo, hi, moving))[:, 0, :]
                J = np.zeros((x.size + k, p + k))
                J[: x.size, :p] = Jt
                for j, m in enumerate(moving):
                    J[: x.size, p + j * Z.shape[1]: p + (j + 1) * Z.shape[1]] = Jt[:, [m]] * Z
                J[x.size:, p:] = root * np.eye(k)
                return J

            res = least_squares(resid, np.clip(u, lower, upper), jac=jac, bounds=(lower, upper), method="trf",
                                max_nfev=200)
            u = res.x
            r = res.fun[: x.size]
            Jd = jac(u)[: x.size]
            P = np.zeros(p + k)
            P[p:] = lam
            Ainv = np.linalg.pinv(Jd.T @ Jd + np.diag(P))
            h = np.einsum("ij,jk,ik->i", Jd, Ainv, Jd)
            loo = r / np.clip(1.0 - h, 1e-6, None)
            score = float(np.mean(loo ** 2))
            if best is None or score < best[0]:
                best = (score, lam, u.copy(), r.copy(), Jd.copy(), Ainv.copy(), h)
            least = (u.copy(), r.copy(), Jd.copy(), Ainv.copy(), h)     # ends as the weakest penalty's
        score, lam, u, r, Jd, Ainv, h = best
        self.penalty_ = float(lam)
        self.theta0_ = u[:p].copy()
        self.coef_ = u[p:].reshape(len(moving), Z.shape[1]).copy()
        self.loo_rmse_ = float(np.sqrt(score))
        edf = float(np.sum(h))
        self.dof_ = max(x.size - edf, 1.0)
        self.sigma_ = float(np.sqrt(np.sum(r ** 2) / self.dof_))
        # Sandwich covariance of the penalised estimate (kcal/mol²).
        self.cov_ = (self.sigma_ ** 2 * Ainv @ (Jd.T @ Jd) @ Ainv).tolist()
        # The effects a chemist reads come from the weakest penalty: the predicting coefficients
        # are shrunk toward zero by design, which would bias every reported effect low.
        u_l, r_l, J_l, A_l, h_l = least
        s2 = float(np.sum(r_l ** 2) / max(x.size - float(np.sum(h_l)), 1.0))
        self.effect_coef_ = u_l[p:].reshape(len(moving), Z.shape[1]).tolist()
        self.effect_cov_ = (s2 * A_l @ (J_l.T @ J_l) @ A_l)[p:, p:].tolist()
        self.moving_ = list(MOVING[rel.name])
        self.relation_ = rel
        self.bounds_ = (lo.tolist(), hi.tolist())
        self.train_theta_ = self.member_params(X).tolist()      # for the report's curves per centre
        return self

    # -- prediction -----------------------------------------------------------------------
    def member_params(self, X) -> np.ndarray:
        """Each member's relation parameters Θ (n, p)."""
        rel = self.relation_
        Z = self._z(X)
        moving = [rel.param_names.index(m) for m in self.moving_]
        Theta = np.tile(np.asarray(self.theta0_), (Z.shape[0], 1))
        Theta[:, moving] += Z @ np.asarray(self.coef_).T
        lo, hi = (np.asarray(b, dtype=float) for b in self.bounds_)
        return _clip_theta(Theta, lo, hi, moving)

    def predict(self, X, energy) -> np.ndarray:
        """Barrier (kcal/mol) of each member at its reaction energy (kcal/mol)."""
        x = np.asarray(energy, dtype=float)
        return self.relation_.barrier(x[:, None], self.member_params(X))[:, 0]

    def slope(self, X, energy) -> np.ndarray:
        """Each member's Leffler α at its reaction energy."""
        x = np.asarray(energy, dtype=float)
        return self.relation_.slope(x[:, None], self.member_params(X))[:, 0]

    def predict_std(self, X, energy, energy_std=None) -> np.ndarray:
        """Predictive standard deviation (kcal/mol): the residual scatter and, with
        ``energy_std``, the reaction energy's uncertainty through the local slope."""
        var = np.full(np.shape(energy), self.sigma_ ** 2)
        if energy_std is not None:
            var = var + (self.slope(X, energy) * np.asarray(energy_std, dtype=float)) ** 2
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
