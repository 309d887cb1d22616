"""What `curve --family` (and `fit --family`) print: the families side by side, the evidence
for sharing, and validation by member and by family.

Takes the joint record already in the user's unit (:func:`.units.in_unit`).
"""

from __future__ import annotations

import numpy as np

from .cautions import CAUTION
from .units import in_unit

ROUTES = {"two_stage": "two-stage through the joint curves", "joint": "joint curves on computed energies", "separate": "each family alone", "pooled": "one curve for all",
          "family_mean": "family mean"}
DERIVED = {"uphill_excess": "uphill excess", "intrinsic_barrier": "intrinsic barrier", "alpha_at_centre": "α at centre"}


def _g(v, digits: int = 3) -> str:
    return "—" if v is None or (isinstance(v, float) and not np.isfinite(v)) else f"{v:.{digits}g}"


def _interval(value, ci, opened=(False, False)) -> str:
    lo, hi = ci
    return f"{_g(value, 4)} [{'≤' if opened[0] else ''}{_g(lo)}, {'≥' if opened[1] else ''}{_g(hi)}]"


def sharing_sentence(test: dict, shared: list) -> str:
    if not shared:
        return "nothing shared: every family has its own curve (the joint fit pools only the residual scatter)"
    if test.get("p") is None:
        return (f"no test of sharing: a family is too small for a fit of its own (AICc of the shared fit "
                f"{_g(test['aicc_shared'], 4)})")
    verdict = ("sharing is rejected: the families differ in " + ", ".join(shared)) if test["p"] < 0.05 else \
        "sharing is not rejected"
    pref = "shared" if test["aicc_shared"] < test["aicc_separate"] else "separate"
    approx = " (approximate: a separate fit ends on a search bound)" if test.get("approximate") else ""
    return (f"likelihood ratio {_g(test['lr'])} on {test['df']} df, p = {_g(test['p'], 2)}{approx}: {verdict}; "
            f"AICc shared {_g(test['aicc_shared'], 4)} against separate {_g(test['aicc_separate'], 4)} (lower is "
            f"better: {pref})")


def family_rows(families: dict) -> list[str]:
    """The side-by-side table: each family's parameters and derived quantities with intervals."""
    first = next(iter(families.values()))
    params, derived = list(first["params"]), [d for d in DERIVED if d in first["derived"]]
    head = f"{'family':<16}{'n':>4}  " + "".join(f"{p:<24}" for p in params) + "".join(f"{DERIVED[d]:<24}"
                                                                                      for d in derived)
    lines = [head, "-" * len(head)]
    for name, f in families.items():
        cells = [_interval(f["params"][p], f["ci95"][p], f.get("ci95_open", {}).get(p, (False, False)))
                 for p in params]
        cells += [_interval(f["derived"][d], f["derived_ci95"][d]) for d in derived]
        lines.append(f"{name[:15]:<16}{f['n']:>4}  " + "".join(f"{c:<24}" for c in cells))
    return lines


def separate_rows(families: dict, shared: list) -> list[str]:
    out = []
    for name, f in families.items():
        sep = f.get("separate")
        if sep is None:
            out.append(f"  {name}: too few members for a fit of its own")
            continue
        cells = [f"{p} {_interval(sep['params'][p], sep['ci95'][p], sep['ci95_open'][p])}" for p in shared]
        out.append(f"  {name}: " + "; ".join(cells))
    return out


def validation_rows(validation: dict) -> list[str]:
    out = []
    for regime, v in validation.items():
        title = {"loo": "leave-one-out by member", "leave_family_out": "leave-one-family-out"}.get(regime, regime)
        if v.get("skipped"):
            out.append(f"{title}: not run — {v['skipped']}")
            continue
        cells = ", ".join(f"{ROUTES[r]} {_g(m['mae'])} / {_g(m['rmse'])}" for r, m in v["routes"].items())
        beaten = ", ".join(ROUTES[r] for r in v.get("joint_beats", []))
        out.append(f"{title} ({v['n_test']} held out; MAE / RMSE): {cells}" +
                   (f"; the joint fit clearly beats: {beaten}" if beaten else "; the joint fit beats no rival clearly"))
        if v.get("note"):
            out.append(f"  note: {v['note']}")
    return out


def families_json(record: dict, unit: str) -> dict:
    out = in_unit(record, unit)
    out["units"] = unit
    out["sharing_test"]["message"] = sharing_sentence(out["sharing_test"], out["shared"])
    out["caution"] = CAUTION
    return out


def format_families(s: dict) -> str:
    """The table `curve --family` prints, from :func:`families_json`'s object."""
    unit = s["units"]
    shared = s["shared"]
    lines = [f"{len(s['families'])} families, {s['n']} members; {s['relation']} relation fitted jointly; shared: "
             f"{', '.join(shared) or 'none'}; residual scatter s = {_g(s['sigma'])} {unit}", "",
             f"each family, 95 % intervals (profile-t for parameters, delta method for the rest; {unit}, α "
             f"dimensionless; α at the centre of the family's reaction energies):"]
    lines += family_rows(s["families"])
    if shared:
        lines += ["", "the shared parameters fitted by each family alone:"] + separate_rows(s["families"], shared)
    lines += ["", "evidence for sharing: " + s["sharing_test"]["message"]]
    if s.get("validation"):
        lines += [""] + validation_rows(s["validation"])
    if s.get("at_bound"):
        lines.append(f"warning: {', '.join(s['at_bound'])} at the edge of the search range in some family")
    lines += ["", s["caution"]]
    return "\n".join(lines)
