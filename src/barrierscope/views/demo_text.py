"""What `demo` prints: the whole job on the invented family, in a screenful."""

from __future__ import annotations

from ..kinetics import format_duration
from .cautions import CAUTION
from .screen_text import bands_line
from .suggest_text import suggest_json
from .units import in_unit
from .verdict import verdict_lines


def format_demo(result: dict) -> str:
    model, unit = result["model"], result["model"].units
    rec = in_unit(result["record"], unit)
    screen = in_unit(result["screen"], unit)
    advice = suggest_json(result["advice"])
    lines = ["barrierscope demo — an INVENTED reaction family (see CARD.md); every number below is from the model.",
             "", f"fit: {rec['n']} members, relation {rec['relation']}, learner {rec['learner']}",
             "recommendation: " + verdict_lines(rec, unit, model.tiers)[0], "", "verdict:",
             *[f"  {x}" for x in verdict_lines(rec, unit, model.tiers)[1:]], "",
             f"screen: {screen['rows']} library rows, {screen['ok']} ok, {screen['rows'] - screen['ok']} with errors "
             f"(each explained in its status), {screen['energy_given']} with a computed reaction energy used directly"]
    if screen.get("at_floor"):
        lines.append(f"  {screen['at_floor']} rows have intervals reaching the curve's floor ({screen['floor']:.3g} "
                     f"{unit}): the model cannot tell them from the floor (column reaches_floor)")
    if bands_line(screen):
        lines.append("  " + bands_line(screen))
    lines.append(f"lowest predicted barriers, in-domain rows first ({unit}, 90 % interval, half-life at 298.15 K):")
    for r in screen["top"][:5]:
        lines.append(f"  {r['id']}: {r['barrier']:.1f} [{r['low']:.1f}, {r['high']:.1f}]  "
                     f"{format_duration(r['half_life_s'])}" + ("" if r["in_domain"] else "  (out of domain)") +
                     ("  (reaches the floor)" if r.get("reaches_floor") else ""))
    lines += ["", "compute next:"]
    lines += [f"  {n}. {p['id']}: {p['reason']}" for n, p in enumerate(advice["picks"], start=1)]
    lines += ["", f"outputs in {result['out']}/:", "  report.html      the report (open in a browser)",
              "  model.json       the fitted model", "  validation.json  every regime's figures and the verdict",
              "  members.csv      each member's leave-one-out predictions and flags",
              "  screen.csv       the ranked library", "  suggestions.json what to compute next",
              "  figures/         the report's figures as PNG", f"done in {result['seconds']:.0f} s", "", CAUTION]
    return "\n".join(lines)
