"""Which route wins a regime, decided on the same held-out members, never by default.

Candidates are the descriptor routes (two-stage, hybrid, direct) and the family mean; a
curve-only model compares the curve fed the true reaction energy with the family mean. A
candidate wins only when it clearly beats every other one (:func:`.metrics.beats`: a 95 %
bootstrap interval of the MAE difference below zero without squared errors clearly larger,
or the reverse); otherwise the regime is a ``tie``. No route is preferred on a tie: the
facts returned here say which routes the data cannot tell apart, whether any route beats
the family mean, and which members are behind the large misses.
"""

from __future__ import annotations

import numpy as np

from .metrics import beats, bootstrap_indices, largest_misses, paired_comparison

PHYSICS_ROUTES = ("two_stage", "hybrid")
CANDIDATES = ("two_stage", "hybrid", "direct", "family_mean")
CURVE_ONLY_CANDIDATES = ("curve_on_true_energy", "family_mean")


def decide(errors: dict[str, np.ndarray], ids, random_state: int = 0) -> dict:
    """Winner and the facts behind it for one regime.

    ``errors``: route → signed errors (kcal/mol) of the held-out members, NaN where a member
    was not held out; ``ids`` the members' ids.
    """
    pool = CANDIDATES if "direct" in errors else CURVE_ONLY_CANDIDATES
    names = [r for r in pool if r in errors]
    tested = np.all([np.isfinite(errors[r]) for r in names], axis=0)
    err = {r: np.asarray(errors[r], dtype=float)[tested] for r in names}
    n = int(tested.sum())
    if n < 3:
        return {"winner": "tie", "pairs": {}, "beats_mean": [], "tied": [], "leader_beats": [], "n_test": n,
                "misses": {}}
    idx = bootstrap_indices(n, random_state=random_state)
    pairs = {(a, b): paired_comparison(err[a], err[b], idx) for a in names for b in names if a != b}
    winners = [a for a in names if all(beats(pairs[(a, b)]) for b in names if b != a)]
    kept_ids = np.asarray(ids, dtype=object)[tested]
    return {
        "winner": winners[0] if winners else "tie",
        "pairs": {f"{a}_vs_{b}": c for (a, b), c in pairs.items()},
        "beats_mean": [a for a in names if a != "family_mean" and beats(pairs[(a, "family_mean")])],
        "tied": [] if winners else _tied_best(names, err, pairs),
        "leader_beats": [] if winners else _leader_beats(names, err, pairs),
        "n_test": n,
        "misses": {r: largest_misses(err[r], kept_ids) for r in names if r != "family_mean"},
    }


def _tied_best(names, err, pairs) -> list[str]:
    """On a tie: the lowest-MAE candidate and every candidate it does not clearly beat."""
    best = min(names, key=lambda r: float(np.mean(np.abs(err[r]))))
    return [best] + [r for r in names if r != best and not beats(pairs[(best, r)])]


def _leader_beats(names, err, pairs) -> list[str]:
    """On a tie: the candidates the lowest-MAE candidate does clearly beat."""
    best = min(names, key=lambda r: float(np.mean(np.abs(err[r]))))
    return [r for r in names if r != best and beats(pairs[(best, r)])]


def primary_route(loo_decision, loo_routes: dict) -> str:
    """The route a model predicts with: the leave-one-out winner among the descriptor
    routes; on a tie (or when only the family mean wins) the descriptor route with the lowest
    leave-one-out MAE — chosen by the numbers, whichever kind of route it is."""
    winner = loo_decision.winner
    if winner in ("two_stage", "hybrid", "direct"):
        return winner
    routes = [r for r in ("two_stage", "hybrid", "direct") if loo_routes.get(r)]
    if not routes:
        return "two_stage"
    return min(routes, key=lambda r: loo_routes[r].mae)
