"""The `barrierscope descriptors` command: one row out per row in, CSV and Parquet alike."""

import pandas as pd
import pytest
from typer.testing import CliRunner

from barrierscope.cli import app

runner = CliRunner()


def test_one_row_per_input_row_with_status(tmp_path):
    src = tmp_path / "lib.csv"
    pd.DataFrame({"id": list("abcdef"),
                  "smiles": ["OC(=O)c1ccc(C)cc1", "OC(=O)c1ccc(Cl)cc1", "CC(=O)c1ccccc1", "not a smiles",
                             "", "OC(=O)c1ccccc1"]}).to_csv(src, index=False)
    out_csv, out_pq = tmp_path / "d.csv", tmp_path / "d.parquet"
    for out in (out_csv, out_pq):
        r = runner.invoke(app, ["descriptors", str(src), "--molecule", "smiles", "--core", "OC(=O)c1ccc([*:1])cc1",
                                "-o", str(out), "--cache-dir", str(tmp_path / "cache")])
        assert r.exit_code == 0, r.output
    a, b = pd.read_csv(out_csv), pd.read_parquet(out_pq)
    assert len(a) == 6 and list(a["id"]) == list("abcdef")
    assert list(a["status"] == "ok") == [True, True, False, False, False, True]
    assert "core is not found" in a.loc[2, "status"]
    assert a.loc[5, "R1_canonical"] == "*[H]"
    num = [c for c in a.columns if c.startswith("R1_") and c != "R1_canonical"]
    pd.testing.assert_frame_equal(a[num], b[num], check_dtype=False)


def test_structure_option_is_required(tmp_path):
    src = tmp_path / "lib.csv"
    src.write_text("smiles\nCCO\n")
    r = runner.invoke(app, ["descriptors", str(src), "-o", str(tmp_path / "o.csv")])
    assert r.exit_code == 2 and "--substituents" in r.stderr


@pytest.mark.parametrize("tiers", ["2d,magic", "2d,2d"])
def test_bad_tiers(tmp_path, tiers):
    src = tmp_path / "lib.csv"
    src.write_text("R1\n[*]C\n")
    r = runner.invoke(app, ["descriptors", str(src), "--substituents", "R1", "--tiers", tiers, "-o", str(tmp_path / "o.csv")])
    assert r.exit_code == 2 and "tier" in r.stderr
