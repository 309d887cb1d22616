"""Report sections for runs beyond `fit`: a screened library and suggested calculations.

Each function returns HTML (user text escaped) for :func:`.report.build_report`'s
``extra_sections``; energies are shown in the model's unit.
"""

from __future__ import annotations

import numpy as np

from ..kinetics import format_duration
from . import depict
from .labels import energy_labels_html
from .html import esc, num, table
from .suggest_text import suggest_json
from .units import in_unit


def screen_section(summary, unit: str, mode: str = "", structure_columns=()) -> str:
    """``summary``: a ScreenSummary (kcal/mol)."""
    s = in_unit(summary, unit)
    errors = ", ".join(f"{k} {v}" for k, v in s["errors"].items()) or "none"
    parts = ["<h2>Screened library</h2>",
             f"<p>{s['rows']} rows: {s['ok']} ok, {s['rows'] - s['ok']} with errors ({esc(errors)}); "
             f"{s['out_of_domain']} of the ok rows outside the applicability domain; {s['energy_given']} used a given "
             f"reaction energy.</p>"]
    if s.get("at_floor"):
        where = (", ".join(f"{esc(k)} {num(v)}" for k, v in s["family_floors"].items()) if s.get("family_floors")
                 else num(s["floor"]))
        parts.append(f"<p><b>{s['at_floor']} rows have barrier intervals that reach the floor</b> "
                     f"({where} {esc(unit)}): they are ranked by their predicted barrier, but the model cannot tell "
                     f"them from the floor (column <code>reaches_floor</code>).</p>")
    from .screen_text import bimolecular_lines

    parts += [f"<p>{esc(line)}</p>" for line in bimolecular_lines(s)]
    if s.get("half_life_bands"):
        parts.append(f"<p>Half-lives at {s['temperature']:g} K from the predicted barriers (ok rows):</p>" +
                     table(list(s["half_life_bands"]), [[str(v) for v in s["half_life_bands"].values()]]))
    if s.get("top"):
        rows = [[esc(str(r["id"])), depict.cell({c: r["structure"].get(c) for c in structure_columns}, mode),
                 num(r["barrier"]),
                 f"{num(r['low'])} to {num(r['high'])}", num(r["alpha"], 2),
                 esc(format_duration(r["half_life_s"])) if r["half_life_s"] == r["half_life_s"] else "—",
                 "yes" if r["in_domain"] else "<span class='flag'>no</span>",
                 "yes" if r.get("reaches_floor") else "no"] for r in s["top"]]
        parts.append("<p>Lowest barriers, in-domain rows first:</p>")
        parts.append(table(["id", "structure", f"barrier ({esc(unit)})", "90 % interval", "α", "half-life",
                            "in domain", "reaches the floor"], rows))
    return "".join(parts)


def picks_section(result, mode: str = "") -> str:
    s = suggest_json(result)
    rows = [[str(k + 1), esc(p["id"]), depict.cell(p.get("structure"), mode), num(p["score"]),
             f"{num(p['energy'])} ± {num(p['energy_sd'], 2)}", esc(p["reason"])] for k, p in enumerate(s["picks"])]
    note = (f"<p>{s['already_computed']} candidates were left out as already computed (same id or structure as a "
            f"training member).</p>" if s["already_computed"] else "")
    return (f"<h2>What to compute next</h2><p>Goal: {esc(s['goal'])}; {s['considered']} of {s['candidates']} "
            f"candidates considered.</p>{note}" +
            table(["pick", "id", "structure", "score",
                   f"{energy_labels_html(s.get('energy_kind', 'free-energy'))[0]} ({esc(s['units'])})", "why"], rows))


def hammett_section(hammett, barrier_kcal, unit: str, figures_dir=None) -> str:
    """The Hammett plot with ρ and its interval, and whether the series bends; ``hammett`` a
    HammettRecord (kcal/mol) or None."""
    from .figures import hammett_png
    from .html import figure

    if not hammett:
        return ""
    h = in_unit(hammett, unit)
    used = ", ".join(f"{esc(p)}: {esc(c)}" for p, c in h["constants"].items())
    lo, hi = h["barrier_per_sigma_ci95"]
    rlo, rhi = h["rho_ci95"]
    r0, r1 = h["rho_range"]
    text = (f"<h2>Hammett plot</h2><p>Σσ sums the table constants of each position ({used}), chosen from "
            f"{esc(h['basis'])}" + (f"; ortho positions left out ({esc(', '.join(h['left_out_positions']))})"
                                   if h["left_out_positions"] else "") +
            f". {h['n']} members with every σ{'' if not h['bend'] else ' on the straight part'} "
            f"({h['n_missing']} without σ).</p>")
    if h["bend"]:
        where = ("levels off toward the curve's floor: there the barrier stops responding to the substituents, "
                 "which is not necessarily a change of mechanism" if h.get("bend_kind") == "floor" else
                 "changes slope: a change of rate-determining step is one reading, to be checked by computing both "
                 "steps")
        text += (f"<p><b>The series bends at Σσ ≈ {num(h['bend_at'], 2)}.</b> Two straight segments describe it "
                 f"better than one line (AICc {num(h['aicc_bend'], 4)} against {num(h['aicc_line'], 4)}; F-test p = "
                 f"{num(h['bend_f_p'], 2)}, optimistic as the break point is chosen from the data): the barrier "
                 f"{where}. One line through every member would claim ρ = {num(h['rho_all'], 3)}; the ρ below is the "
                 f"straight part's alone.</p>")
    else:
        test = (f" (one line against two segments: AICc {num(h['aicc_line'], 4)} against {num(h['aicc_bend'], 4)}; "
                f"no bend)" if h.get("aicc_line") is not None else "")
        text += f"<p>The series is straight over its range{test}.</p>"
    text += (f"<p>For Σσ from {num(r0, 2)} to {num(r1, 2)}: barrier = {num(h['barrier_at_zero_sigma'])} "
             f"{'+' if h['barrier_per_sigma'] >= 0 else '−'} {num(abs(h['barrier_per_sigma']))}·Σσ {esc(unit)} "
             f"(95 %: {num(lo)} to {num(hi)} per unit σ; R² {num(h['r2'], 2)}); from the Eyring equation at "
             f"{num(h['temperature'], 5)} K, ρ = {num(h['rho'], 3)} (95 %: {num(rlo, 3)} to {num(rhi, 3)}): "
             f"{'negative: electron donors speed the step' if h['rho'] < 0 else 'positive: electron acceptors speed the step'}"
             f" (L. P. Hammett, J. Am. Chem. Soc. 1937, 59, 96). Outside that range ρ does not apply.</p>")
    caption = ("Barrier and log k against Σσ: the straight part's line, the two segments and the bend." if h["bend"]
               else "Barrier and log k against Σσ with the least-squares line.")
    return text + figure(hammett_png(hammett, barrier_kcal, unit), caption + " log k is capped at k_BT/h (a zero "
                         "barrier), which no line may pass.", "hammett", figures_dir)


def families_section(record, model, unit: str, figures_dir=None) -> str:
    """Several families: the side-by-side table, the evidence for sharing, validation by
    member and by family, and every family's curve; ``record`` a FitRecord (kcal/mol)."""
    from .families_text import DERIVED, ROUTES, sharing_sentence
    from .figures import families_png
    from .html import figure

    if not record.families:
        return ""
    r = in_unit(record, unit)
    first = next(iter(r["families"].values()))
    params, derived = list(first["params"]), [d for d in DERIVED if d in first["derived"]]
    rows = []
    for name, f in r["families"].items():
        cells = [f"{num(f['params'][p], 4)} [{num(f['ci95'][p][0])}, {num(f['ci95'][p][1])}]" for p in params]
        cells += [f"{num(f['derived'][d], 3)} [{num(f['derived_ci95'][d][0])}, {num(f['derived_ci95'][d][1])}]"
                  for d in derived]
        rows.append([esc(name), str(f["n"]), *cells])
    ran = {k: v for k, v in r["family_validation"].items() if not v.get("skipped")}
    heads = list(dict.fromkeys(h for v in ran.values() for h in v["routes"]))
    val = [[esc(regime.replace("_", " "))] + [f"{num(v['routes'][h]['mae'])} · {num(v['routes'][h]['rmse'])}"
                                              if h in v["routes"] else "—" for h in heads]
           for regime, v in ran.items()]
    names = record.family_names
    codes = np.array([names.index(f) for f in model.training["families"]])
    png = families_png(record.families, model.joint["fit"].relation.name, record.shared, model.training["energy"],
                       barrier=model.training["barrier"], fam=codes, names=names, unit=unit, kind=model.energy_kind)
    shared = ", ".join(record.shared) or "nothing"
    return (f"<h2>Families</h2><p>The families in column <code>{esc(record.family_column)}</code>, fitted "
            f"jointly with {esc(shared)} shared (95 % intervals: profile-t for parameters, delta method for the "
            f"rest; {esc(unit)}). The validation regimes above use one curve for every family; the model predicts "
            f"through each family's own.</p>" +
            table(["family", "n", *map(esc, params), *[esc(DERIVED[d]) for d in derived]], rows) +
            f"<p>Evidence for sharing: {esc(sharing_sentence(r['sharing_test'], record.shared))}.</p>" +
            table(["validation (MAE · RMSE)", *[esc(ROUTES.get(h, h)) for h in heads]], val) +
            figure(png, "Every family's members and its jointly fitted curve.", "families", figures_dir))
