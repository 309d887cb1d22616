"""Bad input gets a clear message naming the file and the problem, a non-zero exit, and no
traceback; per-row problems name their rows; nothing is dropped silently."""

import json

import numpy as np
import pandas as pd
import pytest
from families import substituent_family
from typer.testing import CliRunner

from barrierscope.cli import app

runner = CliRunner()


def curve_cmd(path):
    return ["curve", str(path), "--energy", "dE", "--barrier", "dG"]


def fit_cmd(path, tmp_path, *extra):
    return ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
            "-o", str(tmp_path / "m.json"), "--shuffles", "0", *extra]


GOOD = "id,dE,dG\n" + "".join(f"m{i},{-20 + 3 * i},{8 + 1.5 * i}\n" for i in range(8))

FILE_CASES = {
    "empty": (b"", "the file is empty"),
    "header only": (b"id,dE,dG\n", "has a header but no data rows"),
    "binary garbage": (b"\x00\x01\x02PK\x03\x04" * 50, "binary file"),
    "non-UTF-8 text": ("id,dE,dG\ncaf\xe9,1,2\n".encode("latin-1"), "not UTF-8"),
    "duplicate column names": (b"id,dE,dE,dG\na,1,2,3\n", "duplicate column name(s) 'dE'"),
    "missing column": (b"id,dE\na,1\n", "missing column(s) 'dG'"),
    "ragged rows (too many fields)": (b"id,dE,dG\na,1,2\nb,1,2,3,4\n", "rows do not line up with the header"),
    "wrong delimiter": (b"id dE dG\na 1 2\n", "delimited by something"),
}


@pytest.mark.parametrize("case", sorted(FILE_CASES))
def test_file_problems(case, tmp_path):
    content, needle = FILE_CASES[case]
    path = tmp_path / "data.csv"
    path.write_bytes(content)
    r = runner.invoke(app, curve_cmd(path))
    assert r.exit_code == 2, r.output
    assert needle in r.stderr and str(path) in r.stderr
    assert "Traceback" not in r.output


def test_byte_order_mark_and_quoted_delimiters_are_read(tmp_path):
    path = tmp_path / "bom.csv"
    text = GOOD.replace("m0,", '"m0, first",')
    path.write_bytes("\ufeff".encode("utf-8") + text.encode("utf-8"))
    r = runner.invoke(app, curve_cmd(path) + ["--json"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["n"] == 8


def test_semicolon_files_are_recognised(tmp_path):
    path = tmp_path / "semi.csv"
    path.write_text(GOOD.replace(",", ";"))
    r = runner.invoke(app, curve_cmd(path) + ["--json"])
    assert r.exit_code == 0 and json.loads(r.stdout)["n"] == 8


def test_short_rows_are_named(tmp_path):
    # A row with fewer fields than the header reads as empty cells, and says so per row.
    path = tmp_path / "short.csv"
    path.write_text(GOOD + "m9,3\n")
    r = runner.invoke(app, curve_cmd(path))
    assert r.exit_code == 2 and "row 9 (id 'm9'): empty cell in column 'dG'" in r.stderr


@pytest.mark.parametrize("cell,needle", [
    ("abc", "'abc' in column 'dG' is not a number"),
    ("nan", "holds NaN"),
    ("inf", "infinite"),
    ("", "empty cell"),
])
def test_bad_numbers_name_the_row(tmp_path, cell, needle):
    path = tmp_path / "d.csv"
    lines = GOOD.splitlines()
    lines[3] = f"m2,-14,{cell}"
    path.write_text("\n".join(lines) + "\n")
    r = runner.invoke(app, curve_cmd(path))
    assert r.exit_code == 2 and "row 3 (id 'm2')" in r.stderr and needle in r.stderr
    r = runner.invoke(app, curve_cmd(path) + ["--skip-bad-rows", "--json"])
    assert r.exit_code == 0
    out = json.loads(r.stdout)
    assert out["n"] == 7 and out["skipped"][0]["row"] == 3


@pytest.fixture(scope="module")
def family(tmp_path_factory):
    path = tmp_path_factory.mktemp("bad") / "fam.csv"
    substituent_family(24, seed=7, path=path)
    return path


def test_identical_duplicates_are_merged_with_a_warning(family, tmp_path):
    df = pd.read_csv(family)
    dup = pd.concat([df, df.iloc[[0]]], ignore_index=True)
    dup.loc[len(dup) - 1, "id"] = "copy"
    path = tmp_path / "dup.csv"
    dup.to_csv(path, index=False)
    r = runner.invoke(app, fit_cmd(path, tmp_path, "--json"))
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["n"] == 24 and "appears 2 times with the same values" in r.stderr


def test_conflicting_duplicates_are_an_error_listing_them(family, tmp_path):
    df = pd.read_csv(family)
    dup = pd.concat([df, df.iloc[[0]]], ignore_index=True)
    dup.loc[len(dup) - 1, ["id", "dG"]] = ["copy", dup.loc[0, "dG"] + 3.0]
    path = tmp_path / "conflict.csv"
    dup.to_csv(path, index=False)
    r = runner.invoke(app, fit_cmd(path, tmp_path))
    assert r.exit_code == 2 and "collide with another row of other energies" in r.stderr and "(id 'copy')" in r.stderr


def test_unit_mixup_is_flagged(family, tmp_path):
    df = pd.read_csv(family)
    df["dE"], df["dG"] = df["dE"] * 4.184, df["dG"] * 4.184 + 60  # kJ/mol-sized numbers, declared kcal/mol
    path = tmp_path / "kj.csv"
    df.to_csv(path, index=False)
    r = runner.invoke(app, fit_cmd(path, tmp_path))
    assert r.exit_code == 0 and "implausible" in r.stdout + r.stderr and "kJ/mol" in r.stdout + r.stderr


def test_structure_rows_are_named(family, tmp_path):
    df = pd.read_csv(family)
    df.loc[2, "R1"] = "[*]C1CC"
    df.loc[5, "R2"] = "C" * 3
    path = tmp_path / "s.csv"
    df.to_csv(path, index=False)
    r = runner.invoke(app, fit_cmd(path, tmp_path))
    assert r.exit_code == 2 and "row 3 (id 'm3')" in r.stderr and "row 6 (id 'm6')" in r.stderr
    assert "--skip-bad-rows" in r.stderr


def test_size_limit_is_configurable(tmp_path):
    path = tmp_path / "big.csv"
    pd.DataFrame({"smiles": ["C" * 40, "CCO"]}).to_csv(path, index=False)
    out = tmp_path / "d.csv"
    r = runner.invoke(app, ["descriptors", str(path), "--molecule", "smiles", "--max-atoms", "30", "-o", str(out)])
    assert r.exit_code == 0
    res = pd.read_csv(out)
    assert "above the limit of 30" in res.loc[0, "status"] and res.loc[1, "status"] == "ok"


def test_zero_span_and_parameter_at_bound(tmp_path):
    path = tmp_path / "flat.csv"
    path.write_text("id,dE,dG\n" + "".join(f"m{i},-5,{10 + i}\n" for i in range(8)))
    r = runner.invoke(app, curve_cmd(path))
    assert r.exit_code == 2 and "zero reaction-energy span" in r.stderr
    narrow = tmp_path / "narrow.csv"
    rng = np.random.default_rng(0)
    narrow.write_text("id,dE,dG\n" + "".join(f"m{i},{x:.2f},{12 + 0.4 * x + rng.normal(0, 0.5):.2f}\n"
                                             for i, x in enumerate(np.linspace(-2, 2, 12))))
    r = runner.invoke(app, curve_cmd(narrow))
    assert r.exit_code == 0 and "curvature is not determined" in r.stdout


@pytest.mark.parametrize("option,value", [("--tiers", "2d,nope"), ("--learner", "deep"), ("--relation", "cubic"),
                                          ("--units", "kcal/kg"), ("--kind", "potential")])
def test_bad_options_list_valid_choices(family, tmp_path, option, value):
    r = runner.invoke(app, fit_cmd(family, tmp_path, option, value))
    assert r.exit_code == 2 and "valid choices" in r.stderr and "Traceback" not in r.output


def test_corrupt_model_files_are_refused_by_every_command(family, tmp_path):
    model = tmp_path / "m.json"
    assert runner.invoke(app, fit_cmd(family, tmp_path)).exit_code == 0
    text = model.read_text()
    model.write_text(text.replace('"learner": "ridge"', '"learner": "forest"', 1))
    for cmd in (["screen", str(model), str(family), "-o", str(tmp_path / "o.csv")],
                ["suggest", str(model), str(family), "-k", "2"]):
        r = runner.invoke(app, cmd)
        assert r.exit_code == 2 and "checksum does not match" in r.stderr
