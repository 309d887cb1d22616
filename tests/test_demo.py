"""The bundled demo (invented data): it runs end to end, its files match its generator, and
refitting reproduces the shipped model."""

import json

import numpy as np
import pandas as pd
import pytest
from conftest import ROOT


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    from barrierscope.jobs.demo import run_demo

    out = tmp_path_factory.mktemp("demo")
    return run_demo(out, cache_dir=str(out / "cache"))


def test_demo_outputs_exist_and_parse(demo):
    out = demo["out"]
    for name in ("family.csv", "library.csv", "CARD.md", "model.json", "validation.json", "screen.csv",
                 "suggestions.json", "report.html", "figures/curve.png", "figures/parity.png"):
        assert (out / name).exists(), name
    screen = pd.read_csv(out / "screen.csv", keep_default_na=False)
    assert len(screen) == len(pd.read_csv(out / "library.csv")) == 2500
    assert (screen["status"] != "ok").sum() == 5
    picks = json.loads((out / "suggestions.json").read_text())["picks"]
    assert len(picks) == 5 and all({"id", "score", "reason"} <= set(p) for p in picks)
    v = json.loads((out / "validation.json").read_text())
    # The invented truth is a curve on a linear energy map: the physics routes clearly beat the black box.
    assert v["comparison"]["two_stage_vs_direct"]["ci95"][1] < 0
    assert v["winner"] in ("two_stage", "hybrid", "tie")
    assert "INVENTED" in (out / "CARD.md").read_text()


def test_demo_recovers_the_invented_truth(demo):
    from barrierscope.demo.scenario import TRUTH

    ci = demo["model"].curve.ci_
    for k, v in TRUTH["curve"].items():
        assert ci[k][0] < v < ci[k][1], (k, v, ci[k])


def test_bundled_files_match_the_generator():
    from barrierscope.demo.scenario import card_text, make_family, make_library

    family = make_family()
    folder = ROOT / "datasets" / "demo"
    assert family.to_csv(index=False) == (folder / "family.csv").read_text()
    assert make_library(family).to_csv(index=False) == (folder / "library.csv").read_text()
    assert (ROOT / "datasets" / "demo" / "CARD.md").read_text() == card_text()


def test_refit_reproduces_the_shipped_model(demo):
    shipped = json.loads((ROOT / "models" / "demo_model.json").read_text())["content"]
    refit = json.loads((demo["out"] / "model.json").read_text())["content"]
    assert shipped["features"] == refit["features"] and shipped["input"] == refit["input"]
    assert np.allclose(shipped["two_stage"]["curve"]["theta"], refit["two_stage"]["curve"]["theta"], rtol=1e-6,
                       atol=1e-8)
    assert np.allclose(shipped["two_stage"]["energy_stage"]["state"]["coef"],
                       refit["two_stage"]["energy_stage"]["state"]["coef"], rtol=1e-6, atol=1e-9)
    for route in ("two_stage", "hybrid", "direct", "curve_on_true_energy"):
        a, b = shipped["validation"]["routes"][route], refit["validation"]["routes"][route]
        assert a["mae"] == pytest.approx(b["mae"], rel=1e-6), route
    assert shipped["validation"]["winner"] == refit["validation"]["winner"]
