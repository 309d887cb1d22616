"""The verdict in words: per regime, who wins (or that the data cannot tell), against the
family mean and chance, with the large misses named and the weak link of the chain shown.

Takes a validation record already in the user's unit (:func:`.units.in_unit`).
"""

from __future__ import annotations

from ..validation.splits import LOO_MAX

NAMES = {"two_stage": "two-stage", "hybrid": "hybrid", "direct": "black box", "family_mean": "family mean",
         "curve_on_true_energy": "curve on the true reaction energy"}
REGIME_NAMES = {"loo": "Leave-one-out (interpolation)",
                "downhill": "Downhill (the most exergonic quarter held out)",
                "uphill": "Uphill (the most endergonic quarter held out)",
                "clusters": "Leave-cluster-out (new kinds of substituent)"}
#: RMSE above this multiple of MAE means a few large misses dominate (for normal errors the
#: ratio is about 1.25: common practice).
MISS_RATIO = 2.0


def _g(v) -> str:
    return "—" if v is None else f"{v:.3g}"


def _maes(routes: dict, names) -> str:
    return ", ".join(f"{NAMES[r]} {_g(routes[r]['mae'])}" for r in names if routes.get(r))


def _misses_text(regime: dict, unit: str) -> str:
    out = []
    for r, m in regime["routes"].items():
        if r in ("family_mean", "curve_on_true_energy") or not m or m["mae"] <= 0:
            continue
        if m["rmse"] > MISS_RATIO * m["mae"] and regime.get("misses", {}).get(r):
            who = ", ".join(f"{i} ({e:+.3g})" for i, e in regime["misses"][r])
            out.append(f"the {NAMES[r]}'s RMSE ({_g(m['rmse'])}) is {m['rmse'] / m['mae']:.1f}× its MAE, "
                       f"from large misses at {who}")
    text = "; ".join(out)
    return text[:1].upper() + text[1:] + "." if text else ""


def regime_sentence(name: str, regime: dict, unit: str) -> str:
    """One regime in one or two sentences."""
    title = REGIME_NAMES.get(name, name)
    if name == "loo" and str(regime.get("scheme", "")).endswith("-fold"):
        title = (f"{regime['scheme']} cross-validation (interpolation; leave-one-out above {LOO_MAX} members would "
                 f"refit every route once per member)")
    if regime.get("skipped"):
        return f"{title}: not run — {regime['skipped']}."
    routes, winner = regime["routes"], regime["winner"]
    shown = [r for r in ("two_stage", "hybrid", "direct", "curve_on_true_energy") if routes.get(r)]
    mean = routes.get("family_mean", {}).get("mae")
    numbers = f"MAE {_maes(routes, shown)} {unit} (family mean {_g(mean)}; {regime['n_test']} held out)"
    if winner == "family_mean" or not regime.get("beats_mean"):
        head = f"{title}: no route beats the family mean — {numbers}."
    elif winner in NAMES:
        head = f"{title}: the {NAMES[winner]} wins — {numbers}."
    else:
        tied = [r for r in regime.get("tied", []) if r in NAMES]
        beaten = [NAMES[r] for r in regime.get("leader_beats", [])]
        head = (f"{title}: tie between {' and '.join(NAMES[r] for r in tied) or 'the routes'}; these members cannot "
                f"tell them apart" + (f" (the {NAMES[tied[0]]} does clearly beat the {' and the '.join(beaten)})"
                                      if tied and beaten else "") + f" — {numbers}.")
    misses = _misses_text(regime, unit)
    return head + (" " + misses if misses else "")


def weak_link(record: dict, unit: str, tiers=()) -> str:
    e, routes = record.get("energy_stage"), record["routes"]
    cte, ts = routes.get("curve_on_true_energy"), routes.get("two_stage")
    if not e or not cte or not ts:
        return ""
    text = (f"The energy stage predicts reaction energies with leave-one-out MAE {_g(e['mae'])} {unit}; fed the "
            f"true reaction energies the curve reaches MAE {_g(cte['mae'])}")
    if cte["mae"] >= 0.85 * ts["mae"]:
        return text + "."
    if "xtb" in tiers:
        advice = ("computing reaction energies for the members you screen (screen --energy) pays more than any "
                  "descriptor: the xtb tier is already in use")
    else:
        advice = ("computed reaction energies pay: your own (screen --energy), or GFN2-xTB ones as a descriptor "
                  "(reaction input with --tiers 2d,xtb)")
    return text + f" — the energy stage is the weak link: {advice}."


def energy_link_sentence(record: dict, unit: str) -> str:
    """Said plainly when the barrier does not follow the reaction energy in leave-one-out."""
    loo = record.get("validation", {}).get("loo", {})
    if loo.get("curve_beats_mean") is not False:
        return ""
    c, m = record["routes"]["curve_on_true_energy"], record["routes"]["family_mean"]
    return (f"The barrier does not follow the reaction energy in this family: fed the members' own reaction energies, "
            f"the curve does no better than the family mean (MAE {_g(c['mae'])} against {_g(m['mae'])} {unit}). "
            f"The physics-constrained routes have nothing to stand on here; a descriptor route that does well does so "
            f"without the curve.")


def chance_sentence(record: dict, unit: str) -> str:
    y = record.get("y_randomization")
    if not y:
        return ""
    best = min((m["mae"] for r, m in record["routes"].items() if m and r in ("two_stage", "hybrid", "direct")),
               default=None)
    if best is not None and y["mae_mean"] <= 1.1 * best:
        return (f"Refitted on shuffled targets the two-stage route reaches MAE {_g(y['mae_mean'])} {unit}, as good "
                f"as the real routes: these descriptors carry no signal the routes could use.")
    return ""


def verdict_text(record: dict, unit: str, tiers=()) -> str:
    """The whole verdict: every regime, chance, the weak link, and the regimes' disagreement."""
    regimes = record.get("validation", {})
    if record["routes"].get("direct") is None:
        c = record["routes"]["curve_on_true_energy"]
        parts = [f"Curve-only model: from a computed reaction energy the curve predicts barriers with leave-one-out "
                 f"MAE {_g(c['mae'])} {unit} (family mean {_g(record['routes']['family_mean']['mae'])})."]
        parts += [regime_sentence(k, v, unit) for k, v in regimes.items() if k != "loo"]
        parts.append(energy_link_sentence(record, unit))
        return " ".join(p for p in parts if p)
    parts = [energy_link_sentence(record, unit)] + [regime_sentence(k, v, unit) for k, v in regimes.items()]
    winners = {k: v["winner"] for k, v in regimes.items() if not v.get("skipped")}
    decided = {k: w for k, w in winners.items() if w in ("two_stage", "hybrid", "direct")}
    if len(set(decided.values())) > 1:
        parts.append("The regimes disagree (" + ", ".join(f"{k}: {NAMES[w]}" for k, w in decided.items()) +
                     "): choose the route by where the members you will predict lie.")
    parts += [chance_sentence(record, unit)]
    if regimes.get("loo", {}).get("curve_beats_mean") is not False:   # no weak link when there is no chain
        parts.append(weak_link(record, unit, tiers))
    return " ".join(p for p in parts if p)
