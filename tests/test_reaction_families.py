"""Reaction families A + B → C + D through every command; stereoisomers and rows that collide.

Data: invented families with a known truth (tests/families.py, labelled as invented)."""

import json

import pandas as pd
import pytest
from typer.testing import CliRunner

from barrierscope.cli import app
from families import TRUE_CURVE, methylation_family

runner = CliRunner()


@pytest.fixture(scope="module")
def methylation(tmp_path_factory):
    folder = tmp_path_factory.mktemp("methyl")
    fam, lib = folder / "fam.csv", folder / "lib.csv"
    methylation_family(26, seed=4, path=fam)
    library = methylation_family(20, seed=4, offset=26)[["id", "rxn"]]
    extra = pd.DataFrame({"id": ["other-partner", "other-layout"],
                          "rxn": ["CBr.[O-]c1ccccc1>>COc1ccccc1.[Br-]", "C=CC=C.C=C>>C1=CCCCC1"]})
    pd.concat([library, extra, methylation_family(3, seed=4)[["id", "rxn"]]]).to_csv(lib, index=False)
    cache = str(folder / "cache")
    model = folder / "model.json"
    r = runner.invoke(app, ["fit", str(fam), "--reaction", "rxn", "--tiers", "2d", "--energy", "dE", "--barrier", "dG",
                            "-o", str(model), "--json", "--shuffles", "2", "--cache-dir", cache])
    assert r.exit_code == 0, r.output
    return folder, fam, lib, model, cache, json.loads(r.stdout)


def test_descriptors_name_the_varying_positions(methylation):
    folder, fam, *_ = methylation
    out = folder / "desc.csv"
    r = runner.invoke(app, ["descriptors", str(fam), "--reaction", "rxn", "--tiers", "2d", "-o", str(out), "--quiet"])
    assert r.exit_code == 0, r.output
    d = pd.read_csv(out)
    assert (d["status"] == "ok").all()
    assert {"reactant2_mr", "product2_mr", "reactant2_canonical"} <= set(d.columns)
    assert not any(c.startswith(("reactant1_", "product1_")) and c != "reactant1_canonical" for c in d.columns)


def test_fit_finds_the_layout_and_the_curve(methylation):
    *_, model, _, record = methylation
    content = json.loads(model.read_text())["content"]
    layout = content["input"]["layout"]
    assert (layout["reactants"], layout["products"]) == (2, 2)
    assert dict(map(tuple, layout["constant"])) == {"reactant1": "CI", "product1": "[I-]"}
    assert record["n"] == 26 and record["features"] and all(f.startswith(("reactant2_", "product2_"))
                                                            for f in record["features"])
    # The invented barriers lie on TRUE_CURVE with noise 0.8: fed the true reaction energies the
    # curve must predict them about that well.
    assert record["routes"]["curve_on_true_energy"]["mae"] < 1.2
    p = record["curve"]["params"]
    assert abs(p["floor"] - TRUE_CURVE[0]) < 3.0


def test_screen_and_suggest_read_the_library_the_same_way(methylation):
    folder, fam, lib, model, cache, _ = methylation
    out = folder / "screen.csv"
    r = runner.invoke(app, ["screen", str(model), str(lib), "-o", str(out), "--cache-dir", cache, "--quiet"])
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out, keep_default_na=False)
    assert len(res) == 25 and (res["status"] == "ok").sum() == 23
    status = dict(zip(res["id"], res["status"]))
    assert "no CI among the reactants here" in status["other-partner"]
    assert "1 product here, 2 in the family's other rows" in status["other-layout"]
    r = runner.invoke(app, ["suggest", str(model), str(lib), "-k", "3", "--json", "--cache-dir", cache])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["already_computed"] == 3            # the three training members in the library
    assert len(s["picks"]) == 3 and not {p["id"] for p in s["picks"]} & set(pd.read_csv(fam)["id"])


def _stereo_family(with_stereo: bool) -> pd.DataFrame:
    # Invented: E and Z isomers of substituted propenes brominated, every pair with its own energies.
    rows = []
    for k, x in enumerate(["C", "CC", "OC", "Cl", "C#N", "C(F)(F)F"]):
        for geo, shift in (("/", 0.0), ("\\", 2.5)):
            alkene = f"C/C=C{geo}{x}" if with_stereo else f"CC=C{x}"
            rows.append((f"{x}-{'E' if geo == '/' else 'Z'}", f"{alkene}.BrBr>>CC(Br)C(Br){x}",
                         -20.0 + 3 * k + shift, 12.0 + k + 0.5 * shift))
    return pd.DataFrame(rows, columns=["id", "rxn", "dE", "dG"])


def test_stereoisomers_are_members_in_reaction_mode(tmp_path):
    path = tmp_path / "stereo.csv"
    _stereo_family(True).to_csv(path, index=False)
    r = runner.invoke(app, ["fit", str(path), "--reaction", "rxn", "--tiers", "2d", "--energy", "dE", "--barrier", "dG",
                            "-o", str(tmp_path / "m.json"), "--json", "--shuffles", "0"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["n"] == 12


def test_colliding_rows_are_named_with_the_reason_and_a_way_out(tmp_path):
    path = tmp_path / "flat.csv"
    _stereo_family(False).to_csv(path, index=False)   # the same SMILES for E and Z
    args = ["fit", str(path), "--reaction", "rxn", "--tiers", "2d", "--energy", "dE", "--barrier", "dG",
            "-o", str(tmp_path / "m.json"), "--shuffles", "0"]
    r = runner.invoke(app, args)
    assert r.exit_code == 2
    assert "row 1 (id 'C-E')" in r.stderr and "row 2 (id 'C-Z')" in r.stderr
    assert "same structure as read" in r.stderr and "stereochemistry" in r.stderr and "@/@@" in r.stderr
    assert "distinct ids" not in r.stderr
    r = runner.invoke(app, args + ["--skip-bad-rows", "--json"])
    assert r.exit_code != 0  # every member collides with its isomer: nothing is left to fit
    half = _stereo_family(False)
    half.loc[half.index % 4 == 1, "rxn"] = half.loc[half.index % 4 == 1, "rxn"].str.replace("CC=C", "C/C=C\\", n=1)
    half.to_csv(path, index=False)
    r = runner.invoke(app, args + ["--skip-bad-rows", "--json"])
    assert r.exit_code == 0, r.output
    skipped = json.loads(r.stdout)["skipped"]
    assert {s["id"] for s in skipped} == {"CC-E", "CC-Z", "Cl-E", "Cl-Z", "C(F)(F)F-E", "C(F)(F)F-Z"}
