"""`barrierscope demo`: the whole job on the bundled, invented family (see :mod:`.scenario`).

Writes into the output folder: the data (``family.csv``, ``library.csv``, ``CARD.md``), the
fitted model, the validated verdict, the screened library (its 200 rows with a computed
reaction energy go through the curve directly), next-calculation advice, and one HTML
report with its figures.
"""

from __future__ import annotations

import json
import time
from pathlib import Path

import pandas as pd

from ..demo.scenario import CORE, card_text, make_family, make_library
from ..io.atomic import write_text_atomic
from ..io.modelfile import json_ready


def run_demo(out: str | Path = "barrierscope-demo", cache_dir="default", k: int = 5, shuffles: int = 5) -> dict:
    from ..descriptors.cache import DescriptorCache
    from ..descriptors.tiers import DescriptorEngine
    from ..io import modelfile
    from ..io.tables import read_table
    from ..structures.spec import make_spec
    from ..views.report import write_fit_report
    from .executors import SerialExecutor
    from .fit import FitOptions, fit_family, summary_in_unit
    from .screen import ScreenOptions, run_screen, unit_slug
    from .suggest import suggest_file

    t0 = time.monotonic()
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    family = make_family()
    family_path, library_path = out / "family.csv", out / "library.csv"
    write_text_atomic(family_path, family.to_csv(index=False))
    write_text_atomic(library_path, make_library(family).to_csv(index=False))
    write_text_atomic(out / "CARD.md", card_text())

    spec = make_spec(molecule="smiles", core=CORE)
    engine = DescriptorEngine(("2d", "table"), DescriptorCache(cache_dir))
    model, summary = fit_family(read_table(family_path), str(family_path), spec, engine,
                                FitOptions("dG_r", "dG_act", n_shuffles=shuffles))
    model_path = out / "model.json"
    modelfile.save(model.as_dict(), model_path)
    write_text_atomic(out / "validation.json",
                      json.dumps(json_ready(summary_in_unit(summary, model.units)), indent=1, allow_nan=False))

    screen_path = out / "screen.csv"
    screen = run_screen(model_path, library_path, screen_path,
                        ScreenOptions(energy_column="dG_r_computed", cache_dir=cache_dir),
                        executor=SerialExecutor(), top=10, progress=False)
    result = pd.read_csv(screen_path, keep_default_na=False)
    slug = unit_slug(model.units)
    ok = result[result["status"] == "ok"].copy()
    ok["rank"] = ok["rank"].astype(int)
    top = ok.nsmallest(10, "rank")
    top_rows = [{"rank": int(r["rank"]), "id": r["id"], "barrier": float(r[f"barrier_{slug}"]),
                 "low": float(r[f"barrier_low90_{slug}"]), "high": float(r[f"barrier_high90_{slug}"]),
                 "alpha": float(r["leffler_alpha"]), "half_life": r["half_life"],
                 "in_domain": str(r["in_domain"]).lower() == "true"} for _, r in top.iterrows()]
    distances = pd.to_numeric(ok["ad_distance"], errors="coerce").to_numpy()

    advice = suggest_file(model_path, library_path, k, "parameters", energy_column="dG_r_computed",
                          cache_dir=cache_dir)
    write_text_atomic(out / "suggestions.json", json.dumps(json_ready(advice), indent=1, allow_nan=False))

    write_fit_report(model, summary, out / "report.html", out / "figures", source="demo family (invented data)",
                     screen={"summary": screen, "top": top_rows, "distances": distances}, picks=advice["picks"])
    return {"out": out, "model": model, "summary": summary, "screen": screen, "top": top_rows, "advice": advice,
            "seconds": time.monotonic() - t0}


def format_demo(result: dict) -> str:
    out = result["out"]
    s = result["summary"]
    screen = result["screen"]
    lines = ["barrierscope demo — an INVENTED reaction family (see CARD.md); every number below is from the model.",
             "", f"fit: {s['n']} members, relation {s['relation']}, learner {s['learner']}",
             f"verdict: {s['verdict']}", "",
             f"screen: {screen.rows} library rows, {screen.ok} ok, {screen.rows - screen.ok} with errors (each "
             f"explained in its status), {screen.energy_given} with a computed reaction energy used directly",
             "lowest predicted barriers (kcal/mol, 90 % interval, half-life at 298.15 K):"]
    for r in result["top"][:5]:
        lines.append(f"  {r['id']}: {r['barrier']:.1f} [{r['low']:.1f}, {r['high']:.1f}]  {r['half_life']}"
                     + ("" if r["in_domain"] else "  (out of domain)"))
    lines += ["", "compute next:"]
    for n, p in enumerate(result["advice"]["picks"], start=1):
        lines.append(f"  {n}. {p['id']}: {p['reason']}")
    lines += ["", f"outputs in {out}/:", "  report.html     the report (open in a browser)",
              "  model.json      the fitted model", "  validation.json the leave-one-out figures and the verdict",
              "  screen.csv      the ranked library", "  suggestions.json what to compute next",
              "  figures/        the report's figures as PNG", f"done in {result['seconds']:.0f} s"]
    from ..views.cautions import CAUTION

    lines += ["", CAUTION]
    return "\n".join(lines)
