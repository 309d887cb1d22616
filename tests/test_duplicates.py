"""Repeated calculations of one member (transition-state conformers): --duplicates.

Invented family (labelled as such): each structure computed two or three times with other
numbers. The merged values are worked by hand below; the Curtin–Hammett effective barrier
is −RT ln Σ exp(−ΔG‡ᵢ/RT) (J. I. Seeman, Chem. Rev. 1983, 83, 83), R = 1.987204 cal/(mol K)
(CODATA 2018: R = 8.314462618 J/(mol K), 1 cal = 4.184 J).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from families import substituent_family
from typer.testing import CliRunner

from barrierscope.cli import app
from barrierscope.io.pairs import merge_repeats, unassigned_stereo

runner = CliRunner()
RT = 8.314462618 / 4184.0 * 298.15          # kcal/mol at 298.15 K: 0.592485...


def test_merged_values_by_hand():
    e, b = np.array([-3.0, -2.0, -2.5]), np.array([20.0, 21.0, 23.0])
    assert merge_repeats(e, b, "lowest") == (-3.0, 20.0)
    assert merge_repeats(e, b, "mean") == pytest.approx((-2.5, 64.0 / 3.0))
    # By hand: Σ exp(−b/RT) = e^(−20/RT) (1 + e^(−1/RT) + e^(−3/RT)), so the effective barrier
    # is 20 − RT ln(1 + e^(−1/RT) + e^(−3/RT)) = 20 − 0.59249 × ln(1.19120) = 19.8963
    want_b = 20.0 - RT * math.log(1.0 + math.exp(-1.0 / RT) + math.exp(-3.0 / RT))
    want_e = -3.0 - RT * math.log(1.0 + math.exp(-1.0 / RT) + math.exp(-0.5 / RT))
    got_e, got_b = merge_repeats(e, b, "boltzmann", 298.15)
    assert got_b == pytest.approx(want_b, abs=1e-9) and got_b == pytest.approx(19.8963, abs=1e-4)
    assert got_e == pytest.approx(want_e, abs=1e-9)
    # Two equal conformers: RT ln 2 = 0.411 kcal/mol below either.
    assert merge_repeats(np.zeros(2), np.array([15.0, 15.0]), "boltzmann")[1] == pytest.approx(15.0 - RT * math.log(2))


def test_open_stereo_is_counted():
    assert unassigned_stereo("CC(O)CC") == 1
    assert unassigned_stereo("C[C@H](O)CC") == 0
    assert unassigned_stereo("CC=CC|[*]C#N") == 1
    assert unassigned_stereo("C/C=C/C") == 0


@pytest.fixture(scope="module")
def repeated(tmp_path_factory):
    folder = tmp_path_factory.mktemp("dups")
    fam = substituent_family(24, seed=6)
    extra = fam.iloc[:4].copy()
    extra["id"] = [f"{i}_conf2" for i in extra["id"]]
    extra["dG"] = extra["dG"] + np.array([1.0, -0.8, 2.5, 0.3])
    extra["dE"] = extra["dE"] + np.array([0.2, -0.1, 0.4, 0.0])
    table = pd.concat([fam, extra], ignore_index=True)
    path = folder / "fam.csv"
    table.to_csv(path, index=False)
    return folder, path, fam, extra


def _fit(path, folder, *extra):
    return runner.invoke(app, ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                               "-o", str(folder / "m.json"), "--shuffles", "0", "--learner", "ridge", "--json",
                               "--cache-dir", str(folder / "c"), *extra])


def test_refuse_explains_a_repeated_structure_and_names_the_options(repeated):
    folder, path, *_ = repeated
    r = _fit(path, folder)
    assert r.exit_code == 2
    assert "repeated calculation" in r.stderr and "stereochemistry included" in r.stderr
    assert "--duplicates lowest" in r.stderr and "boltzmann" in r.stderr
    assert "not written in the SMILES" not in r.stderr


@pytest.mark.parametrize("policy", ["lowest", "mean", "boltzmann"])
def test_each_policy_makes_one_member_of_each_repeated_structure(repeated, policy):
    from barrierscope.io.modelfile import load_model

    folder, path, fam, extra = repeated
    r = _fit(path, folder, "--duplicates", policy)
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["n"] == 24
    assert any("stand for repeated calculations" in w and "from 2 rows" in w for w in s["warnings"])
    model = load_model(folder / "m.json")
    train = dict(zip(model.training["ids"], model.training["barrier"]))
    stands = dict(zip(model.training["ids"], model.training["stands_for"]))
    for k in range(4):
        b = np.array([fam["dG"].iloc[k], extra["dG"].iloc[k]])
        e = np.array([fam["dE"].iloc[k], extra["dE"].iloc[k]])
        assert train[fam["id"].iloc[k]] == pytest.approx(merge_repeats(e, b, policy)[1], abs=1e-9)
        assert stands[fam["id"].iloc[k]] == 2
    assert stands[fam["id"].iloc[10]] == 1


def test_curve_takes_the_same_policies(tmp_path):
    """`curve` keys members by id: a repeated id with other numbers is refused, or merged."""
    rng = np.random.default_rng(3)
    e = np.linspace(-20.0, 10.0, 14)
    b = 12.0 + 0.5 * (e + 20.0) + rng.normal(0, 0.3, 14)
    df = pd.DataFrame({"id": [f"r{i}" for i in range(14)] + ["r3"], "dE": [*e, e[3] + 0.2], "dG": [*b, b[3] - 1.5]})
    path = tmp_path / "pairs.csv"
    df.to_csv(path, index=False)
    args = ["curve", str(path), "--energy", "dE", "--barrier", "dG", "--json"]
    refused = runner.invoke(app, args)
    assert refused.exit_code == 2 and "--duplicates" in refused.stderr
    r = runner.invoke(app, args + ["--duplicates", "lowest"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["n"] == 14
    assert any("from 2 rows" in w for w in json.loads(r.stdout)["warnings"])
    bad = runner.invoke(app, args + ["--duplicates", "median"])
    assert bad.exit_code == 2 and "--duplicates" in bad.stderr
