"""The Python API gives the command line's numbers: fit, leave-one-out table, screen, suggest.

Data: an invented family with a known truth (tests/families.py, labelled as invented)."""

import json

import matplotlib
import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

import barrierscope as bs
from barrierscope.cli import app
from families import substituent_family

matplotlib.use("Agg")


@pytest.fixture(scope="module")
def both(tmp_path_factory):
    folder = tmp_path_factory.mktemp("api")
    fam = folder / "fam.csv"
    substituent_family(22, seed=7, path=fam)
    lib = folder / "lib.csv"
    from barrierscope.descriptors.hammett import ENTRIES

    rng = np.random.default_rng(3)
    subs = [e.smiles for e in ENTRIES]
    pd.DataFrame({"id": [f"L{i}" for i in range(80)], "R1": [subs[k] for k in rng.integers(0, len(subs), 80)],
                  "R2": [subs[k] for k in rng.integers(0, len(subs), 80)]}).to_csv(lib, index=False)
    cache = str(folder / "cache")
    family = bs.fit(bs.read_table(fam), energy="dE", barrier="dG", substituents="R1,R2", n_shuffles=2,
                    cache_dir=cache)
    runner = CliRunner()
    model, members, screened = folder / "m.json", folder / "members.parquet", folder / "screen.parquet"
    r = runner.invoke(app, ["fit", str(fam), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "-o", str(model), "--shuffles", "2", "--members", str(members), "--json",
                            "--cache-dir", cache])
    assert r.exit_code == 0, r.output
    r2 = runner.invoke(app, ["screen", str(model), str(lib), "-o", str(screened), "--cache-dir", cache, "--quiet"])
    assert r2.exit_code == 0, r2.output
    return family, json.loads(r.stdout), pd.read_parquet(members), pd.read_parquet(screened), lib, model


def test_fit_is_the_same(both):
    family, cli_json, cli_members, *_ = both
    api = family.as_json()
    assert api["winner"] == cli_json["winner"] and api["verdict"] == cli_json["verdict"]
    for regime in ("loo", "downhill", "uphill", "clusters"):
        for route, m in api["validation"][regime]["routes"].items():
            assert m["mae"] == pytest.approx(cli_json["validation"][regime]["routes"][route]["mae"], rel=1e-12)
    pd.testing.assert_frame_equal(family.members(), cli_members)


def test_screen_is_the_same(both):
    family, _, _, cli_screen, lib, _ = both
    api = family.screen(lib)
    cols = [c for c in api.columns if c in cli_screen.columns]
    assert len(cols) > 20
    pd.testing.assert_frame_equal(api[cols].reset_index(drop=True), cli_screen[cols].reset_index(drop=True))


def test_curve_on_the_callers_axes_and_loaded_models(both):
    family, *_, model_path = both
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots()
    assert family.plot_curve(ax) is ax
    # members, the band and at least the six relations of the default comparison
    assert len(ax.collections) >= 2 and len(ax.lines) >= 6
    plt.close(fig)
    again = bs.load(model_path)
    assert again.members()["id"].tolist() == family.members()["id"].tolist()


def test_suggest_from_a_dataframe(both):
    family, *_, lib, _ = both
    picks = family.suggest(pd.read_csv(lib), k=3)
    assert isinstance(picks, pd.DataFrame) and len(picks) == 3 and picks["reason"].str.len().gt(0).all()
    assert picks.attrs["suggest"]["k"] == 3 and {"id", "score", "barrier", "energy"} <= set(picks.columns)


def test_the_api_lists_its_names_and_describes_tables(both):
    import barrierscope as bs

    assert {"fit", "load", "read_table", "descriptors", "Family"} <= set(dir(bs))
    table = pd.DataFrame({"R1": ["[*]C#N", "[*]C", "[*]OC"], "R2": ["[*][H]", "[*]F", "C(C"]})
    d = bs.descriptors(table, substituents="R1,R2", tiers="2d", cache_dir=None)
    assert len(d) == 3 and list(d["status"][:2]) == ["ok", "ok"] and d["status"][2] != "ok"
    assert "R1_mr" in d.columns
