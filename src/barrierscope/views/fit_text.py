"""What `fit` prints: the regimes side by side, the comparisons, the verdict, the curve.

Takes the fit record already in the user's unit (:func:`.units.in_unit`).
"""

from __future__ import annotations

from .cautions import CAUTION
from .labels import energy_labels
from .verdict import SHORT, verdict_lines, verdict_text

ROUTE_LABELS = {"two_stage": "two-stage route", "hybrid": "hybrid route", "structure_curve": "structure curve route",
                "direct": "black box", "curve_on_true_energy": "curve on computed energies",
                "structure_curve_on_true_energy": "structure curve, computed", "family_mean": "family mean"}
REGIME_LABELS = {"loo": "leave-one-out", "downhill": "downhill", "uphill": "uphill", "clusters": "clusters"}


def regime_label(name: str, regime: dict) -> str:
    """The regime's short name; a large family's ``loo`` regime is K-fold cross-validation."""
    scheme = regime.get("scheme") or ""
    return f"{scheme} CV" if name == "loo" and scheme.endswith("-fold") else REGIME_LABELS.get(name, name)


def _cell(m: dict | None, key: str, fmt: str = ".3g") -> str:
    if not m or m.get(key) is None:
        return "—"
    return format(m[key], fmt)


def regime_table(record: dict) -> list[str]:
    regimes = {k: v for k, v in record["validation"].items()}
    head = f"{'':<28}" + "".join(f"{regime_label(k, v) + (' (' + str(v['n_test']) + ')' if v['n_test'] else ''):>20}"
                                 for k, v in regimes.items())
    sub = f"{'':<28}" + "".join(f"{'MAE':>7}{'RMSE':>7}{'cover':>6}" for _ in regimes)
    lines = [head, sub, "-" * len(sub)]
    reaction = energy_labels(record.get('energy_kind'))[0]
    rows = [("energy_stage", f"energy stage ({reaction})")]
    if record.get("anchor"):
        rows = [("energy_stage", "energy stage, anchored"), ("energy_stage_free", "energy stage, free")]
    for key, label in rows + list(ROUTE_LABELS.items()):
        cells = []
        for v in regimes.values():
            m = v.get(key) if key.startswith("energy_stage") else v.get("routes", {}).get(key)
            cells.append(f"{_cell(m, 'mae'):>7}{_cell(m, 'rmse'):>7}{_cell(m, 'pi90_coverage', '.0%'):>6}")
        if any(c.strip("— ") for c in cells):
            lines.append(f"{label:<28}" + "".join(cells))
    lines += _jackknife_rows(regimes)
    lines.append(f"{'winner':<28}" + "".join(f" {winner_words(v):>19}" for v in regimes.values()))
    skipped = [f"{regime_label(k, v)}: {v['skipped']}" for k, v in regimes.items() if v.get("skipped")]
    if skipped:
        lines.append("not run — " + "; ".join(skipped))
    return lines


def winner_words(regime: dict) -> str:
    """A regime's winner in words: a route, "none (tie)", "none (family mean)" or "not run"."""
    w = regime.get("winner")
    if regime.get("skipped") or not w:
        return "not run"
    if w == "tie":
        return "none (tie)"
    return "curve" if w == "curve_on_true_energy" else SHORT.get(w, w)


def _jackknife_rows(regimes: dict) -> list[str]:
    """Coverage of jackknife+ intervals per regime (median width in the RMSE column's place)."""
    routes = list(dict.fromkeys(r for v in regimes.values() for r in v.get("jackknife_plus", {})))
    lines = []
    for r in routes:
        cells = []
        for v in regimes.values():
            m = v.get("jackknife_plus", {}).get(r)
            cells.append(f"{'':>7}{_cell(m, 'width'):>7}{_cell(m, 'coverage', '.0%'):>6}")
        lines.append(f"{'jackknife+ ' + SHORT[r]:<28}" + "".join(cells))
    return lines


MEMBER_FLAGS = (("energy_pred_outside", "leave-one-out reaction energy outside the other members' span"),
                ("energy_clipped", "leave-one-out reaction energy clipped by the guard (span + 25 %)"),
                ("unusual_descriptors", "descriptor combination unlike the others' (the guard moved the energy)"),
                ("ad_out", "descriptors outside the others' applicability domain"),
                ("unusual", "unusual residual from its own reaction energy (check the TS and the energy)"))


def member_flag_lines(record: dict, shown: int = 6) -> list[str]:
    """One line per leave-one-out flag that any member carries, naming the members."""
    m = record.get("members") or {}
    lines = []
    for key, text in MEMBER_FLAGS:
        ids = [i for i, f in zip(m.get("id", []), m.get(key) or []) if f]
        if ids:
            more = f" and {len(ids) - shown} more" if len(ids) > shown else ""
            lines.append(f"flag: {len(ids)} member(s) with {text}: {', '.join(map(str, ids[:shown]))}{more}")
    return lines


CHOICE_WORDS = {"anchor": "the anchor alone", "anchor+correction": "the anchor with a ridge correction",
                "free": "the free learner (the anchor did not pay)"}


def anchor_lines(record: dict) -> list[str]:
    """The energy stage's calibration on the computed energy, and what the inner score chose."""
    a = record.get("anchor")
    if not a:
        return []
    unit = record["units"]
    reaction = energy_labels(record.get("energy_kind"))[0]
    scores = ", ".join(f"{k} {v['score_rmse']:.3g}" for k, v in a["scores"].items())
    return [f"energy stage anchored on {a['column']} ({a['source']}): {reaction} = {a['a']:.3g} "
            f"[{a['a_ci95'][0]:.3g}, {a['a_ci95'][1]:.3g}] + {a['b']:.3g} [{a['b_ci95'][0]:.3g}, {a['b_ci95'][1]:.3g}]"
            f" × {a['column']} (95 % intervals), residual SD {a['residual_sd']:.3g} {unit}, {a['n']} members" +
            ("; each family its own intercept" if a.get("per_family_intercepts") else ""),
            f"  it predicts with {CHOICE_WORDS.get(a['choice'], a['choice'])} (inner score, RMSE over leave-one-out "
            f"and both end splits: {scores} {unit}); the black box, anchored alike, with "
            f"{CHOICE_WORDS.get(a['black_box_choice'], a['black_box_choice'])}"]


def _learner_words(record: dict) -> str:
    """The learner as the header says it: ``auto`` with what it chose for each model."""
    chosen = record.get("learners_chosen") or {}
    if not record.get("features"):
        return "no descriptors (curve only)"
    if record.get("anchor"):
        return f"learner {record['learner']}, anchored on {record['anchor']['column']}"
    if record["learner"] == "auto" and chosen:
        return ("learner auto (energy stage " + str(chosen.get("energy_stage")) + ", black box " +
                str(chosen.get("direct")) + ")")
    return f"learner {record['learner']}"


def format_fit(record: dict, tiers=()) -> str:
    """The table `fit` prints (energies in the record's unit)."""
    unit = record["units"]
    learner = _learner_words(record)
    lines = [f"{record['n']} members; {record['energy_kind']} in {unit}; {learner}; relation "
             f"{record['relation']}" + (f" (chosen from {record['requested_relation']})"
                                        if record["requested_relation"] != record["relation"] else ""), ""]
    lines += regime_table(record)
    lines.append("cover: share of held-out members inside their own 90 % prediction interval")
    lines += anchor_lines(record)
    iv = record.get("intervals", {})
    if iv.get("method", "model") != "model":
        lines.append(f"jackknife+ rows: intervals built from each split's training members alone (median width in "
                     f"the RMSE column); the model file uses {iv['method']} intervals for the {iv['route']} route")
    if record["comparison"]:
        lines += ["", "leave-one-out, each route against the black box (MAE difference, negative: the route does "
                      "better; 95 % bootstrap interval; Wilcoxon p):"]
        for k, c in record["comparison"].items():
            lines.append(f"  {SHORT.get(k.replace('_vs_direct', ''), k):<10} {c['delta_mae']:+.3g} "
                         f"[{c['ci95'][0]:+.3g}, {c['ci95'][1]:+.3g}]  p = {c['wilcoxon_p']:.2g}")
    y = record.get("y_randomization")
    if y:
        lines.append(f"y-randomisation ({y['n_shuffles']} shuffles of the barriers): two-stage MAE {y['mae_mean']:.3g} "
                     f"± {y['mae_std']:.2g}, black box {y['direct_mae_mean']:.3g}")
    verdict = verdict_lines(record, unit, tiers)
    lines = lines[:1] + ["", "recommendation: " + verdict[0], ""] + lines[1:] if record.get("recommendation") else lines
    rest = verdict[1:] if record.get("recommendation") else verdict
    lines += ["", "verdict:"] + [f"  {v}" for v in rest]
    lines.append("members with a computed reaction energy go straight to the " +
                 ("structure-dependent curve" if record.get("primary_route") == "structure_curve" else "curve"))
    c = record["curve"]
    if record.get("families"):
        from .families_text import family_rows, validation_rows

        lines += ["", f"families (column {record['family_column']}), fitted jointly with {', '.join(record['shared']) or 'nothing'}"
                  f" shared; the regimes above use one curve for all families, the model each family's own:"]
        lines += family_rows(record["families"])
        lines += ["evidence for sharing: " + record["sharing_test"]["message"]]
        lines += validation_rows(record["family_validation"])
    else:
        lines.append("curve: " + ", ".join(f"{k} = {v:.4g}" for k, v in c["params"].items()))
    lines += member_flag_lines(record)
    lines += [f"warning: {w}" for w in record.get("warnings", [])]
    lines += skipped_lines(record.get("skipped") or [])
    lines += [f"note: {n}" for n in record.get("notes", [])]
    lines += ["", CAUTION]
    return "\n".join(lines)


def skipped_lines(skipped: list, shown: int = 20) -> list[str]:
    """The rows --skip-bad-rows left out: row, id and reason (all of them in --json)."""
    lines = [f"skipped: row {s['row']} ({s['id']}): {s['problem']}" for s in skipped[:shown]]
    if len(skipped) > shown:
        lines.append(f"skipped: ... and {len(skipped) - shown} more (fit --json lists every one under 'skipped')")
    return lines


def fit_json(record, tiers=()) -> dict:
    """The `fit --json` object: the FitRecord in its own unit (``record.units``) with the verdict
    in words; the curve without its covariance (mixed units) and raw parameter vector."""
    from .curve_text import identifiability_text
    from .units import in_unit

    unit = record.units
    out = in_unit(record, unit)
    if out["curve"].get("identifiability"):
        out["curve"]["identifiability"]["message"] = identifiability_text(out["curve"]["identifiability"], unit)
    out["verdict"] = verdict_text(out, unit, tiers)
    if out.get("sharing_test"):
        from .families_text import sharing_sentence

        out["sharing_test"]["message"] = sharing_sentence(out["sharing_test"], out["shared"])
    out["caution"] = CAUTION
    return out
