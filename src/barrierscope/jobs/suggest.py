"""What to compute next: the candidates that would most sharpen the curve or the predictions.

Computing a candidate's transition state gives its barrier and, with it, its reaction energy.
Before the calculation the reaction energy is known only as the model's prediction Ê ± σ_E
(or exactly, when the candidate's reaction energy is already computed), so every score is
an expectation over that uncertainty (five-point Gauss–Hermite quadrature).

- ``parameters`` (D-optimal design): the gain log det(I + M_c) − log det(I), with I the
  curve parameters' information (the inverse of their covariance) and M_c = E[J(E)ᵀJ(E)]/s²
  the information the candidate would add (J the curve's Jacobian in its parameters);
- ``predictions`` (integrated-variance design): the expected drop in the summed predictive
  variance of the barrier over the whole candidate pool — the curve part J·I⁻¹·Jᵀ and, for
  a structure model, the energy stage's part α²·σ²·zᵀA⁻¹z (ridge-type posterior with
  A = ZᵀZ + λI), each updated by Sherman–Morrison.

A batch is picked greedily, updating I (and A) after each pick, so it is not N copies of
one idea (A. C. Atkinson, A. N. Donev, R. D. Tobias, *Optimum Experimental Designs, with
SAS*, Oxford 2007, ch. 10–12).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

GOALS = ("parameters", "predictions")
_GH_X, _GH_W = np.polynomial.hermite_e.hermegauss(5)
_GH_W = _GH_W / _GH_W.sum()


@dataclass
class Candidates:
    ids: list
    energy: np.ndarray          # kcal/mol, predicted or given
    energy_sd: np.ndarray       # kcal/mol (0 where given)
    Z: np.ndarray | None        # standardised descriptors (structure models)
    in_domain: np.ndarray
    ad_distance: np.ndarray
    given: np.ndarray


def _expected_information(relation, theta, mu: float, sd: float, s2: float) -> np.ndarray:
    es = mu + sd * _GH_X if sd > 0 else np.array([mu])
    ws = _GH_W if sd > 0 else np.array([1.0])
    J = relation.jacobian(es, theta)
    return np.einsum("k,kp,kq->pq", ws, J, J) / s2


def _regularised(info: np.ndarray) -> np.ndarray:
    eps = 1e-8 * max(float(np.trace(info)) / info.shape[0], 1e-12)
    return info + eps * np.eye(info.shape[0])


def pick(curve, cands: Candidates, k: int, goal: str = "parameters", energy_state: dict | None = None) -> list[dict]:
    """Greedy batch of ``k`` candidate indices with scores; see the module docstring."""
    if goal not in GOALS:
        raise ValueError(f"unknown goal {goal!r}; valid choices: {', '.join(GOALS)}")
    rel, theta = curve.relation_, np.asarray(curve.params_, dtype=float)
    s2 = float(curve.sigma_) ** 2 if np.isfinite(curve.sigma_) and curve.sigma_ > 0 else 1.0
    info = _regularised(np.linalg.pinv(np.asarray(curve.cov_, dtype=float), hermitian=True))
    M = np.stack([_expected_information(rel, theta, e, sd, s2) for e, sd in zip(cands.energy, cands.energy_sd)])
    n = cands.energy.size
    chosen: list[int] = []
    scores: list[float] = []
    # energy-stage posterior (predictions goal, structure models)
    use_energy = goal == "predictions" and cands.Z is not None and energy_state is not None
    if use_energy:
        Z = cands.Z
        A_inv = np.linalg.inv(energy_state["ZtZ"] + energy_state["lambda"] * np.eye(Z.shape[1]))
        alpha_pool = rel.slope(cands.energy, theta)
        se2 = energy_state["s2"]
    Jpool = rel.jacobian(cands.energy, theta)
    for _ in range(min(k, n)):
        best, best_gain = None, -np.inf
        cov = np.linalg.inv(info)
        logdet0 = np.linalg.slogdet(info)[1]
        for c in range(n):
            if c in chosen:
                continue
            if goal == "parameters":
                gain = np.linalg.slogdet(info + M[c])[1] - logdet0
            else:
                new_cov = np.linalg.inv(info + M[c])
                before = np.einsum("np,pq,nq->n", Jpool, cov, Jpool)
                after = np.einsum("np,pq,nq->n", Jpool, new_cov, Jpool)
                gain = float(np.sum(before - after))
                if use_energy and not cands.given[c]:
                    zc = Z[c]
                    v = A_inv @ zc
                    gain += float(se2 * np.sum(alpha_pool ** 2 * (Z @ v) ** 2) / (1.0 + zc @ v))
            if gain > best_gain:
                best, best_gain = c, gain
        chosen.append(best)
        scores.append(float(best_gain))
        info = info + M[best]
        if use_energy and not cands.given[best]:
            zc = Z[best]
            v = A_inv @ zc
            A_inv = A_inv - np.outer(v, v) / (1.0 + zc @ v)
    return [{"index": int(c), "score": s} for c, s in zip(chosen, scores)]


def reason(curve, cands: Candidates, c: int, goal: str, train_energy: np.ndarray, threshold: float,
           unit: str = "kcal/mol", factor: float = 1.0) -> str:
    """Why candidate ``c`` was picked, in words a chemist can check."""
    e = float(cands.energy[c])
    lo, hi = float(np.min(train_energy)), float(np.max(train_energy))
    parts = []
    open_ = getattr(curve, "ci_open_", {}) or {}
    params = curve.params_dict()
    where = "its computed" if cands.given[c] else "its predicted"
    if e < lo:
        pinned = "is not yet pinned" if any(open_.get("floor", (False, False))) else "is pinned further"
        parts.append(f"extends the energy span downhill ({where} dE {e / factor:.3g} {unit}, "
                     f"{(lo - e) / factor:.2g} below the lowest member), where the floor {pinned}")
    elif e > hi:
        parts.append(f"extends the energy span uphill ({where} dE {e / factor:.3g} {unit}, "
                     f"{(e - hi) / factor:.2g} above the highest member), where the uphill asymptote is set")
    elif curve.relation_.name == "asymptotic" and abs(e - params["midpoint"]) < params["width"]:
        parts.append(f"sits near the midpoint M ({where} dE {e / factor:.3g} {unit}), where the curvature, "
                     f"and so the width W, is decided")
    else:
        gap = float(np.min(np.abs(train_energy - e)))
        parts.append(f"fills a sparsely sampled part of the curve ({where} dE {e / factor:.3g} {unit}, "
                     f"{gap / factor:.2g} from the nearest member)")
    if not cands.given[c] and cands.energy_sd[c] > 0:
        parts.append(f"its reaction energy is uncertain by ±{cands.energy_sd[c] / factor:.2g}, which the "
                     f"calculation will settle")
    d = cands.ad_distance[c]
    if np.isfinite(d) and np.isfinite(threshold) and d > threshold:
        parts.append(f"far from every training member (distance {d:.2g} > {threshold:.2g}): out of domain, so "
                     f"its current estimate is extrapolation")
    elif not cands.in_domain[c]:
        parts.append("out of domain: its current estimate is extrapolation")
    if goal == "predictions":
        parts.append("computing it would cut the predictive variance over the candidate pool the most")
    return "; ".join(parts)


def energy_state(model) -> dict | None:
    """ZᵀZ, λ and the residual variance of the energy stage (for the predictions goal)."""
    if not model.has_structures or model.domain.train_ is None:
        return None
    Z = model.domain.train_
    Zc = Z - Z.mean(axis=0)
    st = model.two_stage.energy_.state_
    lam = float(st.get("alpha", 1.0)) if st.get("kind") == "ridge" else 1.0
    if "s2" in st:
        s2 = float(st["s2"])
    else:
        rmse = st.get("cv_rmse") or st.get("oob_rmse") or float(np.std(model.training["energy"]))
        s2 = float(rmse) ** 2
    return {"ZtZ": Zc.T @ Zc, "lambda": max(lam, 1e-6), "s2": s2}


def suggest_file(model_path, candidates_path, k: int, goal: str = "parameters", energy_column: str | None = None,
                 energy_units: str | None = None, id_column: str | None = None, cache_dir="default",
                 max_atoms: int = 200) -> dict:
    """The `suggest` job: picks with scores and reasons, plus what was left out and why."""
    from ..io.modelfile import load_model
    from ..io.tables import read_table
    from ..units import factor_to_kcal
    from .screen import ScreenOptions, _engine, predict_chunk

    if k < 1:
        raise ValueError("-k must be at least 1")
    model = load_model(model_path)
    table = read_table(candidates_path)
    if not model.has_structures and energy_column is None:
        energy_column = model.energy_column
    opts = ScreenOptions(energy_column=energy_column, energy_units=energy_units, id_column=id_column,
                         cache_dir=cache_dir, max_atoms=max_atoms)
    engine = _engine(model, cache_dir) if model.has_structures else None
    res, X = predict_chunk(model, table, str(candidates_path), opts, engine, return_features=True)
    ok = (res["status"] == "ok").to_numpy()
    if not ok.any():
        raise ValueError(f"{candidates_path}: no candidate could be predicted (see their statuses with `screen`)")
    if X is not None:
        X = X.iloc[np.flatnonzero(ok)].reset_index(drop=True)
    f = factor_to_kcal(model.units)
    from .screen import unit_slug

    slug = unit_slug(model.units)
    sub = res[ok].reset_index(drop=True)
    cands = Candidates(ids=list(sub["id"]), energy=sub[f"reaction_energy_{slug}"].to_numpy(float) * f,
                       energy_sd=sub[f"reaction_energy_sd_{slug}"].to_numpy(float) * f,
                       Z=None if X is None else model.two_stage.energy_.transform(X),
                       in_domain=sub["in_domain"].to_numpy(bool), ad_distance=sub["ad_distance"].to_numpy(float),
                       given=(sub["reaction_energy_source"] == "given").to_numpy())
    picks = pick(model.curve, cands, k, goal, energy_state(model) if goal == "predictions" else None)
    train_e = np.asarray(model.training["energy"], dtype=float)
    out = []
    for p in picks:
        c = p["index"]
        out.append({"id": str(cands.ids[c]), "score": p["score"],
                    "reason": reason(model.curve, cands, c, goal, train_e, model.domain.threshold_, model.units, f),
                    "energy": float(cands.energy[c]), "energy_sd": float(cands.energy_sd[c]),
                    "energy_given": bool(cands.given[c]), "in_domain": bool(cands.in_domain[c]),
                    "barrier": float(sub.loc[c, f"barrier_{slug}"]) * f})
    return {"goal": goal, "k": k, "units": model.units, "candidates": int(len(res)), "considered": int(ok.sum()),
            "left_out": {str(kind): int(v) for kind, v in res.loc[~ok, "error_kind"].value_counts().items()},
            "picks": out}


def format_suggestions(result: dict) -> str:
    from ..units import factor_to_kcal

    f = factor_to_kcal(result["units"])
    lines = [f"{result['considered']} of {result['candidates']} candidates considered; goal: {result['goal']}"]
    if result["left_out"]:
        lines.append("left out (could not be predicted): " + ", ".join(f"{k} {v}" for k, v in result["left_out"].items()))
    for n, p in enumerate(result["picks"], start=1):
        flag = "" if p["in_domain"] else "  [out of domain]"
        lines.append(f"{n:>2}. {p['id']}  score {p['score']:.3g}  dE {p['energy'] / f:.3g} "
                     f"{result['units']}{flag}\n    {p['reason']}")
    return "\n".join(lines)
