"""Report sections for runs beyond `fit`: a screened library and suggested calculations.

Each function returns HTML (user text escaped) for :func:`.report.build_report`'s
``extra_sections``; energies are shown in the model's unit.
"""

from __future__ import annotations

from ..kinetics import format_duration
from .html import esc, num, table
from .suggest_text import suggest_json
from .units import in_unit


def screen_section(summary: dict, unit: str) -> str:
    s = in_unit(summary, unit)
    errors = ", ".join(f"{k} {v}" for k, v in s["errors"].items()) or "none"
    parts = ["<h2>Screened library</h2>",
             f"<p>{s['rows']} rows: {s['ok']} ok, {s['rows'] - s['ok']} with errors ({esc(errors)}); "
             f"{s['out_of_domain']} of the ok rows outside the applicability domain; {s['energy_given']} used a given "
             f"reaction energy.</p>"]
    if s.get("at_floor"):
        parts.append(f"<p><b>{s['at_floor']} rows have barrier intervals that reach the floor</b> "
                     f"({num(s['floor'])} {esc(unit)}): the model cannot order them by barrier; they share rank 1.</p>")
    if s.get("top"):
        rows = [[esc(str(r["id"])), num(r["barrier"]), f"{num(r['low'])} to {num(r['high'])}", num(r["alpha"], 2),
                 esc(format_duration(r["half_life_s"])) if r["half_life_s"] == r["half_life_s"] else "—",
                 "yes" if r["in_domain"] else "<span class='flag'>no</span>"] for r in s["top"]]
        parts.append("<p>Lowest barriers, in-domain rows first:</p>")
        parts.append(table(["id", f"barrier ({esc(unit)})", "90 % interval", "α", "half-life", "in domain"], rows))
    return "".join(parts)


def picks_section(result: dict) -> str:
    s = suggest_json(result)
    rows = [[str(k + 1), esc(p["id"]), num(p["score"]), f"{num(p['energy'])} ± {num(p['energy_sd'], 2)}",
             esc(p["reason"])] for k, p in enumerate(s["picks"])]
    note = (f"<p>{s['already_computed']} candidates were left out as already computed (same id or structure as a "
            f"training member).</p>" if s["already_computed"] else "")
    return (f"<h2>What to compute next</h2><p>Goal: {esc(s['goal'])}; {s['considered']} of {s['candidates']} "
            f"candidates considered.</p>{note}" +
            table(["pick", "id", "score", f"dE ({esc(s['units'])})", "why"], rows))
