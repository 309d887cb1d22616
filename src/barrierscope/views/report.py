"""One self-contained HTML report: no scripts, no external fonts, styles or images.

Figures are embedded as PNG data URIs. Every string that came from the user (file and
column names, ids, SMILES, messages quoting them) passes through :func:`html.escape`.
"""

from __future__ import annotations

import base64
import html
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from .. import __version__
from ..units import factor_to_kcal
from ..validation.loo import ROUTE_LABELS
from . import figures
from .cautions import CAUTION

E = html.escape

STYLE = """
body { font-family: system-ui, -apple-system, 'Segoe UI', Helvetica, Arial, sans-serif; margin: 2em auto;
       max-width: 980px; color: #111; line-height: 1.45; padding: 0 1em; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; } h2 { font-size: 1.25em; border-bottom: 1px solid #bbb; margin-top: 1.8em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.92em; }
th, td { border: 1px solid #bbb; padding: 0.25em 0.6em; text-align: right; }
th:first-child, td:first-child { text-align: left; }
thead th { background: #eee; }
.verdict { border-left: 6px solid #0072B2; background: #f2f7fb; padding: 0.7em 1em; margin: 1em 0; }
.caution { border-left: 6px solid #D55E00; background: #fdf3ec; padding: 0.7em 1em; margin: 1em 0; }
.muted { color: #555; font-size: 0.9em; }
figure { margin: 1em 0; } figcaption { font-size: 0.88em; color: #333; }
img { max-width: 100%; height: auto; border: 1px solid #ddd; }
code { font-size: 0.92em; background: #f4f4f4; padding: 0 0.2em; }
"""


def _num(v, digits: int = 3) -> str:
    if v is None or (isinstance(v, float) and not np.isfinite(v)):
        return "—"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    return f"{v:.{digits}g}"


def _table(head, rows) -> str:
    out = ["<table><thead><tr>", *[f"<th>{h}</th>" for h in head], "</tr></thead><tbody>"]
    for r in rows:
        out.append("<tr>" + "".join(f"<td>{c}</td>" for c in r) + "</tr>")
    out.append("</tbody></table>")
    return "".join(out)


def _figure(png: bytes, caption: str, name: str, figures_dir: Path | None) -> str:
    if figures_dir is not None:
        figures_dir.mkdir(parents=True, exist_ok=True)
        from ..io.atomic import write_bytes_atomic

        write_bytes_atomic(figures_dir / f"{name}.png", png)
    data = base64.b64encode(png).decode("ascii")
    return (f'<figure><img alt="{E(caption)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{E(caption)}</figcaption></figure>")


def build_report(model, summary: dict, source: str = "", screen=None, picks=None,
                 figures_dir: Path | None = None) -> str:
    """The report's HTML text. ``screen``: an optional ScreenSummary plus library distances;
    ``picks``: optional next-calculation suggestions."""
    from ..curves.compare import compare_relations

    unit = model.units
    f = factor_to_kcal(unit)
    kind = {"free-energy": "Gibbs free energies", "enthalpy": "enthalpies",
            "electronic": "electronic energies"}.get(model.energy_kind, model.energy_kind)
    energy = np.asarray(model.training["energy"])
    barrier = np.asarray(model.training["barrier"])
    comparison = compare_relations(energy, barrier)
    parts = [f"<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>barrierscope report</title>"
             f"<style>{STYLE}</style></head><body>"]
    parts.append(f"<h1>barrierscope report</h1><p class='muted'>{E(source)} · {summary['n']} members · {E(kind)} in "
                 f"{E(unit)} · written {datetime.now(timezone.utc).strftime('%Y-%m-%d %H:%M UTC')} by barrierscope "
                 f"{E(__version__)}</p>")
    parts.append(f"<div class='caution'>{E(CAUTION)}</div>")
    parts.append(f"<h2>Verdict</h2><div class='verdict'>{E(summary['verdict'])}</div>")

    # validation table
    rows = []
    if summary.get("energy_stage"):
        e = summary["energy_stage"]
        rows.append(["energy stage (reaction energy)", _num(e["mae"] / f), _num(e["rmse"] / f), _num(e["r2"], 2), "—"])
    for r, label in ROUTE_LABELS.items():
        m = summary["routes"].get(r)
        if m is None:
            continue
        star = " (winner)" if summary["winner"] == r else ""
        rows.append([E(label) + star, _num(m["mae"] / f), _num(m["rmse"] / f), _num(m["r2"], 2),
                     f"{m['pi90_coverage']:.0%}"])
    parts.append("<h2>Leave-one-out validation</h2><p>Every member left out in turn; scaling, the learner's "
                 "hyper-parameters, the relation's choice and the curve fit are all redone without it.</p>")
    parts.append(_table(["", f"MAE ({E(unit)})", f"RMSE ({E(unit)})", "Q²", "inside 90 % interval"], rows))
    if summary.get("comparison"):
        crow = [[E(k.replace("_vs_direct", "").replace("_", "-")) + " − direct", _num(c["delta_mae"] / f),
                 f"{_num(c['ci95'][0] / f)} to {_num(c['ci95'][1] / f)}", _num(c["wilcoxon_p"], 2)]
                for k, c in summary["comparison"].items()]
        parts.append(_table(["paired comparison", f"MAE difference ({E(unit)})", "95 % bootstrap interval",
                             "Wilcoxon p"], crow))
    y = summary.get("y_randomization")
    if y:
        parts.append(f"<p>y-randomisation ({y['n_shuffles']} shuffles of the targets): two-stage LOO MAE "
                     f"{_num(y['mae_mean'] / f)} ± {_num(y['mae_std'] / f, 2)} {E(unit)}, black box "
                     f"{_num(y['direct_mae_mean'] / f)}; the best constant predictor reaches "
                     f"{_num(y['mean_predictor_mae'] / f)}.</p>")

    # curve
    curve = model.curve
    parts.append("<h2>Barrier against reaction energy</h2>")
    parts.append(_figure(figures.curve_figure(model, comparison, unit, f, picks),
                         "Members, every fitted relation, the asymptotic curve's 90 % prediction band, its floor "
                         "and its uphill asymptote" + ("; stars: suggested next calculations" if picks else "") + ".",
                         "curve", figures_dir))
    prow = []
    for name, value in curve.params_dict().items():
        dimless = name in curve.relation_.dimensionless
        scale = 1.0 if dimless else f
        ci = curve.ci_.get(name)
        opened = curve.ci_open_.get(name, (False, False))
        ci_text = "—" if ci is None else (("≤ " if opened[0] else "") + _num(ci[0] / scale, 4) + " to " +
                                          ("≥ " if opened[1] else "") + _num(ci[1] / scale, 4))
        prow.append([E(name), _num(value / scale, 4), ci_text])
    parts.append(f"<p>Relation: <b>{E(curve.relation_.label)}</b>; residual scatter s = {_num(curve.sigma_ / f)} "
                 f"{E(unit)} on {curve.dof_} degrees of freedom.</p>")
    parts.append(_table(["parameter", f"value ({E(unit)} unless α)", "95 % interval"], prow))
    der = curve.derived()
    if curve.relation_.name == "asymptotic":
        parts.append(f"<p>Uphill excess U = F − M = {_num(der['uphill_excess'] / f, 4)} {E(unit)}; intrinsic barrier "
                     f"(dE = 0) = {_num(der['intrinsic_barrier'] / f, 4)} {E(unit)}; Leffler α at dE = 0: "
                     f"{_num(der['alpha_at_zero'], 3)}. Reverse direction: floor {_num(der['uphill_excess'] / f, 4)}, "
                     f"midpoint {_num(-curve.params_dict()['midpoint'] / f, 4)}.</p>")
        corr = np.asarray(curve.correlation_)
        parts.append(_table(["correlation", "F", "M", "W"],
                            [[n] + [f"{corr[i, j]:+.2f}" for j in range(3)] for i, n in enumerate("FMW")]))
    ident = getattr(curve, "identifiability_", None)
    ident_text = ident.describe(unit, f) if ident is not None else (
        (getattr(curve, "identifiability_dict_", None) or {}).get("message"))
    if ident_text:
        parts.append(f"<p><b>Identifiability.</b> {E(ident_text)}</p>")
    rrow = []
    for name, s in comparison.scores.items():
        if s.fit is None:
            rrow.append([E(name), "skipped", "", "", ""])
            continue
        rrow.append([E(name) + (" (best)" if name == comparison.best else ""), _num(s.rmse / f), _num(s.loo_mae / f),
                     _num(s.loo_rmse / f), _num(s.aicc, 4)])
    parts.append("<p>All relations on the same pairs (exact leave-one-out refits):</p>")
    parts.append(_table(["relation", f"RMSE ({E(unit)})", "LOO MAE", "LOO RMSE", "AICc"], rrow))
    parts.append(_figure(figures.alpha_figure(model, unit, f),
                         "Leffler α (the local slope) against the reaction energy, with each member's α.", "alpha",
                         figures_dir))

    # parity & residuals
    if summary.get("loo"):
        parts.append("<h2>Leave-one-out predictions</h2>")
        parts.append(_figure(figures.parity_figure(summary, unit, f),
                             "Leave-one-out predictions against the computed barriers, shared axes.", "parity",
                             figures_dir))
        parts.append(_figure(figures.residual_figure(summary, unit, f),
                             "Leave-one-out residuals against the reaction energy.", "residuals", figures_dir))
    imp = summary.get("energy_stage_importance")
    if imp:
        names, values = list(imp), np.array(list(imp.values())) / f
        parts.append("<h2>What drives the reaction energy</h2>")
        parts.append(_figure(figures.importance_figure(names, values, unit),
                             "Permutation importance of the energy stage's descriptors.", "importance", figures_dir))

    # domain
    if model.has_structures:
        parts.append("<h2>Applicability domain</h2><p>Mean distance to the 3 nearest training members in the energy "
                     "stage's standardised descriptor space; a member beyond the threshold (the 95th percentile of "
                     "the training members' own leave-one-out distances) is flagged, as is a reaction energy outside "
                     f"the training span {_num(energy.min() / f)} to {_num(energy.max() / f)} {E(unit)}.</p>")
        lib_d = None if screen is None else screen.get("distances")
        parts.append(_figure(figures.domain_figure(model.domain.train_distances_, model.domain.threshold_, lib_d),
                             "Applicability-domain distances of the training set" +
                             (" and of the screened library." if lib_d is not None else "."), "domain", figures_dir))
    if screen is not None:
        s = screen["summary"]
        parts.append("<h2>Screened library</h2>")
        parts.append(f"<p>{s.rows} rows: {s.ok} ok, {s.rows - s.ok} with errors "
                     f"({E(', '.join(f'{k} {v}' for k, v in s.errors.most_common()))}); {s.out_of_domain} of the ok "
                     f"rows outside the applicability domain; {s.energy_given} used a given reaction energy.</p>")
        if s.rate_note:
            parts.append(f"<p>{E(s.rate_note)}</p>")
        if screen.get("top") is not None and len(screen["top"]):
            t = screen["top"]
            parts.append(_table(["rank", "id", f"barrier ({E(unit)})", "90 % interval", "α", "half-life", "in domain"],
                                [[_num(r["rank"]), E(str(r["id"])), _num(r["barrier"]), f"{_num(r['low'])} to {_num(r['high'])}",
                                  _num(r["alpha"], 2), E(str(r["half_life"])), "yes" if r["in_domain"] else "no"]
                                 for r in t]))
    if picks:
        parts.append("<h2>What to compute next</h2>")
        parts.append(_table(["pick", "id", "score", "why"],
                            [[str(k + 1), E(str(p["id"])), _num(p["score"]), E(p["reason"])] for k, p in enumerate(picks)]))

    notes = list(summary.get("warnings", [])) + list(summary.get("notes", []))
    if notes or summary.get("skipped"):
        parts.append("<h2>Warnings and notes</h2><ul>" + "".join(f"<li>{E(w)}</li>" for w in notes) +
                     "".join(f"<li>row {int(s['row'])} ({E(str(s['id']))}): {E(s['problem'])}</li>"
                             for s in summary.get("skipped", [])) + "</ul>")
    parts.append(METHODS)
    parts.append(f"<div class='caution'>{E(CAUTION)}</div></body></html>")
    return "\n".join(parts)


METHODS = """
<h2>Methods and sources</h2>
<ul>
<li>Relations: Bell–Evans–Polanyi / Leffler line (R. P. Bell, Proc. R. Soc. A 1936, 154, 414; M. G. Evans,
M. Polanyi, Trans. Faraday Soc. 1938, 34, 11; J. E. Leffler, Science 1953, 117, 340); Marcus (R. A. Marcus,
J. Chem. Phys. 1956, 24, 966; J. Phys. Chem. 1968, 72, 891); Agmon–Levine (Chem. Phys. Lett. 1977, 52, 197);
Rehm–Weller (Isr. J. Chem. 1970, 8, 259); the three-parameter asymptotic curve dE‡ = F + W ln(1 + exp((dE − M)/W)).</li>
<li>Parameter intervals: profile-t (D. M. Bates, D. G. Watts, Nonlinear Regression Analysis and Its Applications,
Wiley 1988); information criteria AICc (C. M. Hurvich, C.-L. Tsai, Biometrika 1989, 76, 297) and BIC.</li>
<li>Validation: leave-one-out with everything inside the loop; Q² with the cautions of A. Golbraikh, A. Tropsha,
J. Mol. Graph. Model. 2002, 20, 269; paired bootstrap (B. Efron, R. J. Tibshirani 1993) and Wilcoxon signed-rank
test; y-randomisation; the OECD principles for (Q)SAR validation (2004; guidance 2007).</li>
<li>Descriptors: RDKit (Wildman–Crippen MR and logP, TPSA, Gasteiger charges); Hammett constants typed from
memory of C. Hansch, A. Leo, R. W. Taft, Chem. Rev. 1991, 91, 165; GFN2-xTB (C. Bannwarth, S. Ehlert, S. Grimme,
J. Chem. Theory Comput. 2019, 15, 1652) through tblite; Sterimol through morfeus.</li>
<li>Rates: Eyring–Evans–Polanyi, k = κ (k<sub>B</sub>T/h) exp(−ΔG‡/RT), free-energy barriers only.</li>
</ul>
"""


def write_fit_report(model, summary: dict, report_path=None, figures_dir=None, source: str = "", screen=None,
                     picks=None) -> None:
    """Write the report (atomically) and, with ``figures_dir``, the figures as PNG files."""
    from ..io.atomic import write_text_atomic

    text = build_report(model, summary, source, screen, picks, Path(figures_dir) if figures_dir else None)
    if report_path is not None:
        write_text_atomic(report_path, text)
