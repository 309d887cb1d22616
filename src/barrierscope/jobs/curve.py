"""The `curve` job: compare every relation on one family's pairs and describe the result.

:func:`summarize_curves` returns a JSON-ready dictionary (energies in the input's unit);
:func:`format_curve_summary` renders it as the table the command prints.
"""

from __future__ import annotations

import numpy as np

from ..curves.compare import BEST_BY, compare_relations
from ..curves.regressor import CurveRegressor
from ..relations import RELATIONS
from ..units import factor_to_kcal, normalize_unit
from ..views.cautions import CAUTION


def _to_unit(name: str, value: float, relation, factor: float) -> float:
    dimensionless = name in relation.dimensionless or name.startswith("alpha")
    return float(value) if dimensionless else float(value) / factor


def summarize_curves(energy_kcal, barrier_kcal, unit: str = "kcal/mol", energy_kind: str = "free-energy",
                     loss: str = "linear", intervals: str = "profile", n_bootstrap: int = 1000,
                     level: float = 0.95) -> dict:
    """Fit and compare all relations; the asymptotic curve gets intervals and a verdict."""
    unit = normalize_unit(unit)
    f = factor_to_kcal(unit)
    x = np.asarray(energy_kcal, dtype=float)
    y = np.asarray(barrier_kcal, dtype=float)
    comp = compare_relations(x, y, loss=loss)
    out: dict = {
        "n": comp.n,
        "units": unit,
        "energy_kind": energy_kind,
        "energy_range": [float(np.min(x)) / f, float(np.max(x)) / f],
        "relations": {},
        "best": comp.best,
        "best_by": BEST_BY,
        "loss": loss,
    }
    for name, score in comp.scores.items():
        rel = RELATIONS[name]()
        entry: dict = {"label": rel.label}
        if score.fit is None:
            entry["skipped"] = score.skipped
            out["relations"][name] = entry
            continue
        entry["params"] = {k: _to_unit(k, v, rel, f) for k, v in score.fit.params_dict().items()}
        entry["derived"] = {k: _to_unit(k, v, rel, f) for k, v in rel.derived(score.fit.params).items()}
        entry.update({
            "loo_mae": score.loo_mae / f, "loo_rmse": score.loo_rmse / f,
            "rmse": score.rmse / f, "mae": score.mae / f,
            # Information criteria shift by −2n·ln(f) when residuals are rescaled by 1/f.
            "aicc": score.aicc - 2 * comp.n * np.log(1.0 / f),
            "bic": score.bic - 2 * comp.n * np.log(1.0 / f),
            "n_outside_validity": score.n_outside_validity,
            "at_bound": list(score.fit.at_bound),
        })
        if score.fit.message:
            entry["note"] = score.fit.message
        if name == "marcus" and score.n_outside_validity:
            entry["note"] = (f"{score.n_outside_validity} member(s) lie outside |dE| < λ, where the Marcus "
                             f"parabola has no meaning for a thermal group transfer; the fit continues with "
                             f"its limits there (barrier w downhill, w + dE uphill)")
        out["relations"][name] = entry

    if "asymptotic" in out["relations"] and "params" in out["relations"]["asymptotic"]:
        curve = CurveRegressor("asymptotic", loss=loss, intervals=intervals, n_bootstrap=n_bootstrap,
                               level=level).fit(x, y)
        rel = curve.relation_
        a = out["relations"]["asymptotic"]
        a["interval_method"] = intervals if not (intervals == "profile" and loss != "linear") else "wald"
        a["ci95"] = {k: [_to_unit(k, lo, rel, f), _to_unit(k, hi, rel, f)] for k, (lo, hi) in curve.ci_.items()}
        if curve.ci_open_:
            a["ci95_open"] = {k: list(v) for k, v in curve.ci_open_.items()}
        a["correlation"] = curve.correlation_.round(6).tolist()
        a["reverse"] = {k: _to_unit(k, v, rel, f) for k, v in curve.reverse_params().items()}
        ident = curve.identifiability_
        a["identifiable"] = bool(ident.identifiable) if ident is not None else None
        if ident is not None:
            a["identifiability"] = ident.as_dict(unit, f)
            a["alpha_members"] = curve.slope(x).tolist()
        # The asymptotic curve's verdict also at the top level (`asymptotic.ci95`, `asymptotic.identifiable`).
        out["asymptotic"] = {k: a[k] for k in ("params", "ci95", "identifiable", "derived", "reverse") if k in a}
    out["caution"] = CAUTION
    return out


def _fmt(v, digits: int = 3) -> str:
    if v is None or (isinstance(v, float) and not np.isfinite(v)):
        return "—"
    return f"{v:.{digits}g}" if abs(v) >= 1e-3 or v == 0 else f"{v:.2e}"


def format_curve_summary(s: dict) -> str:
    unit = s["units"]
    kind = {"free-energy": "Gibbs free energies", "enthalpy": "enthalpies",
            "electronic": "electronic energies"}.get(s["energy_kind"], s["energy_kind"])
    lines = [f"{s['n']} members; energies are {kind} in {unit}; reaction energies from "
             f"{_fmt(s['energy_range'][0])} to {_fmt(s['energy_range'][1])} {unit}", ""]
    head = f"{'relation':<14} {'parameters':<44} {'RMSE':>7} {'LOO MAE':>8} {'LOO RMSE':>9} {'AICc':>8}"
    lines += [head, "-" * len(head)]
    for name, r in s["relations"].items():
        if "params" not in r:
            lines.append(f"{name:<14} skipped: {r['skipped']}")
            continue
        params = " ".join(f"{k}={_fmt(v, 4)}" for k, v in r["params"].items())
        mark = " *" if name == s["best"] else ""
        lines.append(f"{name:<14} {params:<44} {_fmt(r['rmse']):>7} {_fmt(r['loo_mae']):>8} "
                     f"{_fmt(r['loo_rmse']):>9} {_fmt(r['aicc'], 4):>8}{mark}")
    lines.append(f"* best by leave-one-out RMSE: {s['best']}")
    for name, r in s["relations"].items():
        if r.get("note"):
            lines.append(f"  note ({name}): {r['note']}")
    a = s["relations"].get("asymptotic", {})
    if "ci95" in a:
        lines += ["", f"asymptotic curve, 95 % intervals ({a['interval_method']}), {unit}:"]
        names = {"floor": "floor F", "midpoint": "midpoint M", "width": "width W"}
        for k, v in a["params"].items():
            lo, hi = a["ci95"][k]
            opened = a.get("ci95_open", {}).get(k, [False, False])
            lo_s = ("≤" if opened[0] else "") + _fmt(lo, 4)
            hi_s = ("≥" if opened[1] else "") + _fmt(hi, 4)
            lines.append(f"  {names.get(k, k):<11} {_fmt(v, 4):>9}   [{lo_s}, {hi_s}]")
        d = a["derived"]
        lines.append(f"  uphill excess U = F − M = {_fmt(d['uphill_excess'], 4)}; intrinsic barrier "
                     f"(dE = 0) = {_fmt(d['intrinsic_barrier'], 4)}; Leffler α at dE = 0: "
                     f"{_fmt(d['alpha_at_zero'], 3)}")
        rev = a["reverse"]
        lines.append(f"  reverse direction: floor {_fmt(rev['floor'], 4)}, midpoint {_fmt(rev['midpoint'], 4)}, "
                     f"width {_fmt(rev['width'], 4)}")
        corr = np.asarray(a["correlation"])
        lines.append(f"  correlation: F–M {corr[0, 1]:+.2f}, F–W {corr[0, 2]:+.2f}, M–W {corr[1, 2]:+.2f}")
        if "identifiability" in a:
            lines += ["", a["identifiability"]["message"]]
    lines += ["", s["caution"]]
    return "\n".join(lines)
