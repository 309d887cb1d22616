"""What `screen` prints: counts, errors by kind, the lowest barriers (in-domain rows first,
with their domain flag), the floor group, implausible half-lives, and the cautions.

Takes :meth:`ScreenSummary.as_dict` (kcal/mol) and the unit to show.
"""

from __future__ import annotations

from ..kinetics import format_duration
from .cautions import CAUTION, rate_note
from .units import in_unit


def bimolecular_lines(s: dict) -> list[str]:
    """What a bimolecular screen did: the standard state, the partner, the diffusion limit."""
    kin = s.get("kinetics") or {}
    if kin.get("molecularity") != 2:
        return []
    from ..bimolecular import standard_state_shift

    t = s.get("temperature", 298.15)
    state = ("barriers in the 1 M standard state" if kin.get("standard_state") == "1M" else
             f"barriers in the 1 atm standard state, {standard_state_shift(t):.2f} kcal/mol lower in the 1 M one "
             f"used for the rates")
    partner = (f"the partner at {kin['concentration']:.3g} M: half-lives ln 2 / (k[B]), pseudo-first order"
               if kin.get("concentration") else "no --concentration: second-order rate constants only, no half-lives")
    limit = (f"diffusion limit in {kin['solvent']} {kin['diffusion_rate_per_M_per_s']:.2g} M⁻¹ s⁻¹ (8RT/3η), "
             f"combined as 1/k = 1/k_act + 1/k_diff" if kin.get("solvent") else
             "no --solvent: no diffusion limit applied (rows above 1e10 M⁻¹ s⁻¹ are flagged)")
    lines = [f"bimolecular step (A + B → TS): {state}; rate constants in M⁻¹ s⁻¹ "
             f"(rate_constant_per_M_per_s); {partner}; {limit}"]
    if s.get("diffusion_limited"):
        lines.append(f"{s['diffusion_limited']} ok rows react at the diffusion limit (column diffusion_limited): "
                     f"their rank among themselves says little")
    return lines


def format_screen(summary, unit: str, energy_kind: str, top: int | None = None) -> str:
    """``summary``: a ScreenSummary (kcal/mol); ``top`` rows of it shown (all by default)."""
    s = in_unit(summary, unit)
    s["top"] = s["top"][:top] if top is not None else s["top"]
    lines = [f"{s['rows']} rows screened in {s['seconds']:.1f} s: {s['ok']} ok, {s['rows'] - s['ok']} with errors, "
             f"{s['out_of_domain']} of the ok rows outside the applicability domain; "
             f"{s['energy_given']} used a given reaction energy"]
    if s["errors"]:
        lines.append("errors by kind: " + ", ".join(f"{k} {v}" for k, v in sorted(s["errors"].items(),
                                                                                  key=lambda kv: -kv[1])))
    note = rate_note(energy_kind)
    if note:
        lines.append(note)
    lines += bimolecular_lines(s)
    if s.get("at_floor") and s.get("family_floors"):
        floors = ", ".join(f"{k} {v:.3g}" for k, v in s["family_floors"].items())
        lines.append(f"{s['at_floor']} ok rows have barrier intervals that reach their family's floor ({floors} "
                     f"{unit}): ranked by their barrier, but the model cannot tell them from the floor "
                     f"(column reaches_floor)")
    elif s.get("at_floor"):
        lines.append(f"{s['at_floor']} ok rows have barrier intervals that reach the curve's floor "
                     f"({s['floor']:.3g} {unit}): ranked by their barrier, but the model cannot tell them from the "
                     f"floor (column reaches_floor)")
    if s.get("implausible_half_lives"):
        t = s.get("temperature")
        if t is not None and not 150.0 <= t <= 1000.0:
            what = (f"check --temperature first: {t:g} K is far from where reactions are run (for degrees Celsius "
                    f"write, e.g., 25C), then the units of the model's data")
        else:
            what = "check the units of the model's data (and of --energy) before reading them"
        lines.append(f"{s['implausible_half_lives']} half-lives lie below a picosecond or above the age of the "
                     f"universe: {what}")
    if bands_line(s):
        lines.append(bands_line(s))
    if s.get("top"):
        lines.append(f"lowest barriers, in-domain rows first ({unit}, 90 % interval; half-life at "
                     f"{s['temperature']:g} K):")
        for r in s["top"]:
            half = format_duration(r["half_life_s"]) if r.get("half_life_s") == r.get("half_life_s") else "—"
            flag = ("in domain" if r["in_domain"] else "OUT OF DOMAIN") + ("; reaches the floor" if r.get("reaches_floor")
                                                                         else "")
            lines.append(f"  {r['id']}: {r['barrier']:.2f} [{r['low']:.2f}, {r['high']:.2f}]  {half}  {flag}")
    if s.get("notes"):
        kinds = sorted(s["notes"].items(), key=lambda kv: -kv[1])
        lines.append(f"notes on the rows (the notes column of {s['output']}): " +
                     "; ".join(f"{v} × {k}" for k, v in kinds))
    out = str(s["output"])
    lines.append(f"written to {out}" + ("" if out.endswith(".parquet") else
                                       f" (its temperature, units, model and version in {out}.meta.json)"))
    lines.append(CAUTION)
    return "\n".join(lines)


def bands_line(s: dict) -> str:
    """"half-lives at 298 K: 12 under a second, 300 a second to an hour, ..." or ""."""
    bands = s.get("half_life_bands") or {}
    if not bands:
        return ""
    return (f"half-lives at {s['temperature']:g} K (predicted barriers, ok rows): " +
            ", ".join(f"{v} {k}" for k, v in bands.items()))
