"""The `barrierscope fit` command: JSON contract, model file, curve-only models, messages."""

import json

import numpy as np
import pytest
from families import substituent_family
from typer.testing import CliRunner

from barrierscope.cli import app

runner = CliRunner()


@pytest.fixture(scope="module")
def family_csv(tmp_path_factory):
    path = tmp_path_factory.mktemp("fit") / "fam.csv"
    substituent_family(26, seed=2, path=path)
    return path


def test_fit_json_contract(family_csv, tmp_path):
    out = tmp_path / "model.json"
    r = runner.invoke(app, ["fit", str(family_csv), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "-o", str(out), "--json", "--shuffles", "2", "--cache-dir", str(tmp_path / "c")])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["n"] == 26
    assert set(s["energy_stage"]) >= {"mae", "rmse", "r2"}
    assert set(s["routes"]) == {"two_stage", "hybrid", "direct", "structure_curve", "curve_on_true_energy",
                                "structure_curve_on_true_energy", "family_mean"}
    assert set(s["comparison"]) == {"two_stage_vs_direct", "hybrid_vs_direct", "structure_curve_vs_direct"}
    assert "mae_mean" in s["y_randomization"]
    assert s["winner"] in ("two_stage", "hybrid", "direct", "structure_curve", "tie", "family_mean")
    # Every regime side by side (issue 13's contract).
    assert set(s["validation"]) == {"loo", "downhill", "uphill", "clusters"}
    for name, regime in s["validation"].items():
        assert {"n_test", "routes", "winner"} <= set(regime), name
        assert set(regime["routes"]) == {"two_stage", "hybrid", "direct", "structure_curve", "curve_on_true_energy",
                                         "structure_curve_on_true_energy", "family_mean"}
        for m in regime["routes"].values():
            assert {"mae", "rmse"} <= set(m)
    assert s["validation"]["downhill"]["n_test"] == 7  # the most exergonic quarter of 26, rounded up
    # The recommendation (issue 20's contract): a string, first in the JSON and first in the verdict.
    assert list(s)[0] == "recommendation" and isinstance(s["recommendation"], str)
    assert s["verdict"].splitlines()[0] == s["recommendation"]
    assert "members like those computed" in s["recommendation"] and "The model predicts with" in s["recommendation"]
    assert s["learners_chosen"]["direct"] in ("ridge", "gp")
    for name, regime in s["validation"].items():
        assert regime["margin"] == 0.5 and all("beats" in c and "equivalent" in c for c in regime["pairs"].values())
    model = json.loads(out.read_text())
    assert model["schema_version"] == 2 and model["content"]["units"] == "kcal/mol"
    assert model["content"]["tiers"] == ["2d", "table"] and model["content"]["features"]


def test_curve_only_model(tmp_path):
    from conftest import ROOT

    out = tmp_path / "curve.json"
    r = runner.invoke(app, ["fit", str(ROOT / "datasets" / "examples" / "curve_family.csv"), "--energy", "dG_r",
                            "--barrier", "dG_act", "-o", str(out), "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["energy_stage"] is None and s["routes"]["direct"] is None
    assert s["winner"] == "curve_on_true_energy" and s["routes"]["curve_on_true_energy"]["mae"] < 1.5
    assert "use the curve fed computed reaction energies" in s["recommendation"]


def test_a_margin_larger_than_any_difference_leaves_nothing_beating_the_mean(family_csv, tmp_path):
    # --margin in the table's unit: 400 kJ/mol is far beyond any difference of these routes.
    import pandas as pd

    df = pd.read_csv(family_csv)
    df[["dE", "dG"]] *= 4.184
    path = tmp_path / "kj.csv"
    df.to_csv(path, index=False)
    r = runner.invoke(app, ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "--units", "kJ/mol", "--margin", "400", "-o", str(tmp_path / "m.json"), "--json",
                            "--shuffles", "0", "--learner", "ridge"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["recommendation"].startswith("Nothing beats the family mean in any regime tested")
    assert all(v["winner"] in ("tie", "family_mean") and not v["beats_mean"] for v in s["validation"].values())
    assert s["validation"]["loo"]["margin"] == pytest.approx(400.0)  # shown in the table's unit
    r = runner.invoke(app, ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "--margin", "-1", "-o", str(tmp_path / "m.json")])
    assert r.exit_code == 2 and "--margin" in r.stderr


def test_extra_descriptors_only(family_csv, tmp_path):
    import pandas as pd

    df = pd.read_csv(family_csv)
    df["my_sigma"] = df["dE"] / 25.0 + 0.01 * (df.index % 3)  # a user's own descriptor (invented)
    path = tmp_path / "fam2.csv"
    df.to_csv(path, index=False)
    r = runner.invoke(app, ["fit", str(path), "--substituents", "R1,R2", "--tiers", "none", "--extra-descriptors",
                            "my_sigma", "--energy", "dE", "--barrier", "dG", "-o", str(tmp_path / "m.json"),
                            "--json", "--shuffles", "0"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["features"] == ["my_sigma"] and s["energy_stage"]["r2"] > 0.95


@pytest.mark.parametrize("args,needle", [
    (["--learner", "svm"], "valid choices: auto, ridge, pls, gp, forest"),
    (["--relation", "cubic"], "valid choices"),
    (["--tiers", "2d,psychic"], "valid choices"),
    (["--units", "calories"], "valid choices"),
])
def test_bad_options_list_the_choices(family_csv, tmp_path, args, needle):
    r = runner.invoke(app, ["fit", str(family_csv), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "-o", str(tmp_path / "m.json"), *args])
    assert r.exit_code == 2 and needle in r.stderr and "Traceback" not in r.output


def test_too_few_members(tmp_path):
    path = tmp_path / "tiny.csv"
    path.write_text("id,R1,dE,dG\na,[*]C,-5,10\nb,[*]OC,-3,11\nc,[*]Cl,0,13\n")
    r = runner.invoke(app, ["fit", str(path), "--substituents", "R1", "--energy", "dE", "--barrier", "dG",
                            "-o", str(tmp_path / "m.json")])
    assert r.exit_code == 2 and "needs at least" in r.stderr


def test_jackknife_plus_intervals_are_measured_stored_and_used(family_csv, tmp_path):
    import pandas as pd

    from barrierscope.io.modelfile import load_model

    out = tmp_path / "jk.json"
    common = ["--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG", "--shuffles", "0", "--cache-dir",
              str(tmp_path / "c")]
    r = runner.invoke(app, ["fit", str(family_csv), *common, "-o", str(out), "--json",
                            "--prediction-intervals", "jackknife+"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["intervals"]["method"] == "jackknife+" and s["intervals"]["folds"] == 26
    for name, regime in s["validation"].items():
        jk = regime["jackknife_plus"][s["primary_route"]]
        assert 0.0 <= jk["coverage"] <= 1.0 and jk["n_test"] == regime["n_test"], name
    model = load_model(out)
    assert model.intervals is not None and len(model.intervals.models_) == 26
    table = pd.read_csv(family_csv)
    plain = tmp_path / "plain.json"
    assert runner.invoke(app, ["fit", str(family_csv), *common, "-o", str(plain)]).exit_code == 0
    got = {}
    for name, path in (("jk", out), ("plain", plain)):
        screened = tmp_path / f"{name}.csv"
        r = runner.invoke(app, ["screen", str(path), str(family_csv), "-o", str(screened), "--cache-dir",
                                str(tmp_path / "c")])
        assert r.exit_code == 0, r.output
        got[name] = pd.read_csv(screened).sort_values("row")
    jk, plain_ = got["jk"], got["plain"]
    assert len(jk) == len(table) and (jk["barrier_low90_kcal_mol"] < jk["barrier_high90_kcal_mol"]).all()
    # Same point predictions, other intervals: the screen uses the stored jackknife+ ones.
    assert np.allclose(jk["barrier_kcal_mol"], plain_["barrier_kcal_mol"])
    assert not np.allclose(jk["barrier_low90_kcal_mol"], plain_["barrier_low90_kcal_mol"])


@pytest.mark.parametrize("kind, symbol", [("enthalpy", "ΔH"), ("electronic", "ΔE"), ("free-energy", "ΔG")])
def test_labels_follow_the_kind_of_energy(family_csv, tmp_path, kind, symbol):
    r = runner.invoke(app, ["fit", str(family_csv), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "--kind", kind, "-o", str(tmp_path / "m.json"), "--shuffles", "0", "--learner", "ridge"])
    assert r.exit_code == 0, r.output
    assert f"energy stage ({symbol}_r)" in r.stdout
    others = {"ΔH", "ΔE", "ΔG"} - {symbol}
    assert not any(o in r.stdout for o in others) and "dE‡" not in r.stdout
