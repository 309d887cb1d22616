"""What `curve` prints and its JSON, and the identifiability verdict in words.

Everything here takes records already in the user's unit (:func:`.units.in_unit`).
"""

from __future__ import annotations

import numpy as np

from .cautions import CAUTION
from .units import in_unit

KINDS = {"free-energy": "Gibbs free energies", "enthalpy": "enthalpies", "electronic": "electronic energies"}


def identifiability_text(d: dict, unit: str) -> str:
    """The identifiability verdict (energies of ``d`` in ``unit``)."""
    if d["identifiable"]:
        return (f"The curvature is determined: the members span {d['span']:.3g} {unit}, "
                f"{d['span_over_width']:.2g} times the fitted width W = {d['width']:.3g} {unit} "
                f"(curve against line: F-test p = {d['curvature_p']:.2g}).")
    t = d["tangent"]
    lo, hi = t["alpha_ci95"]
    names = ", ".join(d["unpinned"])
    verb = "is" if len(d["unpinned"]) == 1 else "are"
    return (f"The curvature is not determined: the reaction energies span only {d['span']:.3g} {unit} "
            f"and {names} {verb} not pinned (the 95 % interval runs to the search bound). What these "
            f"data determine is the tangent at a reaction energy of {t['center']:.3g} {unit}: barrier "
            f"{t['barrier_at_center']:.3g} {unit}, slope (Leffler α) {t['alpha']:.3f} "
            f"(95 %: {lo:.3f} to {hi:.3f}). Read F, M and W only after adding members further up- or downhill.")


def marcus_note(n_outside: int) -> str:
    return (f"{n_outside} member(s) lie outside |reaction energy| < λ, where the Marcus parabola has no meaning for a thermal "
            f"group transfer; the fit continues with its limits there (barrier w downhill, w + the reaction energy uphill)")


def curve_json(record: dict, unit: str) -> dict:
    """The `curve --json` object: the record in ``unit`` with its words added."""
    out = in_unit(record, unit)
    out["units"] = unit
    for name, r in out["relations"].items():
        notes = []
        if r.get("at_bound"):
            notes.append(f"{', '.join(r['at_bound'])} at the edge of the search range: the data do not pin "
                         f"{'it' if len(r['at_bound']) == 1 else 'them'}")
        if name == "marcus" and r.get("n_outside_validity"):
            notes.append(marcus_note(r["n_outside_validity"]))
        if notes:
            r["note"] = "; ".join(notes)
        if "identifiability" in r:
            r["identifiability"]["message"] = identifiability_text(r["identifiability"], unit)
    out["caution"] = CAUTION
    return out


def _fmt(v, digits: int = 3) -> str:
    if v is None or (isinstance(v, float) and not np.isfinite(v)):
        return "—"
    return f"{v:.{digits}g}" if abs(v) >= 1e-3 or v == 0 else f"{v:.2e}"


def _asymptotic_lines(a: dict, unit: str) -> list[str]:
    lines = ["", f"asymptotic curve, 95 % intervals ({a['interval_method']}), {unit}:"]
    names = {"floor": "floor F", "midpoint": "midpoint M", "width": "width W"}
    for k, v in a["params"].items():
        lo, hi = a["ci95"][k]
        opened = a.get("ci95_open", {}).get(k, [False, False])
        lines.append(f"  {names.get(k, k):<11} {_fmt(v, 4):>9}   [{'≤' if opened[0] else ''}{_fmt(lo, 4)}, "
                     f"{'≥' if opened[1] else ''}{_fmt(hi, 4)}]")
    d, rev = a["derived"], a["reverse"]
    lines.append(f"  uphill excess U = F − M = {_fmt(d['uphill_excess'], 4)}; intrinsic barrier (reaction energy 0) = "
                 f"{_fmt(d['intrinsic_barrier'], 4)}; Leffler α at reaction energy 0: {_fmt(d['alpha_at_zero'], 3)}")
    lines.append(f"  reverse direction: floor {_fmt(rev['floor'], 4)}, midpoint {_fmt(rev['midpoint'], 4)}, "
                 f"width {_fmt(rev['width'], 4)}")
    corr = np.asarray(a["correlation"])
    lines.append(f"  correlation: F–M {corr[0, 1]:+.2f}, F–W {corr[0, 2]:+.2f}, M–W {corr[1, 2]:+.2f}")
    if "identifiability" in a:
        lines += ["", a["identifiability"]["message"]]
    return lines


def format_curve(s: dict) -> str:
    """The table `curve` prints, from :func:`curve_json`'s object."""
    unit = s["units"]
    lines = [f"{s['n']} members; energies are {KINDS.get(s['energy_kind'], s['energy_kind'])} in {unit}; reaction "
             f"energies from {_fmt(s['energy_range'][0])} to {_fmt(s['energy_range'][1])} {unit}", ""]
    head = f"{'relation':<14} {'parameters':<44} {'RMSE':>7} {'LOO MAE':>8} {'LOO RMSE':>9} {'AICc':>8}"
    lines += [head, "-" * len(head)]
    for name, r in s["relations"].items():
        if "params" not in r:
            lines.append(f"{name:<14} skipped: {r['skipped']}")
            continue
        params = " ".join(f"{k}={_fmt(v, 4)}" for k, v in r["params"].items())
        lines.append(f"{name:<14} {params:<44} {_fmt(r['rmse']):>7} {_fmt(r['loo_mae']):>8} "
                     f"{_fmt(r['loo_rmse']):>9} {_fmt(r['aicc'], 4):>8}{' *' if name == s['best'] else ''}")
    lines.append(f"* best by leave-one-out RMSE: {s['best']}")
    lines += [f"  note ({name}): {r['note']}" for name, r in s["relations"].items() if r.get("note")]
    if "ci95" in s["relations"].get("asymptotic", {}):
        lines += _asymptotic_lines(s["relations"]["asymptotic"], unit)
    lines += ["", s["caution"]]
    return "\n".join(lines)
