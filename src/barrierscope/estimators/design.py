"""Which candidates to compute next: experimental design on the fitted curve and energy stage.

Computing a candidate's transition state gives its barrier and, with it, its reaction energy.
Before the calculation the reaction energy is known only as the model's prediction Ê ± σ_E
(or exactly, when the candidate's reaction energy is already computed), so every score is
an expectation over that uncertainty (five-point Gauss–Hermite quadrature).

- ``parameters`` (D-optimal design): the gain log det(I + M_c) − log det(I), with I the
  curve parameters' information (the inverse of their covariance) and M_c = E[J(E)ᵀJ(E)]/s²
  the information the candidate would add (J the curve's Jacobian in its parameters);
- ``predictions`` (integrated-variance design): the expected share of the summed predictive
  variance of the barrier over the whole candidate pool that the calculation would remove —
  the curve part J·I⁻¹·Jᵀ and, for a structure model, the energy stage's part α²·σ²·zᵀA⁻¹z
  (ridge-type posterior with A = ZᵀZ + λI), each updated by Sherman–Morrison.

A batch is picked greedily, updating I (and A) after each pick, so it is not N copies of one
idea (A. C. Atkinson, A. N. Donev, R. D. Tobias, *Optimum Experimental Designs, with SAS*,
Oxford 2007, ch. 10–12). On top of that, a candidate that nearly duplicates an earlier pick —
within ``min_gap`` of its reaction energy and closer to it in descriptor space than the
training members' typical nearest-neighbour distance — is skipped: it would repeat a
calculation, not extend the family. Energies in kcal/mol.
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


def _expected_information(relation, theta, mu: float, sd: float, *, s2: float) -> np.ndarray:
    es = mu + sd * _GH_X if sd > 0 else np.array([mu])
    ws = _GH_W if sd > 0 else np.array([1.0])
    J = relation.jacobian(es, theta)
    return np.einsum("k,kp,kq->pq", ws, J, J) / s2


def _regularised(info: np.ndarray) -> np.ndarray:
    eps = 1e-8 * max(float(np.trace(info)) / info.shape[0], 1e-12)
    return info + eps * np.eye(info.shape[0])


def _energy_part(cands: Candidates, state: dict, alpha_pool: np.ndarray, A_inv: np.ndarray) -> np.ndarray:
    """Per candidate: the drop in the pool's summed energy-stage variance, α²·σ²·(z·A⁻¹z_c)²
    summed over the pool, divided by (1 + z_cᵀA⁻¹z_c) (Sherman–Morrison)."""
    Z = cands.Z
    V = Z @ A_inv                                   # row c: A⁻¹z_c
    H = Z.T @ (alpha_pool[:, None] ** 2 * Z)        # Σ_j α_j² z_j z_jᵀ
    gain = state["s2"] * np.einsum("cq,qr,cr->c", V, H, V) / (1.0 + np.einsum("cq,cq->c", Z, V))
    return np.where(cands.given, 0.0, gain)


#: With ``domain="prefer"`` an out-of-domain candidate is picked over the best in-domain one
#: only when it gains at least this many times as much.
CLEARLY_MORE = 1.5
DOMAINS = ("prefer", "only", "any")


def pick(curve, cands: Candidates, k: int, goal: str = "parameters", *, energy_state: dict | None = None,
         min_gap: float = 0.5, near: float = 0.0, domain: str = "any") -> list[dict]:
    """Greedy batch of up to ``k`` candidates: [{"index", "score", "best", "domain"}] in pick order.

    ``score`` is the pick's gain at the moment it was picked, given the picks before it: the
    log-determinant gain (``parameters``) or the share of the pool's summed predictive
    variance *before any pick* removed (``predictions``), both dimensionless, so scores of one
    batch compare. ``best``: no other available candidate gained more. ``domain``: ``any``
    (gain alone), ``only`` (in-domain candidates only) or ``prefer`` (the best in-domain one
    unless an out-of-domain one gains :data:`CLEARLY_MORE` times as much); each pick's
    ``domain`` says what happened ("", "preferred in domain: x× less", "out of domain: x× more").
    A candidate within ``min_gap`` (kcal/mol) of an earlier pick's reaction energy and within
    ``near`` of it in standardised descriptor space is skipped as a near-duplicate.
    """
    if goal not in GOALS:
        raise ValueError(f"unknown goal {goal!r}; valid choices: {', '.join(GOALS)}")
    if domain not in DOMAINS:
        raise ValueError(f"unknown domain rule {domain!r}; valid choices: {', '.join(DOMAINS)}")
    rel, theta = curve.relation_, np.asarray(curve.params_, dtype=float)
    s2 = float(curve.sigma_) ** 2 if np.isfinite(curve.sigma_) and curve.sigma_ > 0 else 1.0
    info = _regularised(np.linalg.pinv(np.asarray(curve.cov_, dtype=float), hermitian=True))
    M = np.stack([_expected_information(rel, theta, e, sd, s2=s2) for e, sd in zip(cands.energy, cands.energy_sd)])
    Jpool = rel.jacobian(cands.energy, theta)
    G = Jpool.T @ Jpool
    use_energy = goal == "predictions" and cands.Z is not None and energy_state is not None
    if use_energy:
        alpha_pool = rel.slope(cands.energy, theta)
        A_inv = np.linalg.inv(energy_state["ZtZ"] + energy_state["lambda"] * np.eye(cands.Z.shape[1]))
    available = np.ones(cands.energy.size, dtype=bool)
    inside = np.asarray(cands.in_domain, dtype=bool)
    if domain == "only":
        available &= inside
    picks = []
    first_total = None
    while len(picks) < k and available.any():
        cov = np.linalg.inv(info)
        if goal == "parameters":
            gain = np.linalg.slogdet(info + M)[1] - np.linalg.slogdet(info)[1]
        else:
            # Summed predictive variance of the pool now, and what each candidate would remove.
            total = float(np.sum(G * cov))
            gain = np.einsum("cpq,pq->c", cov - np.linalg.inv(info + M), G)
            if use_energy:
                total += float(energy_state["s2"] * np.sum(alpha_pool ** 2 *
                                                           np.einsum("cq,qr,cr->c", cands.Z, A_inv, cands.Z)))
                gain = gain + _energy_part(cands, energy_state, alpha_pool, A_inv)
            first_total = total if first_total is None else first_total
            gain = gain / first_total if first_total > 0 else gain
        masked = np.where(available, gain, -np.inf)
        best, note = _domain_rule(gain, available, inside, int(np.argmax(masked)), domain)
        top = float(np.max(masked))
        picks.append({"index": best, "score": float(gain[best]), "best": bool(gain[best] >= top - 1e-12),
                      "domain": note})
        available[best] = False
        info = info + M[best]
        if use_energy and not cands.given[best]:
            v = A_inv @ cands.Z[best]
            A_inv = A_inv - np.outer(v, v) / (1.0 + cands.Z[best] @ v)
        close = np.abs(cands.energy - cands.energy[best]) < min_gap
        if cands.Z is not None:  # with structures, a near-duplicate must also look alike
            close &= np.linalg.norm(cands.Z - cands.Z[best], axis=1) < near
        available &= ~close
    return picks


def _domain_rule(gain, available, inside, best: int, domain: str) -> tuple[int, str]:
    """``--domain prefer``: the best in-domain candidate unless an out-of-domain one gains
    :data:`CLEARLY_MORE` times as much; (the pick, what the rule did in words or "")."""
    if domain != "prefer" or inside[best] or not (available & inside).any():
        return best, ""
    best_in = int(np.argmax(np.where(available & inside, gain, -np.inf)))
    ratio = gain[best] / gain[best_in] if gain[best_in] > 0 else np.inf
    if ratio >= CLEARLY_MORE:
        return best, f"out of domain: {ratio:.3g}× the best in-domain gain"
    return best_in, f"preferred in domain: an out-of-domain candidate would gain {ratio:.3g}× as much"


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
