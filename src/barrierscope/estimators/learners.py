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

LEARNERS = ("auto", "ridge", "pls", "gp", "forest")
#: What ``auto`` chooses between, for each family and inside every validation split, by the
#: candidates' own inner validation (exact leave-one-out for both). PLS and forest are left
#: out: on the cycloaddition families their black boxes did no better than ridge's or the
#: Gaussian process's and cost several times more (benchmarks/bench_learners.py).
AUTO_CANDIDATES = ("ridge", "gp")
#: Above this many members ``auto`` keeps to ridge: every Gaussian-process fit costs O(n³) per
#: step of its hyper-parameter search, repeated in every validation split (a family of 2,000
#: took over eight minutes to validate), and with hundreds of members a linear model on the
#: descriptors is no longer the data-starved case the GP is there for.
AUTO_GP_MAX = 300


def auto_candidates(n: int) -> tuple[str, ...]:
    """What ``auto`` chooses between for a family of ``n`` members."""
    return AUTO_CANDIDATES if n <= AUTO_GP_MAX else ("ridge",)
#: Trees per forest: its out-of-bag error is steady by about a hundred trees on tens of members
#: (L. Breiman 2001, §3: the error converges as trees are added); validation refits, which
#: refit it in every split, grow half as many (``effort="refit"``, reported).
FOREST_TREES = 100
REFIT_FOREST_TREES = 50


def check_learner(name: str) -> str:
    key = str(name).strip().lower()
    if key not in LEARNERS:
        raise ValueError(f"unknown learner {name!r}; valid choices: {', '.join(LEARNERS)}")
    return key


def minimum_members(name: str) -> int:
    """Fewest training members a learner is allowed to fit (each needs some left over)."""
    return {"auto": 5, "ridge": 4, "pls": 6, "gp": 5, "forest": 8}[check_learner(name)]


def inner_mse(state: dict) -> float:
    """A fitted learner's own estimate of its squared prediction error on new members:
    exact leave-one-out (ridge at its penalty, Gaussian process at its hyper-parameters),
    cross-validated (PLS) or out-of-bag (forest). What ``auto`` compares."""
    kind = state["kind"]
    if kind == "anchored":
        return float(state["scores"][state["choice"]]["loo_rmse"]) ** 2
    if kind == "ridge":
        return float(state["loo_rmse"]) ** 2
    if kind == "pls":
        return float(state["cv_rmse"]) ** 2
    r = np.asarray(state["loo_residuals"], dtype=float)
    r = r[np.isfinite(r)]
    return float(np.mean(r * r)) if r.size else float("inf")


def _auto_fit(X, y, random_state: int, warm: dict | None) -> dict:
    """Every candidate of :func:`auto_candidates` fitted; the one with the lowest
    :func:`inner_mse` kept, with what it was chosen from (``auto``) and the Gaussian process's
    hyper-parameters (the warm start of later refits)."""
    hyper = (warm or {}).get("auto", {}).get("gp") if warm else None
    states = {}
    for name in auto_candidates(X.shape[0]):
        gp_warm = {"kind": "gp", **hyper} if (name == "gp" and hyper) else None
        states[name] = fit_state(name, X, y, random_state, warm=gp_warm)
    scores = {name: inner_mse(st) for name, st in states.items()}
    chosen = min(scores, key=scores.get)
    gp = states.get("gp")
    out = dict(states[chosen])
    out["auto"] = {"chosen": chosen, "inner_rmse": {k: float(np.sqrt(v)) for k, v in scores.items()},
                   "gp": None if gp is None else {k: gp[k] for k in ("constant", "length_scale", "noise")}}
    out["capped"] = int(gp.get("capped", 0)) if gp is not None else 0
    return out


# -- PLS -----------------------------------------------------------------------------------
def pls1_coefficients(X: np.ndarray, y: np.ndarray, k: int) -> tuple[np.ndarray, np.ndarray]:
    """Regression coefficients of PLS1 (NIPALS for one target; S. Wold, M. Sjöström,
    L. Eriksson, Chemom. Intell. Lab. Syst. 2001, 58, 109) with 1..k components, at once:
    (coefficients (k, p) on centred X, their intercepts (k,)). X is not rescaled."""
    x_mean, y_mean = X.mean(axis=0), float(y.mean())
    E, f = X - x_mean, y - y_mean
    W, P, q = [], [], []
    for _ in range(k):
        w = E.T @ f
        norm = np.linalg.norm(w)
        if norm <= 1e-14:
            break
        w /= norm
        t = E @ w
        tt = float(t @ t)
        if tt <= 1e-14:
            break
        p_ = E.T @ t / tt
        q_ = float(f @ t) / tt
        E = E - np.outer(t, p_)
        f = f - q_ * t
        W.append(w), P.append(p_), q.append(q_)
    W, P, q = np.array(W).T, np.array(P).T, np.array(q)
    coefs = []
    for j in range(1, k + 1):
        m = min(j, W.shape[1])
        coefs.append(W[:, :m] @ np.linalg.solve(P[:, :m].T @ W[:, :m], q[:m]))
    coefs = np.array(coefs)
    return coefs, y_mean - coefs @ x_mean


def _pls_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0) -> dict:
    """Components (1 to 5) chosen by 5-fold cross-validation; σ from that cross-validation."""
    n, p = X.shape
    max_k = max(1, min(5, p, n - 2))
    perm = np.random.default_rng(random_state).permutation(n)
    err = np.empty((max_k, n))
    for fold in np.array_split(perm, min(5, n)):
        train = np.setdiff1d(np.arange(n), fold)
        coefs, b0 = pls1_coefficients(X[train], y[train], min(max_k, train.size - 1))
        pred = X[fold] @ coefs.T + b0                                  # (fold, k)
        err[: coefs.shape[0], fold] = (y[fold][:, None] - pred).T
        err[coefs.shape[0]:, fold] = err[coefs.shape[0] - 1, fold]
    mses = np.mean(err ** 2, axis=1)
    k = int(np.argmin(mses)) + 1
    coefs, b0 = pls1_coefficients(X, y, k)
    x_mean = X.mean(axis=0)
    U, s, Vt = np.linalg.svd(X - x_mean, full_matrices=False)
    scores = U * s
    return {"kind": "pls", "coef": coefs[-1], "intercept": float(b0[-1]), "n_components": k,
            "cv_rmse": float(np.sqrt(mses[k - 1])), "x_mean": x_mean, "vt": Vt, "score_lo": scores.min(axis=0),
            "score_hi": scores.max(axis=0)}


def _pls_predict(state: dict, X: np.ndarray, with_excess: bool = False):
    T, raw = ridge.guard(state, X)
    w = np.asarray(state["vt"]) @ np.asarray(state["coef"], dtype=float)
    mean = T @ w + np.asarray(state["x_mean"]) @ np.asarray(state["coef"], dtype=float) + state["intercept"]
    std = np.full(X.shape[0], state["cv_rmse"])
    # How far the guard moved each prediction, in the stage's cross-validated RMSE.
    return (mean, std, np.abs((raw - T) @ w) / max(state["cv_rmse"], 1e-300)) if with_excess else (mean, std)


# -- Gaussian process ----------------------------------------------------------------------
_GP_JITTER = 1e-10  # scikit-learn's default `alpha` added to the training diagonal


_GP_BOUNDS = {"constant": (1e-3, 1e3), "length_scale": (1e-2, 1e3), "noise": (1e-6, 1e1)}


def _gp_log_likelihood(log_theta, X, d2, y):
    """(−log marginal likelihood, its gradient) of the constant × RBF + noise kernel at
    log hyper-parameters (log c, log ℓ, log σ²_n), for standardised targets y (Rasmussen and
    Williams 2006, eq. 5.8 and 5.9: ∂/∂θ = ½ tr((ααᵀ − K⁻¹) ∂K/∂θ))."""
    c, ell, noise = np.exp(log_theta)
    cR = c * _kernel(0.5 * d2 / ell ** 2)
    K = cR.copy()
    K[np.diag_indices_from(K)] += noise + _GP_JITTER
    try:
        L = np.linalg.cholesky(K)
    except np.linalg.LinAlgError:
        return np.inf, np.zeros(3)
    # K⁻¹ = L⁻ᵀL⁻¹ through numpy's LAPACK (several times faster here than SciPy's triangular
    # solves against the identity, which the gradient needs in full).
    Linv = np.linalg.inv(L)
    Kinv = Linv.T @ Linv
    alpha = Kinv @ y
    W = np.outer(alpha, alpha) - Kinv
    nll = 0.5 * float(y @ alpha) + float(np.sum(np.log(np.diag(L)))) + 0.5 * y.size * np.log(2 * np.pi)
    WcR = W * cR
    # ∂K/∂log c = cR, ∂K/∂log ℓ = cR·d²/ℓ², ∂K/∂log σ²_n = σ²_n I.
    grad = np.array([WcR.sum(), float(np.sum(WcR * d2)) / ell ** 2, noise * float(np.trace(W))])
    return nll, -0.5 * grad


def _gp_search(X: np.ndarray, y: np.ndarray, starts: list) -> tuple[dict, int]:
    """Hyper-parameters by marginal likelihood (the objective and bounds of scikit-learn's
    GaussianProcessRegressor with ``normalize_y``): one L-BFGS-B search from each start
    (constant, length scale, noise), the best kept. Returns the hyper-parameters and 1 when
    that search stopped at an iteration limit or a bound. Written out rather than called
    through scikit-learn's kernel objects: the same optimum (tests/test_estimators.py) at a
    third of the cost, which the per-split choice of ``auto`` pays many times."""
    from scipy import optimize

    ys = (y - np.mean(y)) / (np.std(y) or 1.0)
    d2 = np.clip(np.sum(X ** 2, 1)[:, None] + np.sum(X ** 2, 1)[None, :] - 2.0 * X @ X.T, 0.0, None)
    bounds = [tuple(np.log(_GP_BOUNDS[k])) for k in ("constant", "length_scale", "noise")]
    lo, hi = [b[0] for b in bounds], [b[1] for b in bounds]
    best = None
    for start in starts:
        res = optimize.minimize(_gp_log_likelihood, np.clip(np.asarray(start, dtype=float), lo, hi),
                                args=(X, d2, ys), jac=True, method="L-BFGS-B", bounds=bounds)
        if best is None or res.fun < best.fun:
            best = res
    theta = np.exp(best.x)
    at_bound = any(abs(v - b[0]) < 1e-8 or abs(v - b[1]) < 1e-8 for v, b in zip(best.x, bounds))
    return {"constant": float(theta[0]), "length_scale": float(theta[1]), "noise": float(theta[2])}, \
        int((not best.success) or at_bound)


def _gp_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0, warm: dict | None = None) -> dict:
    """Hyper-parameters by marginal likelihood: from the default start and two random
    restarts drawn log-uniformly within the bounds (as scikit-learn's
    ``n_restarts_optimizer=2`` with the same ``random_state`` draws them), or one local
    search from ``warm`` (a fitted GP state: validation refits start from the family's own
    optimum, a bounded cost)."""
    if warm and warm.get("fixed"):       # hyper-parameters chosen elsewhere (a validation block's search)
        hyper = {k: float(warm[k]) for k in ("constant", "length_scale", "noise")}
        return _gp_state(X, y, hyper, 0)
    if warm:
        starts = [np.log([warm["constant"], warm["length_scale"], warm["noise"]])]
    else:
        p = X.shape[1]
        starts = [np.log([1.0, max(np.sqrt(p), 1.0), 0.1])]
        rng = np.random.RandomState(random_state)
        lo = np.log([_GP_BOUNDS[k][0] for k in ("constant", "length_scale", "noise")])
        hi = np.log([_GP_BOUNDS[k][1] for k in ("constant", "length_scale", "noise")])
        starts += [rng.uniform(lo, hi) for _ in range(2)]
    hyper, capped = _gp_search(X, y, starts)
    return _gp_state(X, y, hyper, capped)


def _gp_state(X, y, hyper: dict, capped: int) -> dict:
    """The fitted GP as plain numbers, with its exact leave-one-out residuals."""
    y_mean, y_std = float(np.mean(y)), float(np.std(y)) or 1.0
    state = {"kind": "gp", "X": X, "y": (y - y_mean) / y_std, "y_mean": y_mean, "y_std": y_std, **hyper,
             "capped": capped}
    _, L, alpha = _gp_parts(state)
    # Exact leave-one-out at these hyper-parameters: y_i − μ_−i = [K⁻¹y]_i / [K⁻¹]_ii
    # (C. E. Rasmussen, C. K. I. Williams 2006, eq. 5.12), in y's unit.
    k_inv_diag = np.sum(np.linalg.inv(L) ** 2, axis=0)
    state["loo_residuals"] = alpha / k_inv_diag * y_std
    return state


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


def _kernel(z: np.ndarray) -> np.ndarray:
    """exp(−z) with values below e⁻³⁰⁰ set to zero: subnormal numbers (e^−708 and below) slow
    every later matrix operation tenfold, and products of such entries change nothing."""
    return np.where(z < 300.0, np.exp(-np.minimum(z, 300.0)), 0.0)


def _rbf(A: np.ndarray, B: np.ndarray, state: dict) -> np.ndarray:
    d2 = np.sum(A ** 2, 1)[:, None] + np.sum(B ** 2, 1)[None, :] - 2.0 * A @ B.T
    return state["constant"] * _kernel(0.5 * np.clip(d2, 0.0, None) / state["length_scale"] ** 2)


def _gp_predict(state: dict, X: np.ndarray):
    Xt, L, alpha = _gp_parts(state)
    k = _rbf(X, Xt, state)
    mean = k @ alpha
    v = np.linalg.solve(L, k.T)
    var = np.clip(state["constant"] + state["noise"] - np.sum(v ** 2, axis=0), 0.0, None)
    return mean * state["y_std"] + state["y_mean"], np.sqrt(var) * state["y_std"]


# -- random forest -------------------------------------------------------------------------
def _forest_fit(X: np.ndarray, y: np.ndarray, random_state: int = 0, trees: int = FOREST_TREES) -> dict:
    from sklearn.ensemble import RandomForestRegressor

    # A third of the descriptors tried at each split, Breiman's choice for regression (2001, §11).
    rf = RandomForestRegressor(n_estimators=trees, min_samples_leaf=2, max_features=1 / 3, oob_score=True,
                               random_state=random_state, n_jobs=1).fit(X, y)
    oob = np.asarray(rf.oob_prediction_, dtype=float)
    ok = np.isfinite(oob)
    rmse = float(np.sqrt(np.mean((y[ok] - oob[ok]) ** 2))) if ok.any() else float(np.std(y))
    trees = []
    for est in rf.estimators_:
        t = est.tree_
        trees.append({"left": t.children_left.copy(), "right": t.children_right.copy(),
                      "feature": t.feature.copy(), "threshold": t.threshold.copy(), "value": t.value[:, 0, 0].copy()})
    # The out-of-bag predictions are each member's prediction by the trees that did not see it.
    return {"kind": "forest", "trees": trees, "oob_rmse": rmse, "loo_residuals": np.where(ok, y - oob, np.nan)}


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


def fit_state(name: str, X: np.ndarray, y: np.ndarray, random_state: int = 0, *, warm: dict | None = None,
              effort: str = "full", anchor: list[int] | None = None) -> dict:
    """Fit learner ``name`` on (X, y) and return its state (plain data); ``warm`` a state of the
    same learner to start a Gaussian process's hyper-parameter search from; ``effort="refit"``
    bounds the cost of validation refits (forests of :data:`REFIT_FOREST_TREES` trees).
    ``anchor``: X's columns fitted unpenalised (the computed reaction energy first, then any
    family indicators): the stage chooses between that anchor, the anchor with a ridge
    correction and the free learner (:mod:`.anchored`)."""
    name = check_learner(name)
    X = np.asarray(X, dtype=float)
    y = np.asarray(y, dtype=float)
    if warm is not None and warm.get("kind") == "anchored":
        warm = warm["free"]
    if anchor:
        return _anchored_fit(name, X, y, random_state, warm=warm, effort=effort, anchor=list(anchor))
    if name == "auto":
        return _auto_fit(X, y, random_state, warm)
    if name == "ridge":
        return ridge.fit(X, y)
    if X.shape[1] == 0:
        raise ValueError(f"the {name} learner needs at least one descriptor")
    if name == "pls":
        return _pls_fit(X, y, random_state)
    if name == "gp":
        return _gp_fit(X, y, random_state, warm if warm and warm.get("kind") == "gp" else None)
    return _forest_fit(X, y, random_state, REFIT_FOREST_TREES if effort == "refit" else FOREST_TREES)


def _anchored_fit(name, X, y, random_state, *, warm, effort, anchor) -> dict:
    """The free learner, then the anchored candidates against it (:func:`.anchored.choose`)."""
    from . import anchored

    free = fit_state(name, X, y, random_state, warm=warm, effort=effort)
    kind = free["kind"]

    def refit_free(train):
        # The end splits refit the learner that was chosen, at its hyper-parameters (a GP's are
        # held: the score compares model forms, not searches).
        again = {**free, "fixed": True} if kind == "gp" else None
        return fit_state(kind, X[train], y[train], random_state, warm=again, effort="refit")

    try:
        return anchored.choose(X, y, anchor, free_state=free, refit_free=refit_free)
    except (ValueError, np.linalg.LinAlgError) as exc:
        return {**free, "anchor_note": f"not anchored: {exc}"}


def predict_state(state: dict, X: np.ndarray, with_excess: bool = False):
    """(mean, predictive standard deviation) of a fitted learner state, in y's unit; with
    ``with_excess`` also each row's manifold excess (zero for GP and forest, whose predictions
    stay within the training targets by themselves)."""
    X = np.asarray(X, dtype=float)
    if state["kind"] == "anchored":
        from .anchored import chosen_state, predict_anchored

        if state["choice"] == "free":
            return predict_state(state["free"], X, with_excess)
        return predict_anchored(chosen_state(state), X, with_excess)
    if state["kind"] in ("ridge", "pls"):
        return (ridge.predict if state["kind"] == "ridge" else _pls_predict)(state, X, with_excess)
    mean, std = {"gp": _gp_predict, "forest": _forest_predict}[state["kind"]](state, X)
    return (mean, std, np.zeros(X.shape[0])) if with_excess else (mean, std)


def manifold_excess(state: dict, X: np.ndarray) -> np.ndarray:
    """How far the guard moved each row's prediction, in the learner's residual standard
    deviations (0: untouched); linear learners only (GP and forest predictions stay within
    the training targets by themselves)."""
    if (state["kind"] in ("ridge", "pls") and "vt" in state) or state["kind"] == "anchored":
        return predict_state(state, np.asarray(X, dtype=float), with_excess=True)[2]
    return np.zeros(np.shape(X)[0])


def loo_residuals(state: dict) -> np.ndarray | None:
    """Exact leave-one-out residuals (observed − predicted) where the learner gives them in
    closed form (ridge), else None."""
    if state["kind"] == "anchored":
        from .anchored import chosen_state

        state = chosen_state(state)
    r = state.get("loo_residuals")
    return None if r is None else np.asarray(r, dtype=float)
