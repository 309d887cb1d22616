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

from ..demo.scenario import CORE, card_text, make_family, make_library
from ..io.atomic import write_text_atomic
from ..io.modelfile import json_ready


def run_demo(out: str | Path = "barrierscope-demo", cache_dir="default", k: int = 5, shuffles: int = 5) -> dict:
    from ..descriptors.cache import DescriptorCache
    from ..descriptors.tiers import DescriptorEngine
    from ..io import modelfile
    from ..io.tables import read_table, write_table
    from ..structures.spec import make_spec
    from ..views.fit_text import fit_json
    from ..views.members import members_frame
    from ..views.suggest_text import suggest_json
    from .executors import SerialExecutor
    from .fit import FitOptions, fit_family
    from .predict import ScreenOptions
    from .report import write_report
    from .screen import run_screen
    from .suggest import suggest_file

    t0 = time.monotonic()
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    family = make_family()
    family_path, library_path = out / "family.csv", out / "library.csv"
    write_text_atomic(family_path, family.to_csv(index=False))
    write_text_atomic(library_path, make_library(family).to_csv(index=False))
    write_text_atomic(out / "CARD.md", card_text())

    engine = DescriptorEngine(("2d", "table"), DescriptorCache(cache_dir))
    model, record = fit_family(read_table(family_path), str(family_path), make_spec(molecule="smiles", core=CORE),
                               engine, opts=FitOptions("dG_r", "dG_act", n_shuffles=shuffles))
    model_path = out / "model.json"
    modelfile.save(model.as_dict(), model_path)
    write_text_atomic(out / "validation.json", _json(fit_json(record, model.tiers)))
    write_table(members_frame(record, model.units), out / "members.csv")

    screen = run_screen(model_path, library_path, out / "screen.csv",
                        ScreenOptions(energy_column="dG_r_computed", cache_dir=cache_dir),
                        executor=SerialExecutor(), top=10, progress=False)
    advice = suggest_file(model_path, library_path, k, "parameters", energy_column="dG_r_computed",
                          cache_dir=cache_dir, model=model)
    write_text_atomic(out / "suggestions.json", _json(suggest_json(advice)))
    write_report(model, record, out / "report.html", out / "figures", source="demo family (invented data)",
                 screen=screen, picks=advice)
    return {"out": out, "model": model, "record": record, "screen": screen, "advice": advice,
            "seconds": time.monotonic() - t0}


def _json(obj) -> str:
    return json.dumps(json_ready(obj), indent=1, allow_nan=False)
