"""A stage anchored on a computed reaction energy: target = a + b·E_computed + f(descriptors).

A cheap computed reaction energy (GFN2-xTB, or the chemist's own column) already carries most
of what the target varies by; fitted as one standardised column among many by ridge, its
coefficient is shrunk, and beyond the computed members every prediction is pulled toward the
training mean. Here the anchor's intercept and slope are unpenalised and only the correction
f is penalised (ridge, penalty by exact leave-one-out): Δ-learning after R. Ramakrishnan,
P. O. Dral, M. Rupp, O. A. von Lilienfeld, *J. Chem. Theory Comput.* 2015, 11, 2087.

The partially penalised fit is solved exactly by projecting the unpenalised columns C
(intercept, anchor, and optionally one indicator per family) out of the descriptors and the
target (the Frisch–Waugh–Lovell theorem; R. Frisch, F. V. Waugh, Econometrica 1933, 1, 387),
then ridge on what is left. The hat matrix is H = P_C + Zp (ZpᵀZp + αI)⁻¹ Zpᵀ, so
leave-one-out residuals are exact in closed form for every penalty at once (the same rule
as :mod:`.ridge`), the infinite penalty being the anchor alone.

Three candidates — the anchor alone, the anchor with the correction, and the free learner
(the family's learner on every descriptor, the computed energy included) — are compared by an
inner score that includes extrapolation: the mean of the squared leave-one-out error and of
the squared errors of two end splits (the training members with the lowest and with the
highest quarter of computed energies, each predicted from the rest). The lowest score wins;
a chemist sees which, and why.

All arrays here are the standardised descriptors the learners see; the anchor's calibration
in the computed energy's own unit is recovered by :func:`calibration`.
"""

from __future__ import annotations

import numpy as np

from .ridge import GUARD_MARGIN, RIDGE_ALPHAS

CHOICES = ("anchor", "anchor+correction", "free")
#: Below this many training members the end splits are too small to judge: leave-one-out alone.
END_SPLIT_MIN = 12


def _unpenalised(Z: np.ndarray, fixed: list[int]) -> np.ndarray:
    return np.column_stack([np.ones(Z.shape[0]), Z[:, fixed]])


def _independent(Z: np.ndarray, fixed: list[int]) -> list[int]:
    """The anchor, then each further fixed column that adds to the span of those before it
    (a full set of family indicators is collinear with the intercept: one is left out)."""
    keep: list[int] = []
    rank = 1
    for pos, j in enumerate(fixed):
        r = np.linalg.matrix_rank(_unpenalised(Z, keep + [j]), tol=1e-8 * max(1.0, np.sqrt(Z.shape[0])))
        if r > rank:
            keep.append(j)
            rank = r
        elif pos == 0:
            raise ValueError("the computed energy is constant over the members")
    return keep


def fit_anchored(Z: np.ndarray, y: np.ndarray, fixed: list[int], *, correction: bool = True) -> dict:
    """The partially penalised ridge on standardised Z (n, p): the columns ``fixed`` (the
    anchor first) and an intercept unpenalised, every other column penalised with the penalty
    of lowest exact leave-one-out error (or, without ``correction``, none of them used)."""
    n = y.size
    rest = [j for j in range(Z.shape[1]) if j not in fixed]
    fixed = _independent(Z, fixed)
    C = _unpenalised(Z, fixed)
    Q, R = np.linalg.qr(C)
    Zr = Z[:, rest]
    yp = y - Q @ (Q.T @ y)
    h0 = np.sum(Q * Q, axis=1)
    G = np.linalg.solve(R, Q.T @ Zr) if rest else np.zeros((C.shape[1], 0))     # (c, p_rest): C's share of Zr
    state = {"kind": "anchored", "fixed": list(fixed), "rest": rest, "G": G, "ctc_inv": np.linalg.inv(R.T @ R),
             "n": n, "alpha": float("inf"), "w": np.zeros(len(rest))}
    loo = yp / np.clip(1.0 - h0, 1e-9, None)
    h = h0
    if correction and rest:
        Zp = Zr - C @ G
        U, s, Vt = np.linalg.svd(Zp, full_matrices=False)
        keep = s > 1e-8 * max(s.max(initial=0.0), 1e-300)
        U, s, Vt = U[:, keep], s[keep], Vt[keep]
        if s.size:
            Uy = U.T @ yp
            d = s ** 2 / (s ** 2 + RIDGE_ALPHAS[:, None])
            hh = h0 + d @ (U * U).T
            loos = (yp - (d * Uy) @ U.T) / np.clip(1.0 - hh, 1e-9, None)
            mses = np.mean(loos ** 2, axis=1)
            best = int(np.argmin(mses))
            if mses[best] < np.mean(loo ** 2):          # else the infinite penalty: the anchor alone
                alpha = float(RIDGE_ALPHAS[best])
                shrink = s / (s ** 2 + alpha)
                scores = U * s
                state.update(alpha=alpha, w=Vt.T @ (shrink * Uy), vt=Vt, shrink=shrink, uy=Uy,
                             score_lo=scores.min(axis=0), score_hi=scores.max(axis=0))
                loo, h = loos[best], hh[best]
    fitted_w = state["w"]
    beta = np.linalg.solve(R, Q.T @ (y - Zr @ fitted_w)) if rest else np.linalg.solve(R, Q.T @ y)
    mse = float(np.mean(loo ** 2))
    fitted = C @ beta + (Zr @ fitted_w if rest else 0.0)
    state.update(rss=float(np.sum((y - fitted) ** 2)), beta=beta, loo_residuals=loo, loo_rmse=float(np.sqrt(mse)),
                 s2=float(mse / (1.0 + np.mean(h))), correction=bool(state["alpha"] < float("inf")))
    return state


def predict_anchored(state: dict, Z: np.ndarray, with_excess: bool = False):
    """(mean, predictive standard deviation[, guard excess]) of rows Z (standardised). The
    correction's principal-component scores are clipped to the training range widened by
    :data:`.ridge.GUARD_MARGIN` (as ridge's guard); the anchor is never clipped: following the
    computed energy beyond the members is its purpose."""
    Z = np.asarray(Z, dtype=float)
    C = _unpenalised(Z, state["fixed"])
    beta = np.asarray(state["beta"], dtype=float)
    mean = C @ beta
    lev = np.einsum("ij,jk,ik->i", C, np.asarray(state["ctc_inv"]), C)
    excess = np.zeros(Z.shape[0])
    if state.get("correction"):
        rest = state["rest"]
        G = np.asarray(state["G"], dtype=float)
        Zr = Z[:, rest]
        Zp = Zr - C @ G
        vt = np.asarray(state["vt"], dtype=float)
        raw = Zp @ vt.T
        lo, hi = np.asarray(state["score_lo"]), np.asarray(state["score_hi"])
        width = np.maximum(hi - lo, 1e-12)
        T = np.clip(raw, lo - GUARD_MARGIN * width, hi + GUARD_MARGIN * width)
        shrink, uy = np.asarray(state["shrink"]), np.asarray(state["uy"])
        w_scores = shrink * uy
        # The fit's prediction is C·β + Zr·w = C·(β + G·w) + Zp·w (Zp the part of Zr C does not explain).
        mean = C @ (beta + G @ np.asarray(state["w"])) + T @ w_scores
        lev = lev + np.sum((T * shrink) ** 2, axis=1)
        excess = np.abs((raw - T) @ w_scores) / np.sqrt(max(state["s2"], 1e-300))
    std = np.sqrt(state["s2"] * (1.0 + lev))
    return (mean, std, excess) if with_excess else (mean, std)


def end_splits(anchor: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
    """(train, test) index pairs: the lowest and the highest quarter of computed energies held out."""
    n = anchor.size
    if n < END_SPLIT_MIN:
        return []
    order = np.argsort(anchor, kind="stable")
    q = max(2, n // 4)
    return [(np.sort(order[q:]), order[:q]), (np.sort(order[:-q]), order[-q:])]


def choose(Z: np.ndarray, y: np.ndarray, fixed: list[int], *, free_state: dict, refit_free) -> dict:
    """The anchored state with the candidate of lowest inner score in ``choice``; ``free_state``
    the free learner fitted on every member, ``refit_free(train_idx)`` that learner refitted
    on a subset (for the end splits). The result holds every candidate's state and scores."""
    from .learners import inner_mse, predict_state

    anchor_only = fit_anchored(Z, y, fixed, correction=False)
    corrected = fit_anchored(Z, y, fixed, correction=True)
    cands = {"anchor": anchor_only, "free": free_state}
    if corrected["correction"]:
        cands["anchor+correction"] = corrected
    loo = {k: (float(st["loo_rmse"]) ** 2 if k != "free" else inner_mse(st)) for k, st in cands.items()}
    ends = {k: [] for k in cands}
    for train, test in end_splits(Z[:, fixed[0]]):
        for k in cands:
            if k == "free":
                st = refit_free(train)
                pred = predict_state(st, Z[test])[0]
            else:
                try:
                    st = fit_anchored(Z[train], y[train], fixed, correction=(k == "anchor+correction"))
                except ValueError:
                    ends[k].append(float("inf"))
                    continue
                pred = predict_anchored(st, Z[test])[0]
            ends[k].append(float(np.mean((pred - y[test]) ** 2)))
    score = {k: float(np.mean([loo[k], *ends[k]])) for k in cands}
    chosen = min(score, key=lambda k: (score[k], CHOICES.index(k)))
    return {"kind": "anchored", "choice": chosen, "fixed": list(fixed),
            "candidates": {k: v for k, v in cands.items() if k != "free"}, "free": free_state,
            "scores": {k: {"score_rmse": float(np.sqrt(score[k])), "loo_rmse": float(np.sqrt(loo[k])),
                           "end_rmse": [float(np.sqrt(e)) for e in ends[k]]} for k in cands}}


def chosen_state(state: dict) -> dict:
    """The state that predicts: the free learner's, or the chosen anchored candidate's."""
    return state["free"] if state["choice"] == "free" else state["candidates"][state["choice"]]


def calibration(state: dict, mean: float, scale: float, level: float = 0.95) -> dict:
    """The anchor alone as a line in the computed energy's own unit: target = a + b·E_computed,
    with ``level`` intervals (t, from the least-squares covariance), the residual SD and n;
    ``mean``, ``scale`` the standardisation of the computed-energy column."""
    from scipy import stats

    st = state["candidates"]["anchor"]
    beta = np.asarray(st["beta"], dtype=float)
    cov_z = np.asarray(st["ctc_inv"], dtype=float)[:2, :2]
    n, c = int(st["n"]), len(st["fixed"]) + 1
    s2 = float(st["rss"]) / max(n - c, 1)
    # Back from the standardised anchor z = (E − mean)/scale: b = β1/scale, a = β0 − β1·mean/scale.
    J = np.array([[1.0, -mean / scale], [0.0, 1.0 / scale]])
    ab = J @ beta[:2]
    cov = s2 * J @ cov_z @ J.T
    t = float(stats.t.ppf(0.5 + level / 2, max(n - c, 1)))
    se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    return {"a": float(ab[0]), "b": float(ab[1]), "a_ci95": [float(ab[0] - t * se[0]), float(ab[0] + t * se[0])],
            "b_ci95": [float(ab[1] - t * se[1]), float(ab[1] + t * se[1])], "residual_sd": float(np.sqrt(s2)),
            "n": n}
