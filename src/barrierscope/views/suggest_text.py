"""What `suggest` prints and its JSON: every pick with its reason in words a chemist can check.

Takes the suggest record (kcal/mol) and the unit to show.
"""

from __future__ import annotations

from ..estimators.design import CLEARLY_MORE
from .labels import energy_labels
from .units import in_unit


def reason(p: dict, unit: str, kind: str = "free-energy") -> str:
    """Why a pick was made (``p`` already in ``unit``); never cites the candidate itself."""
    f, e = p["facts"], p["energy"]
    dE = energy_labels(kind)[0]
    where = "its computed" if p["energy_given"] else "its predicted"
    if f["where"] == "downhill":
        pinned = "is not yet pinned" if f["floor_open"] else "is pinned further"
        parts = [f"extends the energy span downhill ({where} {dE} {e:.3g} {unit}, {f['below']:.2g} below the lowest "
                 f"member), where the floor {pinned}"]
    elif f["where"] == "uphill":
        parts = [f"extends the energy span uphill ({where} {dE} {e:.3g} {unit}, {f['above']:.2g} above the highest "
                 f"member), where the uphill asymptote is set"]
    elif f["where"] == "midpoint":
        parts = [f"sits near the midpoint M ({where} {dE} {e:.3g} {unit}), where the curvature, and so the width W, "
                 f"is decided"]
    elif f.get("sparse_gap") is not None and f["gap"] >= f["sparse_gap"]:
        parts = [f"fills a sparsely sampled part of the curve ({where} {dE} {e:.3g} {unit}, {f['gap']:.2g} from the "
                 f"nearest training member; members there are usually within {f['sparse_gap'] / 2:.2g} of each other)"]
    else:
        parts = [f"lies among the members ({where} {dE} {e:.3g} {unit}, {f['gap']:.2g} from the nearest training "
                 f"member)"]
    if not p["energy_given"] and p["energy_sd"] > 0:
        parts.append(f"its reaction energy is uncertain by ±{p['energy_sd']:.2g}, which the calculation will settle")
    d, t = p["ad_distance"], f["threshold"]
    if d == d and t is not None and d > t:
        parts.append(f"far from every training member (distance {d:.2g} > {t:.2g}): out of domain, so its current "
                     f"estimate is extrapolation")
    elif not p["in_domain"]:
        parts.append("out of domain: its current estimate is extrapolation")
    if p.get("energy_clipped"):
        parts.append("its predicted reaction energy lay beyond the members' span + 25 % and was clipped there")
    if p.get("unusual_descriptors"):
        parts.append("its descriptor combination is unlike the members' (the energy stage's guard acted)")
    given = " given the picks before it" if p.get("rank", 1) > 1 else ""
    if f["goal"] == "predictions":
        gain = f"removes {p['score']:.1%} of the candidate pool's summed predictive variance (before any pick){given}"
    else:
        gain = f"adds {p['score']:.2g} to the log-determinant of the curve's information{given}"
    if f.get("best", True) and not f.get("domain"):
        gain += ", the most of any candidate left"
    parts.append(gain)
    if f.get("domain"):
        parts.append(f["domain"] + f" (--domain prefer: out of domain only at {CLEARLY_MORE:g}× the gain)")
    return "; ".join(parts)


def suggest_json(result) -> dict:
    """The SuggestRecord in its own unit, each pick with its reason."""
    out = in_unit(result, result.units)
    for rank, p in enumerate(out["picks"], start=1):
        p["rank"] = rank
        p["reason"] = reason(p, out["units"], out.get("energy_kind", "free-energy"))
    return out


def format_suggestions(result: dict) -> str:
    s = suggest_json(result)
    unit = s["units"]
    dE = energy_labels(s.get("energy_kind", "free-energy"))[0]
    lines = [f"{s['considered']} of {s['candidates']} candidates considered; goal: {s['goal']}; domain: "
             f"{s.get('domain', 'prefer')}; each score is the pick's gain when it was picked, given the picks before it"]
    if s["already_computed"]:
        lines.append(f"left out as already computed (same id or structure as a training member): "
                     f"{s['already_computed']}")
    if s["left_out"]:
        lines.append("left out (could not be predicted): " + ", ".join(f"{k} {v}" for k, v in s["left_out"].items()))
    if len(s["picks"]) < s["k"]:
        why = (f"only {s['considered']} candidates remain" if s["considered"] < s["k"] else
               "the other candidates nearly duplicate a pick (same reaction energy within the energy stage's "
               "uncertainty and alike in descriptors)")
        lines.append(f"{len(s['picks'])} picks instead of the {s['k']} asked for: {why}")
    for n, p in enumerate(s["picks"], start=1):
        flag = "".join(f"  [{text}]" for key, text in (("in_domain", "out of domain"),
                                                       ("energy_outside_span", f"{dE} outside the members' span"),
                                                       ("energy_clipped", f"{dE} clipped"),
                                                       ("unusual_descriptors", "unusual descriptors"))
                       if bool(p.get(key)) != (key == "in_domain"))
        lines.append(f"{n:>2}. {p['id']}  score {p['score']:.3g}  {dE} {p['energy']:.3g} {unit}  barrier "
                     f"{p['barrier']:.3g} [{p['low']:.3g}, {p['high']:.3g}]{flag}\n    {p['reason']}")
    return "\n".join(lines)
