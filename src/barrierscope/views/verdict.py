"""The verdict in words: the recommendation first, then one short line per regime, then what
the chemist should know about the black box, chance and the weak link of the chain.

Takes a fit record already in the user's unit (:func:`.units.in_unit`). Residuals and misses
are signed predicted − computed, said once where they appear.
"""

from __future__ import annotations

from ..validation.splits import LOO_MAX
from ..validation.verdict import DESCRIPTOR_CANDIDATES, LEARNER_WORDS, regime_choice, route_words
from .labels import energy_labels

SHORT = {"two_stage": "two-stage", "hybrid": "hybrid", "direct": "black box", "family_mean": "family mean",
         "curve_on_true_energy": "curve on computed energies", "structure_curve": "structure curve",
         "structure_curve_on_true_energy": "structure curve on computed energies"}
REGIME_NAMES = {"loo": "Leave-one-out (interpolation)",
                "downhill": "Downhill (the most exergonic quarter held out)",
                "uphill": "Uphill (the most endergonic quarter held out)",
                "clusters": "Leave-cluster-out (new kinds of substituent)"}
#: RMSE above this multiple of MAE means a few large misses dominate (for normal errors the
#: ratio is about 1.25: common practice).
MISS_RATIO = 2.0


def _g(v) -> str:
    return "—" if v is None else f"{v:.3g}"


def _black_box(record: dict) -> str | None:
    return (record.get("learners_chosen") or {}).get("direct")


def _numbers(regime: dict, unit: str) -> str:
    routes = regime["routes"]
    shown = [r for r in ("two_stage", "hybrid", "structure_curve", "direct", "curve_on_true_energy",
                        "structure_curve_on_true_energy", "family_mean") if routes.get(r)]
    maes = ", ".join(f"{SHORT[r]} {_g(routes[r]['mae'])}" for r in shown)
    return f"MAE {maes} {unit}; {regime['n_test']} held out"


def _misses_text(regime: dict) -> str:
    out = []
    for r, m in regime["routes"].items():
        if r in ("family_mean", "curve_on_true_energy") or not m or m["mae"] <= 0:
            continue
        if m["rmse"] > MISS_RATIO * m["mae"] and regime.get("misses", {}).get(r):
            who = ", ".join(f"{i} ({e:+.3g})" for i, e in regime["misses"][r])
            out.append(f"{SHORT[r]} RMSE {m['rmse'] / m['mae']:.1f}× its MAE, from {who}")
    return "large misses (predicted − computed): " + "; ".join(out) + "." if out else ""


def _margin_decided(regime: dict) -> bool:
    """Did the margin change this regime's outcome: a leader that clearly beats every other
    candidate, or a route clearly better than the family mean, yet not by the margin?"""
    pairs, tied = regime.get("pairs", {}), regime.get("tied") or []
    names = {k.split("_vs_")[0] for k in pairs}
    lead = tied[0] if tied else None
    would_win = lead is not None and all(pairs.get(f"{lead}_vs_{b}", {}).get("clear") for b in names if b != lead)
    would_beat_mean = any(c.get("clear") and not c.get("beats") for k, c in pairs.items()
                          if k.endswith("_vs_family_mean"))
    return bool(would_win or would_beat_mean)


def regime_title(name: str, regime: dict) -> str:
    title = REGIME_NAMES.get(name, name)
    if name == "loo" and str(regime.get("scheme", "")).endswith("-fold"):
        title = f"{regime['scheme']} cross-validation (interpolation; leave-one-out above {LOO_MAX} members)"
    return title


def regime_sentence(name: str, regime: dict, unit: str, black_box: str | None = None) -> str:
    """One regime in one line: who wins, or which routes are equivalent or cannot be told
    apart, or that nothing beats the family mean; the MAEs; the large misses."""
    title = regime_title(name, regime)
    if regime.get("skipped"):
        return f"{title}: not run — {regime['skipped']}."
    kind, routes = regime_choice(regime)
    names = [SHORT[r] if r != "direct" else route_words(r, black_box).removeprefix("the ") for r in routes]
    margin = regime.get("margin")
    if kind == "wins":
        head = f"{names[0]} wins"
    elif kind == "mean":
        head = "nothing beats the family mean by the margin"
    elif kind == "only":
        head = f"{names[0]} alone beats the family mean, without beating the other routes by the margin"
    elif kind == "equivalent":
        head = f"{', '.join(names[:-1])} and {names[-1]} equivalent within the margin"
    else:
        head = f"{', '.join(names[:-1])} and {names[-1]} cannot be told apart on these members"
    tail = ""
    if kind != "wins" and _margin_decided(regime) and margin is not None:
        tail = f" (a clear but smaller difference is not counted: the margin is {_g(margin)} {unit} or a tenth of the better MAE)"
    misses = _misses_text(regime)
    return f"{title}: {head} — {_numbers(regime, unit)}{tail}." + (" " + misses[:1].upper() + misses[1:]
                                                                    if misses else "")


def weak_link(record: dict, unit: str, tiers=()) -> str:
    e, routes = record.get("energy_stage"), record["routes"]
    cte, ts = routes.get("curve_on_true_energy"), routes.get("two_stage")
    if not e or not cte or not ts:
        return ""
    reaction = energy_labels(record.get("energy_kind", "free-energy"))[0]
    text = (f"The energy stage predicts {reaction} with leave-one-out MAE {_g(e['mae'])} {unit}; fed the computed "
            f"{reaction} the curve reaches MAE {_g(cte['mae'])}")
    if cte["mae"] >= 0.85 * ts["mae"]:
        return text + "."
    if record.get("anchor"):
        advice = (f"computing reaction energies at the reference level for the members you screen (screen --energy) "
                  f"pays more than the anchor on {record['anchor']['column']}")
    elif "xtb" in tiers:
        advice = ("computing reaction energies for the members you screen (screen --energy) pays more than any "
                  "descriptor (the xtb tier is already in use)")
    else:
        advice = ("computed reaction energies pay: your own (screen --energy), or GFN2-xTB ones as a descriptor "
                  "(reaction input with --tiers 2d,xtb)")
    return text + f". The energy stage is the weak link, so {advice}."


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


def structure_sentence(record: dict, unit: str) -> str:
    """Fed computed reaction energies, does the structure-dependent curve beat the plain one
    in leave-one-out (where the reaction happens, on top of how far downhill it goes)?"""
    loo = record.get("validation", {}).get("loo", {})
    c = loo.get("pairs", {}).get("structure_curve_on_true_energy_vs_curve_on_true_energy")
    s, p = loo.get("routes", {}).get("structure_curve_on_true_energy"), loo.get("routes", {}).get("curve_on_true_energy")
    if not c or not s or not p:
        return ""
    if c.get("beats"):
        verdict = "beats it: where the reaction happens moves the intrinsic barrier"
    elif c.get("equivalent"):
        verdict = "is equivalent to it within the margin: the descriptors do not move the intrinsic barrier here"
    else:
        verdict = "cannot be told from it on these members"
    return (f"Fed computed reaction energies, the structure-dependent curve reaches leave-one-out MAE {_g(s['mae'])} "
            f"against {_g(p['mae'])} {unit} for the plain curve, and {verdict}.")


def black_box_sentence(record: dict, unit: str) -> str:
    """Said when the black box is no better than the family mean, or than itself refitted on
    shuffled barriers, in leave-one-out: a weak opponent makes any win of physics cheap."""
    loo = record.get("validation", {}).get("loo", {})
    d, m = record["routes"].get("direct"), record["routes"].get("family_mean")
    if not d or not m or loo.get("skipped"):
        return ""
    bb = _black_box(record)
    said = []
    if "direct" not in (loo.get("beats_mean") or []):
        said.append(f"the family mean ({_g(m['mae'])})")
    y = record.get("y_randomization")
    margin = loo.get("margin") or 0.0
    if y and y.get("direct_mae_mean") is not None and d["mae"] > y["direct_mae_mean"] - margin:
        said.append(f"itself refitted on shuffled barriers ({_g(y['direct_mae_mean'])})")
    if not said:
        return ""
    who = f"The black box (a {LEARNER_WORDS.get(bb, bb)})" if bb else "The black box"
    return (f"{who} reaches leave-one-out MAE {_g(d['mae'])} {unit}, no better than {' or than '.join(said)}: "
            f"these descriptors do not predict the barrier directly, so beating the black box is a low bar here.")


def chance_sentence(record: dict, unit: str) -> str:
    y = record.get("y_randomization")
    if not y:
        return ""
    best = min((m["mae"] for r, m in record["routes"].items() if m and r in DESCRIPTOR_CANDIDATES),
               default=None)
    if best is not None and y["mae_mean"] <= 1.1 * best:
        return (f"Refitted on shuffled targets the two-stage route reaches MAE {_g(y['mae_mean'])} {unit}, as good "
                f"as the real routes: these descriptors carry no signal the routes could use.")
    return ""


def verdict_lines(record: dict, unit: str, tiers=()) -> list[str]:
    """The verdict, one line per point: the recommendation, every regime, then the black box,
    chance, the weak link and the regimes' disagreement where they apply."""
    regimes = record.get("validation", {})
    bb = _black_box(record)
    lines = [record["recommendation"]] if record.get("recommendation") else []
    lines.append(energy_link_sentence(record, unit))
    if record["routes"].get("direct") is None:
        lines += [regime_sentence(k, v, unit) for k, v in regimes.items()]
        return [x for x in lines if x]
    lines += [regime_sentence(k, v, unit, bb) for k, v in regimes.items()]
    decided = {k: v["winner"] for k, v in regimes.items()
               if not v.get("skipped") and v["winner"] in DESCRIPTOR_CANDIDATES}
    if len(set(decided.values())) > 1:
        lines.append("The regimes disagree (" + ", ".join(f"{k}: {SHORT[w]}" for k, w in decided.items()) +
                     "): choose the route by where the members you will predict lie.")
    lines += [structure_sentence(record, unit), black_box_sentence(record, unit), chance_sentence(record, unit)]
    if regimes.get("loo", {}).get("curve_beats_mean") is not False:   # no weak link when there is no chain
        lines.append(weak_link(record, unit, tiers))
    return [x for x in lines if x]


def verdict_text(record: dict, unit: str, tiers=()) -> str:
    """:func:`verdict_lines` as one string, a line each."""
    return "\n".join(verdict_lines(record, unit, tiers))
