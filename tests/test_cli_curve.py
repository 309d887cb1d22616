"""The `barrierscope curve` command: its JSON contract (issue 2) and its messages."""

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from barrierscope.cli import app
from barrierscope.relations import get_relation

runner = CliRunner()


def write_family(path, factor=1.0, n=30, seed=4):
    # Invented family with a known asymptotic truth (floor 5, midpoint −8, width 6 kcal/mol).
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(-40, 20, n))
    y = get_relation("asymptotic").barrier(x, np.array([5.0, -8.0, 6.0])) + rng.normal(0, 1.0, n)
    pd.DataFrame({"id": [f"m{i}" for i in range(n)], "dG_r": x * factor, "dG_act": y * factor}).to_csv(path, index=False)


def run_json(*args):
    result = runner.invoke(app, [*args, "--json"])
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


def test_json_contract(tmp_path):
    path = tmp_path / "fam.csv"
    write_family(path)
    out = run_json("curve", str(path), "--energy", "dG_r", "--barrier", "dG_act")
    assert out["n"] == 30
    assert set(out["relations"]) == {"linear", "marcus", "agmon_levine", "rehm_weller", "blowers_masel", "asymptotic"}
    for r in out["relations"].values():
        assert {"params", "loo_mae", "loo_rmse", "aicc"} <= set(r)
    a = out["relations"]["asymptotic"]
    assert set(a["params"]) == {"floor", "midpoint", "width"}
    assert set(a["ci95"]) == {"floor", "midpoint", "width"}
    assert isinstance(a["identifiable"], bool) and a["identifiable"]
    top = out["asymptotic"]
    assert top["ci95"] == a["ci95"] and top["identifiable"] is True and top["params"] == a["params"]
    assert out["best"] in out["relations"]
    lo, hi = a["ci95"]["width"]
    assert lo < a["params"]["width"] < hi


def test_energies_in_the_input_unit(tmp_path):
    kcal, kj = tmp_path / "kcal.csv", tmp_path / "kj.csv"
    write_family(kcal)
    write_family(kj, factor=4.184)
    a = run_json("curve", str(kcal), "--energy", "dG_r", "--barrier", "dG_act")["relations"]["asymptotic"]
    b = run_json("curve", str(kj), "--energy", "dG_r", "--barrier", "dG_act", "--units", "kJ/mol")["relations"]["asymptotic"]
    for k in ("floor", "midpoint", "width"):
        assert b["params"][k] == pytest.approx(4.184 * a["params"][k], rel=1e-6)
        assert b["ci95"][k][0] == pytest.approx(4.184 * a["ci95"][k][0], rel=1e-4)
    assert b["loo_mae"] == pytest.approx(4.184 * a["loo_mae"], rel=1e-6)


def test_table_output_and_caution(tmp_path):
    path = tmp_path / "fam.csv"
    write_family(path)
    result = runner.invoke(app, ["curve", str(path), "--energy", "dG_r", "--barrier", "dG_act"])
    assert result.exit_code == 0
    assert "asymptotic" in result.stdout and "floor F" in result.stdout
    assert "not a process-safety figure" in result.stdout


@pytest.mark.parametrize("content,needle", [
    ("", "empty"),
    ("id,dG_r,dG_act\n", "no data rows"),
    ("id,dG_r,dG_act\na,1,2\nb,x,3\nc,2,4\nd,3,5\ne,4,6\n", "row 2 (id 'b')"),
    ("id,dE,dG_act\na,1,2\n", "missing column(s) 'dG_r'"),
])
def test_bad_input_messages(tmp_path, content, needle):
    path = tmp_path / "bad.csv"
    path.write_text(content)
    result = runner.invoke(app, ["curve", str(path), "--energy", "dG_r", "--barrier", "dG_act"])
    assert result.exit_code == 2
    assert needle in result.stderr
    assert "Traceback" not in result.output


def test_unknown_unit_lists_choices(tmp_path):
    path = tmp_path / "fam.csv"
    write_family(path)
    result = runner.invoke(app, ["curve", str(path), "--energy", "dG_r", "--barrier", "dG_act", "--units", "cal"])
    assert result.exit_code == 2 and "valid choices" in result.stderr
