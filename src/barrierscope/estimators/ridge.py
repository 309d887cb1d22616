"""Ridge regression for small sets, one fit or many folds at once, guarded against extrapolation.

Penalty chosen by exact leave-one-out on an SVD (D. M. Allen, Technometrics 1974, 16, 125;
G. H. Golub, M. Heath, G. Wahba, Technometrics 1979, 21, 215); predictive σ² = s²(1 + h(x))
with h the leverage (T. Hastie, R. Tibshirani, J. Friedman, *The Elements of Statistical
Learning*, 2nd ed., 2009, §3.4.1) and s² scaled so that the training members' predictive
variance equals their mean squared leave-one-out error.

The guard. Ridge predicts along the principal directions of the training descriptors; along
a direction where the training members barely vary (collinear size, mass and refractivity,
say) a small penalty still allows a large coefficient, and a new member whose *combination*
of descriptors is unusual — no single value extreme — lands far out along it and gets an
absurd prediction (seen on a real family: a reaction energy of +66 kcal/mol against −10).
So every new member's principal-component scores are clipped to the training members' range
of each score, widened by :data:`GUARD_MARGIN` times that range on each side, before
predicting: the model predicts only along combinations the training set spans (up to that
margin). The excess is how far the clipping moved a member's prediction, in residual standard
deviations; a member moved by more than :data:`GUARD_FLAG` of them is flagged. The margin was
chosen by measurement (``benchmarks/bench_guard.py``, 40 invented families of each kind and
the open cycloaddition families): with a margin of 2, families whose collinear size
descriptors one member breaks see their largest leave-one-out error cut to 0.30 of the
unguarded one (median; MAE to 0.56), while no benign family changes and the worst of the 26
cycloaddition families loses 2 % on its largest error; a margin of 1 cuts further (0.20) but already costs one benign family in
forty 77 % on its largest error, and 0.25 costs the median benign family 20 % in MAE.

:func:`fit_folds` fits the same ridge (imputation, standardisation, penalty choice and all)
to many training sets of equal size at once — leave-one-out and y-randomisation — with one
stacked SVD, and gives exactly what fitting them one by one gives.
"""

from __future__ import annotations

import numpy as np

RIDGE_ALPHAS = np.logspace(-3, 4, 36)
#: Each principal-component score may exceed the training members' range by this share of it.
GUARD_MARGIN = 2.0
#: A member whose prediction the guard moved by more than this many residual standard
#: deviations is flagged (smaller moves are within the stage's own noise).
GUARD_FLAG = 1.0


def fit(X: np.ndarray, y: np.ndarray) -> dict:
    """Ridge state (plain arrays) for standardised X (n, p) and y (n,)."""
    n, p = X.shape
    y_mean = float(y.mean())
    yc = y - y_mean
    if p == 0:
        s2 = float(yc @ yc / max(n - 1, 1))
        loo = yc * n / max(n - 1, 1)
        return {"kind": "ridge", "coef": np.zeros(0), "intercept": y_mean, "alpha": 0.0, "s2": s2, "n": n,
                "loo_rmse": float(np.sqrt(np.mean(loo ** 2))), "loo_residuals": loo}
    x_mean = X.mean(axis=0)
    U, s, Vt = np.linalg.svd(X - x_mean, full_matrices=False)
    alpha, mse, loo, h = _choose_penalty(U, s, yc, n)
    scores = U * s
    return {"kind": "ridge", "coef": Vt.T @ (s / (s ** 2 + alpha) * (U.T @ yc)), "intercept": y_mean,
            "x_mean": x_mean, "alpha": alpha, "s2": float(mse / (1.0 + np.mean(h))), "vt": Vt,
            "shrink": s / (s ** 2 + alpha), "score_lo": scores.min(axis=0), "score_hi": scores.max(axis=0),
            "n": n, "loo_rmse": float(np.sqrt(mse)), "loo_residuals": loo}


def _choose_penalty(U, s, yc, n):
    """Every penalty at once: shrink factors d (penalties × components), fitted values,
    leverages, exact leave-one-out residuals; the penalty with the lowest LOO error."""
    Uy = U.T @ yc
    d = s ** 2 / (s ** 2 + RIDGE_ALPHAS[:, None])
    h = d @ (U ** 2).T + 1.0 / n
    loo = (yc - (d * Uy) @ U.T) / (1.0 - h)
    mses = np.mean(loo ** 2, axis=1)
    best = int(np.argmin(mses))
    return float(RIDGE_ALPHAS[best]), float(mses[best]), loo[best], h[best]


def guard(state: dict, X: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(clipped principal-component scores, raw scores) of rows X (standardised)."""
    T = (X - np.asarray(state["x_mean"])) @ np.asarray(state["vt"]).T
    lo, hi = np.asarray(state["score_lo"]), np.asarray(state["score_hi"])
    width = np.maximum(hi - lo, 1e-12)
    return np.clip(T, lo - GUARD_MARGIN * width, hi + GUARD_MARGIN * width), T


def predict(state: dict, X: np.ndarray, with_excess: bool = False):
    """(mean, predictive standard deviation) in y's unit; with ``with_excess`` also the
    guard's ``excess`` of every row: how far clipping moved its prediction, in units of the
    residual standard deviation (0 when the guard did nothing)."""
    coef = np.asarray(state["coef"], dtype=float)
    if coef.size == 0:
        out = (np.full(X.shape[0], state["intercept"]), np.full(X.shape[0], np.sqrt(state["s2"] * (1 + 1 / state["n"]))))
        return (*out, np.zeros(X.shape[0])) if with_excess else out
    T, raw = guard(state, X)
    w = np.asarray(state["vt"]) @ coef
    mean = T @ w + state["intercept"]
    h = 1.0 / state["n"] + np.sum((T * np.asarray(state["shrink"])) ** 2, axis=1)
    std = np.sqrt(state["s2"] * (1.0 + h))
    if not with_excess:
        return mean, std
    return mean, std, np.abs((raw - T) @ w) / np.sqrt(max(state["s2"], 1e-300))


class FoldDesign:
    """The descriptor side of ridge on many folds: per fold imputation, standardisation, SVD
    and the test members' guarded scores. It does not depend on the target, so one design
    serves every target fitted on the same folds (energy stage, black box, hybrid correction,
    every y-randomised shuffle): :meth:`solve` is cheap.

    ``X`` (n, p) raw descriptors (NaN = missing); ``train`` (m, r) and ``test`` (m, t) member
    indices. A descriptor constant (or missing) over a training set is left out of that fold
    (its standardised column is zero), as :class:`~.preprocess.Preprocessor` does.
    """

    def __init__(self, X: np.ndarray, train: np.ndarray, test: np.ndarray):
        A = X[train]                                                  # (m, r, p)
        ok = np.isfinite(A)
        med = _fold_median(A, ok)
        filled = np.where(ok, A, med[:, None, :])
        mean, sd = filled.mean(axis=1), filled.std(axis=1)
        keep = ok.any(axis=1) & (sd > 1e-12 * (1.0 + np.abs(np.nan_to_num(med))))
        scale = np.where(keep, sd, 1.0)

        def standardise(B, okB):
            Z = (np.where(okB, B, med[:, None, :]) - mean[:, None, :]) / scale[:, None, :]
            return np.where(keep[:, None, :], Z, 0.0)                 # a left-out column adds nothing

        self.Z = standardise(A, ok)
        Bt = X[test]
        self.Zt = standardise(Bt, np.isfinite(Bt))
        centre = self.Z.mean(axis=1, keepdims=True)
        self.U, self.s, Vt = np.linalg.svd(self.Z - centre, full_matrices=False)   # stacked over folds
        self.Ut = self.U.transpose(0, 2, 1)
        self.r = train.shape[1]
        scores = self.U * self.s[:, None, :]
        lo, hi = scores.min(axis=1), scores.max(axis=1)
        width = np.maximum(hi - lo, 1e-12)
        T = np.einsum("mtp,mkp->mtk", self.Zt - centre, Vt)
        self.T = np.clip(T, (lo - GUARD_MARGIN * width)[:, None, :], (hi + GUARD_MARGIN * width)[:, None, :])
        self.moved = T - self.T                                        # what the guard took off each score
        self.d = self.s[:, None, :] ** 2 / (self.s[:, None, :] ** 2 + RIDGE_ALPHAS[None, :, None])  # (m, A, k)
        self.h = self.d @ (self.Ut ** 2) + 1.0 / self.r                                            # (m, A, r)

    def solve(self, yt: np.ndarray) -> dict:
        """Fit every fold to its training targets ``yt`` (m, r): ``pred`` and ``sd`` of the test
        members (m, t), ``loo`` the leave-one-out residuals inside each fold (m, r), and the
        guard's ``excess`` (m, t; see :func:`predict`)."""
        yt = np.asarray(yt, dtype=float)
        yc = yt - yt.mean(axis=1, keepdims=True)
        Uy = np.einsum("mrk,mr->mk", self.U, yc)
        loo_all = (yc[:, None, :] - (self.d * Uy[:, None, :]) @ self.Ut) / (1.0 - self.h)
        mses = np.mean(loo_all ** 2, axis=2)
        best = np.argmin(mses, axis=1)
        idx = np.arange(len(best))
        shrink = self.s / (self.s ** 2 + RIDGE_ALPHAS[best][:, None])
        s2 = mses[idx, best] / (1.0 + np.mean(self.h[idx, best], axis=1))
        pred = np.einsum("mtk,mk->mt", self.T, shrink * Uy) + yt.mean(axis=1)[:, None]
        lev = 1.0 / self.r + np.sum((self.T * shrink[:, None, :]) ** 2, axis=2)
        excess = np.abs(np.einsum("mtk,mk->mt", self.moved, shrink * Uy)) / np.sqrt(np.maximum(s2, 1e-300))[:, None]
        return {"pred": pred, "sd": np.sqrt(s2[:, None] * (1.0 + lev)), "loo": loo_all[idx, best],
                "excess": excess, "mse": mses[idx, best]}


def fit_folds(X: np.ndarray, y: np.ndarray, train: np.ndarray, test: np.ndarray) -> dict:
    """Ridge refitted on every row of ``train`` (m, r) — each with its own imputation,
    standardisation, penalty and guard — predicting the rows of ``test`` (m, t); ``y`` (n,)
    targets or (m, r) each fold's training targets. See :class:`FoldDesign`."""
    design = FoldDesign(X, train, test)
    out = design.solve(y[train] if np.ndim(y) == 1 else y)
    out.update(Z=design.Z, Zt=design.Zt)
    return out


def _fold_median(A, ok):
    if ok.all():
        return np.median(A, axis=1)
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-missing columns are left out anyway
        return np.nanmedian(np.where(ok, A, np.nan), axis=1)
