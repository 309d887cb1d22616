"""Which route wins a regime, decided on the same held-out members, never by default.

Candidates are the descriptor routes (two-stage, hybrid, direct) and the family mean; a
curve-only model compares the curve fed the true reaction energy with the family mean. A
candidate wins only when it beats every other one (:func:`.metrics.judge`: a difference clear
at 95 % *and* at least the practical margin); otherwise the regime is a ``tie``. No route is
preferred on a tie: the facts returned here say which routes are equivalent within the
margin, which the members cannot tell apart, whether any route beats the family mean, and
which members are behind the large misses. :func:`recommendation` puts the regimes into one
sentence of advice.
"""

from __future__ import annotations

import numpy as np

from .metrics import MARGIN_KCAL, bootstrap_indices, judge, largest_misses, paired_comparison

PHYSICS_ROUTES = ("two_stage", "hybrid", "structure_curve")
DESCRIPTOR_CANDIDATES = ("two_stage", "hybrid", "structure_curve", "direct")
CANDIDATES = DESCRIPTOR_CANDIDATES + ("family_mean",)
CURVE_ONLY_CANDIDATES = ("curve_on_true_energy", "family_mean")


def decide(errors: dict[str, np.ndarray], ids, random_state: int = 0, margin: float = MARGIN_KCAL) -> dict:
    """Winner and the facts behind it for one regime.

    ``errors``: route → signed errors (predicted − computed, kcal/mol) of the held-out
    members, NaN where a member was not held out; ``ids`` the members' ids; ``margin`` the
    practical margin's floor (kcal/mol, :func:`.metrics.practical_margin`).
    """
    pool = CANDIDATES if "direct" in errors else CURVE_ONLY_CANDIDATES
    names = [r for r in pool if r in errors]
    tested = np.all([np.isfinite(errors[r]) for r in names], axis=0)
    err = {r: np.asarray(errors[r], dtype=float)[tested] for r in names}
    n = int(tested.sum())
    if n < 3:
        return {"winner": "tie", "pairs": {}, "beats_mean": [], "tied": [], "leader_beats": [], "equivalent": [],
                "n_test": n, "misses": {}, "margin": margin}
    idx = bootstrap_indices(n, random_state=random_state)
    mae = {r: float(np.mean(np.abs(err[r]))) for r in names}
    pairs = {(a, b): judge(paired_comparison(err[a], err[b], idx), mae[a], mae[b], margin)
             for a in names for b in names if a != b}
    winners = [a for a in names if all(pairs[(a, b)].beats for b in names if b != a)]
    best = min(names, key=mae.get)
    others = [r for r in names if r != best]
    kept_ids = np.asarray(ids, dtype=object)[tested]
    return {
        "winner": winners[0] if winners else "tie",
        "pairs": {f"{a}_vs_{b}": c for (a, b), c in pairs.items()},
        "beats_mean": [a for a in names if a != "family_mean" and pairs[(a, "family_mean")].beats],
        # On a tie: the lowest-MAE candidate with every one it does not beat, those it does beat,
        # and those shown equivalent to it.
        "tied": [] if winners else [best] + [r for r in others if not pairs[(best, r)].beats],
        "leader_beats": [] if winners else [r for r in others if pairs[(best, r)].beats],
        "equivalent": [] if winners else [r for r in others if pairs[(best, r)].equivalent],
        "n_test": n,
        "misses": {r: largest_misses(err[r], kept_ids) for r in names if r != "family_mean"},
        "margin": margin,
    }


def primary_route(loo_decision, loo_routes: dict) -> str:
    """The route a model predicts with: the leave-one-out winner among the descriptor
    routes; on a tie (or when only the family mean wins) the descriptor route with the lowest
    leave-one-out MAE — chosen by the numbers, whichever kind of route it is."""
    winner = loo_decision.winner
    if winner in DESCRIPTOR_CANDIDATES:
        return winner
    routes = [r for r in DESCRIPTOR_CANDIDATES if loo_routes.get(r)]
    if not routes:
        return "two_stage"
    return min(routes, key=lambda r: loo_routes[r].mae)


LEARNER_WORDS = {"ridge": "ridge regression", "pls": "partial least squares", "gp": "Gaussian process",
                 "forest": "random forest", "anchor": "anchored on the computed energy",
                 "anchor+correction": "anchored on the computed energy, with a correction"}
#: Where each regime's held-out members lie, as the recommendation names them.
WHERE = {"loo": "members like those computed", "downhill": "members more exergonic than those computed",
         "uphill": "members more endergonic than those computed", "clusters": "new kinds of substituent"}


def route_words(route: str, black_box: str | None = None) -> str:
    """A route's name as a person reads it; the black box with its learner."""
    if route == "direct":
        return f"the black box ({LEARNER_WORDS.get(black_box, black_box)})" if black_box else "the black box"
    return {"two_stage": "the two-stage route", "hybrid": "the hybrid route", "family_mean": "the family mean",
            "curve_on_true_energy": "the curve fed computed reaction energies",
            "structure_curve": "the structure-dependent curve route",
            "structure_curve_on_true_energy": "the structure-dependent curve fed computed reaction energies",
            }.get(route, route)


def regime_choice(regime) -> tuple[str, list[str]]:
    """(kind, routes) a regime supports: ("wins", [route]); ("only", [route]) when one route
    beats the family mean without beating the other routes; ("tie", the routes that beat the
    family mean and that the leader does not beat), ``kind`` "equivalent" when all of them are
    shown equivalent to the leader; ("mean", []) when nothing beats the family mean."""
    get = regime.get if isinstance(regime, dict) else (lambda k, d=None: getattr(regime, k, d))
    winner, beats_mean = get("winner"), list(get("beats_mean") or [])
    if winner not in (None, "tie", "family_mean"):
        return "wins", [winner]
    tied = [r for r in (get("tied") or []) if r in beats_mean]
    if not beats_mean or not tied:
        return "mean", []
    if len(tied) == 1:
        return "only", tied
    same = set(get("equivalent") or [])
    return ("equivalent" if all(r in same for r in tied[1:]) else "tie"), tied


def _either(names: list[str]) -> str:
    """"the two-stage route or the hybrid route" → "the two-stage or the hybrid route"."""
    if len(names) > 1 and all(n.endswith(" route") for n in names):
        names = [n.removesuffix(" route") for n in names[:-1]] + [names[-1]]
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " or " + names[-1]


def recommendation(regimes: dict, *, primary: str, black_box: str | None = None) -> str:
    """One sentence of advice from the regimes' decisions: which route to use for members like
    those computed, and beyond them in each direction (and for new kinds of substituent); or
    that nothing beats the family mean. Regimes with the same advice share a clause. Unit-free
    (no numbers), so it reads the same in any unit."""
    advice: dict[str, list[str]] = {}
    any_route = False
    for name, where in WHERE.items():
        reg = regimes.get(name)
        if reg is None or (reg.get("skipped") if isinstance(reg, dict) else getattr(reg, "skipped", "")):
            continue
        kind, routes = regime_choice(reg)
        names = [route_words(r, black_box) for r in routes]
        if kind == "mean":
            action = "nothing beats the family mean: compute their barriers"
        elif kind == "wins":
            action = f"use {names[0]}"
        elif kind == "only":
            action = f"use {names[0]} (the only route that beats the family mean there)"
        else:
            why = "equivalent within the margin" if kind == "equivalent" else "these members cannot tell them apart"
            action = f"use {_either(names)} ({why})"
        any_route = any_route or kind != "mean"
        advice.setdefault(action, []).append(where)
    if not advice:
        return "Not validated: no regime could be run."
    if not any_route:
        return ("Nothing beats the family mean in any regime tested: take the family mean as the estimate, or "
                "compute the barriers that matter.")
    clauses = []
    for action, wheres in advice.items():
        joined = wheres[0] if len(wheres) == 1 else ", ".join(wheres[:-1]) + " and " + wheres[-1]
        clauses.append(f"for {joined}, {action}")
    text = "; ".join(clauses)
    text = text[:1].upper() + text[1:] + f". The model predicts with {route_words(primary, black_box)}"
    loo = regimes.get("loo")
    if loo is not None and regime_choice(loo)[0] == "mean":
        return text + " (the lowest leave-one-out MAE): read its barriers as no better than the family mean."
    return text + "."
