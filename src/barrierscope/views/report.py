"""One self-contained HTML report: no scripts, no external fonts, styles or images.

Sections (each where it applies): the verdict; validation in every regime; the members
behind large or unusual errors; the curve with every relation, its parameters and the
identifiability verdict; the structure curve (what moves the intrinsic barrier); Leffler α;
the Hammett plot (table σ); leave-one-out parity and residuals; what drives the
reaction energy; the applicability domain; a screened library; next calculations; warnings
and notes; methods and sources. Every energy is shown in the model's unit.
"""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from .. import __version__
from . import depict
from . import figures as fg
from .cautions import CAUTION
from .curve_text import KINDS, identifiability_text
from .fit_text import ROUTE_LABELS, regime_label, winner_words
from .html import STYLE, esc, figure, num, table
from .labels import energy_labels
from .report_extra import families_section, hammett_section
from .structure_view import structure_section
from .units import in_unit, to_unit
from .verdict import verdict_lines


def _verdict(rec: dict, unit: str, tiers) -> str:
    """The recommendation in bold, then the verdict's lines as a list."""
    lines = verdict_lines(rec, unit, tiers)
    head, rest = (lines[0], lines[1:]) if rec.get("recommendation") else ("", lines)
    return ("<h2>Verdict</h2><div class='verdict'>" + (f"<p><b>{esc(head)}</b></p>" if head else "") +
            "<ul>" + "".join(f"<li>{esc(x)}</li>" for x in rest) + "</ul></div>")


def _validation(rec: dict, unit: str) -> str:
    regimes = rec["validation"]
    head = ["route"] + [f"{regime_label(k, v)}{' (' + str(v['n_test']) + ')' if v['n_test'] else ''}<br>MAE · RMSE · "
                        f"cover" for k, v in regimes.items()]
    rows = []
    stage = [("energy_stage", f"energy stage ({energy_labels(rec.get('energy_kind'))[0]})")]
    if rec.get("anchor"):
        stage = [("energy_stage", "energy stage, anchored"), ("energy_stage_free", "energy stage, free learner")]
    for key, label in [*stage, *ROUTE_LABELS.items()]:
        cells = []
        for v in regimes.values():
            m = v.get(key) if key.startswith("energy_stage") else v.get("routes", {}).get(key)
            cells.append("—" if not m else f"{num(m['mae'])} · {num(m['rmse'])} · "
                                           f"{'—' if 'pi90_coverage' not in m else format(m['pi90_coverage'], '.0%')}")
        if any(c != "—" for c in cells):
            rows.append([esc(label)] + cells)
    rows.append(["<b>winner</b>"] + [esc(winner_words(v) + (": " + v["skipped"] if v.get("skipped") else ""))
                                     for v in regimes.values()])
    text = ("<h2>Validation</h2><p>Every route refitted without the held-out members — scaling, the learner's "
            "hyper-parameters, the relation's choice and the curve fit included. Leave-one-out measures "
            "interpolation; <i>downhill</i> and <i>uphill</i> hold out the most exergonic or endergonic quarter "
            "and predict it from the rest; <i>clusters</i> holds out whole clusters of similar members. "
            f"Energies in {esc(unit)}; cover: the share of held-out members inside their own 90 % interval.</p>")
    text += table(head, rows)
    text += _anchor(rec, unit)
    y = rec.get("y_randomization")
    if y:
        text += (f"<p>y-randomisation ({y['n_shuffles']} shuffles of the barriers, every route refitted): two-stage "
                 f"LOO MAE {num(y['mae_mean'])} ± {num(y['mae_std'], 2)} {esc(unit)}, black box "
                 f"{num(y['direct_mae_mean'])}.</p>")
    return text


def _anchor(rec: dict, unit: str) -> str:
    """The energy stage's calibration on the computed energy, and the candidates' inner scores."""
    from .fit_text import CHOICE_WORDS

    a = rec.get("anchor")
    if not a:
        return ""
    reaction = energy_labels(rec.get("energy_kind"))[0]
    rows = [["a (intercept)", f"{num(a['a'], 4)} {esc(unit)}", f"{num(a['a_ci95'][0], 4)} to {num(a['a_ci95'][1], 4)}"],
            ["b (slope)", num(a["b"], 4), f"{num(a['b_ci95'][0], 4)} to {num(a['b_ci95'][1], 4)}"],
            ["residual SD", f"{num(a['residual_sd'])} {esc(unit)}", ""], ["members", str(a["n"]), ""]]
    scores = [[esc(k), num(v["score_rmse"]), num(v["loo_rmse"]),
               " · ".join(num(e) for e in v["end_rmse"]) or "—"] for k, v in a["scores"].items()]
    return (f"<h3>The energy stage's anchor</h3><p>{esc(reaction)} = a + b × <code>{esc(a['column'])}</code> "
            f"({esc(a['source'])}), a and b unpenalised; a ridge correction from the descriptors may follow "
            f"(Δ-learning). A slope below 1 means the computed method compresses the reaction energies. "
            f"{'Each family has its own intercept under the shared slope. ' if a.get('per_family_intercepts') else ''}"
            f"The energy stage predicts with {esc(CHOICE_WORDS.get(a['choice'], a['choice']))}; the black box, "
            f"anchored alike, with {esc(CHOICE_WORDS.get(a['black_box_choice'], a['black_box_choice']))}. Chosen by "
            f"the inner score: the RMSE over leave-one-out and two end splits (the lowest and the highest quarter of "
            f"computed energies held out), in {esc(unit)}.</p>" +
            table(["calibration", "value", "95 % interval"], rows) +
            table(["candidate", "inner score", "leave-one-out RMSE", "end splits RMSE (low · high)"], scores))


def _members(rec: dict, unit: str, model=None) -> str:
    m = rec.get("members")
    if not m:
        return ""
    route = rec.get("primary_route", "two_stage")
    route = route if route in m["pred"] else "curve_on_true_energy"
    r_label, b_label = energy_labels(rec.get("energy_kind"))
    err = np.asarray(m["pred"][route], dtype=float) - np.asarray(m["barrier"], dtype=float)
    order = np.argsort(-np.abs(err))
    unusual = np.asarray(m.get("unusual", []), dtype=bool)
    show = [i for i in order[:10]] + [i for i in np.flatnonzero(unusual) if i not in order[:10]]
    rows = []
    structures = (model.training.get("structures") if model is not None else None) or {}
    for i in show:
        flags = [t for t, on in (("unusual residual", unusual[i] if unusual.size else False),
                                 ("energy outside span", m["energy_true_outside"][i]),
                                 ("out of domain", m.get("ad_out", [False] * len(err))[i]),
                                 ("guard acted", m.get("unusual_descriptors", [False] * len(err))[i])) if on]
        drawing = depict.cell({c: v[i] for c, v in structures.items()}, model.spec.mode) if structures else ""
        rows.append([esc(str(m["id"][i])), drawing, num(m["energy"][i]), num(m["barrier"][i]),
                     num(m["pred"][route][i]), f"{err[i]:+.3g}", num(m["pred"]["curve_on_true_energy"][i]),
                     f"<span class='flag'>{esc(', '.join(flags))}</span>" if flags else ""])
    return ("<h2>Members behind the largest errors</h2><p>Leave-one-out predictions of the route the model uses "
            f"({esc(ROUTE_LABELS.get(route, route))}); an <i>unusual residual</i> is one the curve misses by more "
            "than three robust standard deviations even from the member's own reaction energy: check its transition "
            "state and its energies (the full table: <code>fit --members</code>). Residual: predicted − computed.</p>" +
            table(["id", "structure", f"{r_label} ({esc(unit)})", b_label, "LOO prediction", "residual",
                   "curve on computed energy", "flags"], rows))


def _curve(model, rec, comparison, unit, *, picks, figures_dir) -> str:
    curve = model.curve
    parts = ["<h2>Barrier against reaction energy</h2>",
             figure(fg.figure_png(fg.draw_curve, model, unit, comparison, picks=picks), "Members, every fitted relation, "
                    "the prediction band of the model's relation, its floor and its uphill asymptote" +
                    ("; stars: suggested next calculations" if picks else "") + ".", "curve", figures_dir)]
    c = in_unit(curve.record(), unit)
    prow = []
    for name, value in c["params"].items():
        ci, opened = c["ci95"].get(name), curve.ci_open_.get(name, (False, False))
        prow.append([esc(name), num(value, 4), "—" if ci is None else
                     f"{'≤ ' if opened[0] else ''}{num(ci[0], 4)} to {'≥ ' if opened[1] else ''}{num(ci[1], 4)}"])
    parts.append(f"<p>Relation: <b>{esc(curve.relation_.label)}</b>; residual scatter s = {num(c['sigma'])} "
                 f"{esc(unit)} on {curve.dof_} degrees of freedom.</p>")
    parts.append(table(["parameter", f"value ({esc(unit)} unless α)", "95 % interval"], prow))
    if curve.relation_.name == "asymptotic":
        d = c["derived"]
        parts.append(f"<p>Uphill excess U = F − M = {num(d['uphill_excess'], 4)} {esc(unit)}; intrinsic barrier "
                     f"(reaction energy 0) = {num(d['intrinsic_barrier'], 4)} {esc(unit)}; Leffler α at reaction energy 0: "
                     f"{num(d['alpha_at_zero'], 3)}.</p>")
    if curve.identifiability_ is not None:
        parts.append(f"<p><b>Identifiability.</b> "
                     f"{esc(identifiability_text(in_unit(curve.identifiability_, unit), unit))}</p>")
    rrow = [[esc(name) + (" (best)" if name == comparison.best else ""), "skipped", "", "", ""] if s.fit is None else
            [esc(name) + (" (best)" if name == comparison.best else ""), num(to_unit(s.rmse, unit)),
             num(to_unit(s.loo_mae, unit)), num(to_unit(s.loo_rmse, unit)), num(s.aicc, 4)]
            for name, s in comparison.scores.items()]
    parts.append("<p>All relations on the same pairs (exact leave-one-out refits):</p>")
    parts.append(table(["relation", f"RMSE ({esc(unit)})", "LOO MAE", "LOO RMSE", "AICc"], rrow))
    parts.append(figure(fg.figure_png(fg.draw_alpha, model, unit, size=(6.4, 3.2)), "Leffler α (the local slope) "
                        "against the reaction energy, with each member's α.", "alpha", figures_dir))
    return "".join(parts)


def _diagnostics(model, rec, unit, screen, *, figures_dir) -> str:
    parts = []
    if rec.get("members"):
        parts.append("<h2>Leave-one-out predictions</h2>")
        parts.append(figure(fg.parity_png(rec["members"], rec["routes"], unit), "Leave-one-out predictions against the "
                            "computed barriers, shared axes.", "parity", figures_dir))
        parts.append(figure(fg.residual_png(rec["members"], unit, rec.get("energy_kind", "free-energy")), "Leave-one-out residuals against the reaction "
                            "energy.", "residuals", figures_dir))
    imp = rec.get("energy_stage_importance")
    if imp:
        parts.append("<h2>What drives the reaction energy</h2>")
        parts.append(figure(fg.importance_png(list(imp), np.array(list(imp.values())), unit),
                            "Permutation importance of the energy stage's descriptors.", "importance", figures_dir))
    if model.has_structures:
        lo, hi = to_unit(model.training["energy_range"], unit)
        parts.append("<h2>Applicability domain</h2><p>Mean distance to the 3 nearest training members in the energy "
                     "stage's standardised descriptor space; a member beyond the threshold (the 95th percentile of "
                     "the training members' own leave-one-out distances) is flagged, as is a reaction energy outside "
                     f"the training span {num(lo)} to {num(hi)} {esc(unit)}.</p>")
        lib = None if screen is None else screen.distances
        parts.append(figure(fg.domain_png(model.domain.train_distances_, model.domain.threshold_, lib),
                            "Applicability-domain distances of the training set" +
                            (" and of the screened library." if lib else "."), "domain", figures_dir))
    return "".join(parts)


def build_report(model, record, comparison, source: str = "", *, screen=None, picks=None,
                 figures_dir: Path | None = None, extra_sections=()) -> str:
    """The report's HTML. ``record``: the FitRecord (kcal/mol); ``comparison``: every relation
    on the training pairs; ``screen``: a ScreenSummary; ``picks``: a SuggestRecord;
    ``extra_sections``: HTML sections from other views (already escaped)."""
    unit = model.units
    rec = in_unit(record, unit)
    pick_list = None if picks is None else picks.picks
    parts = [f"<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>barrierscope report</title>"
             f"<style>{STYLE}</style></head><body>",
             f"<h1>barrierscope report</h1><p class='muted'>{esc(source)} · {rec['n']} members · "
             f"{esc(KINDS.get(model.energy_kind, model.energy_kind))} in {esc(unit)} · written "
             f"{datetime.now(timezone.utc).strftime('%Y-%m-%d %H:%M UTC')} by barrierscope {esc(__version__)}</p>",
             f"<div class='caution'>{esc(CAUTION)}</div>",
             _verdict(rec, unit, model.tiers),
             _validation(rec, unit), _members(rec, unit, model), _curve(model, rec, comparison, unit, picks=pick_list, figures_dir=figures_dir),
             structure_section(model, unit, figures_dir),
             hammett_section(record.hammett, model.training["barrier"], unit, figures_dir),
             families_section(record, model, unit, figures_dir),
             _diagnostics(model, rec, unit, screen, figures_dir=figures_dir), *extra_sections]
    notes = list(rec.get("warnings", [])) + list(rec.get("notes", []))
    if notes or rec.get("skipped"):
        parts.append("<h2>Warnings and notes</h2><ul>" + "".join(f"<li>{esc(w)}</li>" for w in notes) +
                     "".join(f"<li>row {int(s['row'])} ({esc(str(s['id']))}): {esc(s['problem'])}</li>"
                             for s in rec.get("skipped", [])) + "</ul>")
    parts += [METHODS, f"<div class='caution'>{esc(CAUTION)}</div></body></html>"]
    return "\n".join(parts)


METHODS = """
<h2>Methods and sources</h2>
<ul>
<li>Relations: Bell–Evans–Polanyi / Leffler line (R. P. Bell, Proc. R. Soc. A 1936, 154, 414; M. G. Evans,
M. Polanyi, Trans. Faraday Soc. 1938, 34, 11; J. E. Leffler, Science 1953, 117, 340); Marcus (R. A. Marcus,
J. Chem. Phys. 1956, 24, 966; J. Phys. Chem. 1968, 72, 891); Agmon–Levine (Chem. Phys. Lett. 1977, 52, 197);
Rehm–Weller (Isr. J. Chem. 1970, 8, 259); Blowers–Masel (AIChE J. 2000, 46, 2041); the three-parameter
asymptotic curve, barrier = F + W ln(1 + exp((E<sub>r</sub> − M)/W)) with E<sub>r</sub> the reaction energy.</li>
<li>Parameter intervals: profile-t (D. M. Bates, D. G. Watts, Nonlinear Regression Analysis and Its Applications,
Wiley 1988); information criteria AICc (C. M. Hurvich, C.-L. Tsai, Biometrika 1989, 76, 297) and BIC.</li>
<li>Validation: leave-one-out and extrapolation splits with everything inside the loop; Q² with the cautions of
A. Golbraikh, A. Tropsha, J. Mol. Graph. Model. 2002, 20, 269; paired bootstrap (B. Efron, R. J. Tibshirani 1993)
and Wilcoxon signed-rank test; y-randomisation; the OECD principles for (Q)SAR validation (2004; guidance 2007).</li>
<li>Descriptors: RDKit (Wildman–Crippen MR and logP, TPSA, Gasteiger charges); Hammett constants typed from
memory of C. Hansch, A. Leo, R. W. Taft, Chem. Rev. 1991, 91, 165; GFN2-xTB (C. Bannwarth, S. Ehlert, S. Grimme,
J. Chem. Theory Comput. 2019, 15, 1652) through tblite; Sterimol through morfeus.</li>
<li>Rates: Eyring–Evans–Polanyi, k = κ (k<sub>B</sub>T/h) exp(−ΔG‡/RT), free-energy barriers only.</li>
</ul>
"""
