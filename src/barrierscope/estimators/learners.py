"""Learners for small sets: fitted to a plain state (numbers only) and predicted from it.

Every learner is fitted here (with scikit-learn where it does the fitting) and reduced to
a state of plain lists and floats; predictions always come from :func:`predict_state`, so
a model reloaded from its JSON file predicts exactly what the fitted object predicted.
Inputs are already imputed and standardised (see :mod:`.preprocess`).

- ``ridge`` (default): see :mod:`.ridge` (penalty by exact leave-one-out, leverage-based σ,
  and the guard against unusual descriptor combinations);
- ``pls``: partial least squares (S. Wold, M. Sjöström, L. Eriksson, Chemom. Intell. Lab.
  Syst. 2001, 58, 109), components chosen by 5-fold cross-validation; σ from that CV; its
  coefficients lie in the training descriptors' row space, so the ridge's guard applies too.
- ``gp``: Gaussian process with a constant × RBF + white-noise kernel, hyper-parameters by
  marginal likelihood (C. E. Rasmussen, C. K. I. Williams, *Gaussian Processes for Machine
  Learning*, MIT Press 2006, §2.2 and ch. 5); σ per prediction.
- ``forest``: random forest (L. Breiman, Mach. Learn. 2001, 45, 5); σ from the
  out-of-bag error.
"""

from __future__ import annotations

import numpy as np

from . import ridge
from .ridge import RIDGE_ALPHAS  # noqa: F401  (the penalty grid, for tests and docs)

LEARNERS = ("ridge", "pls", "gp", "forest")


def check_learner(name: str) -> str:
    key = str(name).strip().lower()
    if key not in LEARNERS:
        raise ValueError(f"unknown learner {name!r}; valid choices: {', '.join(LEARNERS)}")
    return key


def minimum_members(name: str) -> int:
    """Fewest training members a learner is allowed to fit (each needs some left over)."""
    return {"ridge": 4, "pls": 6, "gp": 5, "forest": 8}[check_learner(name)]


# -- PLS -----------------------------------------------------------------------------------
def _pls_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0) -> dict:
    from sklearn.cross_decomposition import PLSRegression
    from sklearn.model_selection import KFold

    n, p = X.shape
    max_k = max(1, min(5, p, n - 2))
    folds = list(KFold(n_splits=min(5, n), shuffle=True, random_state=random_state).split(X))
    best = None
    for k in range(1, max_k + 1):
        err = np.empty(n)
        for tr, te in folds:
            m = PLSRegression(n_components=min(k, len(tr) - 1, p), scale=False).fit(X[tr], y[tr])
            err[te] = y[te] - m.predict(X[te]).ravel()
        mse = float(np.mean(err ** 2))
        if best is None or mse < best[0]:
            best = (mse, k)
    mse, k = best
    m = PLSRegression(n_components=k, scale=False).fit(X, y)
    coef = np.asarray(m.coef_, dtype=float).reshape(-1)
    intercept = float(np.ravel(m.intercept_)[0])
    x_mean = X.mean(axis=0)
    U, s, Vt = np.linalg.svd(X - x_mean, full_matrices=False)
    scores = U * s
    return {"kind": "pls", "coef": coef, "intercept": intercept, "n_components": int(k),
            "cv_rmse": float(np.sqrt(mse)), "x_mean": x_mean, "vt": Vt, "score_lo": scores.min(axis=0),
            "score_hi": scores.max(axis=0)}


def _pls_predict(state: dict, X: np.ndarray):
    T, _ = ridge.guard(state, X)
    x = T @ np.asarray(state["vt"]) + np.asarray(state["x_mean"])   # the row back inside the training box
    mean = x @ np.asarray(state["coef"], dtype=float) + state["intercept"]
    return mean, np.full(X.shape[0], state["cv_rmse"])


# -- Gaussian process ----------------------------------------------------------------------
_GP_JITTER = 1e-10  # scikit-learn's default `alpha` added to the training diagonal


def _gp_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0) -> dict:
    from sklearn.gaussian_process import GaussianProcessRegressor
    from sklearn.gaussian_process.kernels import RBF, ConstantKernel, WhiteKernel

    n, p = X.shape
    kernel = (ConstantKernel(1.0, (1e-3, 1e3)) * RBF(length_scale=max(np.sqrt(p), 1.0), length_scale_bounds=(1e-2, 1e3))
              + WhiteKernel(0.1, (1e-6, 1e1)))
    gp = GaussianProcessRegressor(kernel=kernel, normalize_y=True, n_restarts_optimizer=2,
                                  random_state=random_state).fit(X, y)
    params = gp.kernel_.get_params()
    y_mean, y_std = float(np.mean(y)), float(np.std(y)) or 1.0
    return {"kind": "gp", "X": X.tolist(), "y": ((y - y_mean) / y_std).tolist(), "y_mean": y_mean, "y_std": y_std,
            "constant": float(params["k1__k1__constant_value"]), "length_scale": float(params["k1__k2__length_scale"]),
            "noise": float(params["k2__noise_level"])}


def _gp_parts(state: dict):
    cached = state.get("_factor")
    if cached is None:
        X = np.asarray(state["X"], dtype=float)
        K = _rbf(X, X, state) + (state["noise"] + _GP_JITTER) * np.eye(X.shape[0])
        L = np.linalg.cholesky(K)
        alpha = np.linalg.solve(L.T, np.linalg.solve(L, np.asarray(state["y"], dtype=float)))
        cached = (X, L, alpha)
        state["_factor"] = cached  # derived, never written to a model file
    return cached


def _rbf(A: np.ndarray, B: np.ndarray, state: dict) -> np.ndarray:
    d2 = np.sum(A ** 2, 1)[:, None] + np.sum(B ** 2, 1)[None, :] - 2.0 * A @ B.T
    return state["constant"] * np.exp(-0.5 * np.clip(d2, 0.0, None) / state["length_scale"] ** 2)


def _gp_predict(state: dict, X: np.ndarray):
    Xt, L, alpha = _gp_parts(state)
    k = _rbf(X, Xt, state)
    mean = k @ alpha
    v = np.linalg.solve(L, k.T)
    var = np.clip(state["constant"] + state["noise"] - np.sum(v ** 2, axis=0), 0.0, None)
    return mean * state["y_std"] + state["y_mean"], np.sqrt(var) * state["y_std"]


# -- random forest -------------------------------------------------------------------------
def _forest_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0) -> dict:
    from sklearn.ensemble import RandomForestRegressor

    rf = RandomForestRegressor(n_estimators=200, min_samples_leaf=2, oob_score=True,
                               random_state=random_state, n_jobs=1).fit(X, y)
    oob = np.asarray(rf.oob_prediction_, dtype=float)
    ok = np.isfinite(oob)
    rmse = float(np.sqrt(np.mean((y[ok] - oob[ok]) ** 2))) if ok.any() else float(np.std(y))
    trees = []
    for est in rf.estimators_:
        t = est.tree_
        trees.append({"left": t.children_left.tolist(), "right": t.children_right.tolist(),
                      "feature": t.feature.tolist(), "threshold": t.threshold.tolist(),
                      "value": t.value[:, 0, 0].tolist()})
    return {"kind": "forest", "trees": trees, "oob_rmse": rmse}


def _forest_predict(state: dict, X: np.ndarray):
    Xf = X.astype(np.float32)  # as scikit-learn's trees compare
    total = np.zeros(X.shape[0])
    rows = np.arange(X.shape[0])
    for t in state["trees"]:
        left, right = np.asarray(t["left"]), np.asarray(t["right"])
        feature, threshold = np.asarray(t["feature"]), np.asarray(t["threshold"])
        node = np.zeros(X.shape[0], dtype=np.int64)
        while True:
            inner = left[node] >= 0
            if not inner.any():
                break
            idx = rows[inner]
            nd = node[inner]
            go_left = Xf[idx, feature[nd]] <= threshold[nd]
            node[idx] = np.where(go_left, left[nd], right[nd])
        total += np.asarray(t["value"])[node]
    return total / len(state["trees"]), np.full(X.shape[0], state["oob_rmse"])


def fit_state(name: str, X: np.ndarray, y: np.ndarray, random_state: int = 0) -> dict:
    """Fit learner ``name`` on (X, y) and return its state (plain data)."""
    name = check_learner(name)
    X = np.asarray(X, dtype=float)
    y = np.asarray(y, dtype=float)
    if name == "ridge":
        return ridge.fit(X, y)
    if X.shape[1] == 0:
        raise ValueError(f"the {name} learner needs at least one descriptor")
    if name == "pls":
        return _pls_fit(X, y, random_state)
    if name == "gp":
        return _gp_fit(X, y, random_state)
    return _forest_fit(X, y, random_state)


def predict_state(state: dict, X: np.ndarray):
    """(mean, predictive standard deviation) of a fitted learner state, in y's unit."""
    X = np.asarray(X, dtype=float)
    return {"ridge": ridge.predict, "pls": _pls_predict, "gp": _gp_predict,
            "forest": _forest_predict}[state["kind"]](state, X)


def manifold_excess(state: dict, X: np.ndarray) -> np.ndarray:
    """How far each row lies outside the training members' descriptor box (0 inside); linear
    learners only (GP and forest predictions stay within the training targets by themselves)."""
    if state["kind"] in ("ridge", "pls") and "vt" in state:
        return ridge.guard(state, np.asarray(X, dtype=float))[1]
    return np.zeros(np.shape(X)[0])


def loo_residuals(state: dict) -> np.ndarray | None:
    """Exact leave-one-out residuals (observed − predicted) where the learner gives them in
    closed form (ridge), else None."""
    r = state.get("loo_residuals")
    return None if r is None else np.asarray(r, dtype=float)
