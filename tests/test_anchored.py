"""The energy stage anchored on a computed reaction energy (estimators/anchored.py).

Checks: the partially penalised fit against its definition (explicit normal equations with
the intercept and anchor unpenalised; the leave-one-out shortcut against brute-force refits
— the hat-matrix identity for linear smoothers, D. M. Allen, Technometrics 1974, 16, 125);
the calibration line against ordinary least squares (scipy.stats.linregress); and invented
families (labelled as such) where the true reaction energy is the computed one times a slope
plus, or not, a small descriptor term — the situation of Δ-learning (R. Ramakrishnan et al.,
J. Chem. Theory Comput. 2015, 11, 2087).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from barrierscope.estimators.anchored import END_SPLIT_MIN, end_splits, fit_anchored, predict_anchored
from barrierscope.estimators.descriptor_regressor import DescriptorRegressor


def _family(n=40, term=0.0, seed=0, slope=0.63, noise=0.3, n_desc=20):
    """Invented: computed energies over a wide span, the reference = 3 + slope × computed +
    term × d0 + noise, with ``n_desc`` descriptors of which only d0 carries signal."""
    rng = np.random.default_rng(seed)
    X = pd.DataFrame(rng.normal(size=(n, n_desc)), columns=[f"d{j}" for j in range(n_desc)])
    X["e_comp"] = rng.uniform(-30.0, 30.0, n)
    y = 3.0 + slope * X["e_comp"].to_numpy() + term * X["d0"].to_numpy() + rng.normal(0.0, noise, n)
    return X, y


def test_partial_ridge_matches_its_normal_equations_and_brute_force_loo():
    rng = np.random.default_rng(3)
    n, p = 25, 6
    Z = rng.normal(size=(n, p))
    y = 2.0 + 1.5 * Z[:, 0] + 0.4 * Z[:, 2] + rng.normal(0, 0.2, n)
    st = fit_anchored(Z, y, [0], correction=True)
    assert st["correction"]
    alpha = st["alpha"]
    # Normal equations: [1, z0] unpenalised, the rest penalised by alpha.
    A = np.column_stack([np.ones(n), Z[:, 0], Z[:, 1:]])
    P = np.diag([0.0, 0.0] + [alpha] * (p - 1))
    coef = np.linalg.solve(A.T @ A + P, A.T @ y)
    assert np.allclose(predict_anchored(st, Z)[0], A @ coef, atol=1e-8)
    # Leave-one-out residuals by refitting at the same penalty.
    brute = np.empty(n)
    for i in range(n):
        keep = np.arange(n) != i
        c = np.linalg.solve(A[keep].T @ A[keep] + P, A[keep].T @ y[keep])
        brute[i] = y[i] - A[i] @ c
    assert np.allclose(st["loo_residuals"], brute, atol=1e-8)


def test_the_anchor_alone_is_ordinary_least_squares():
    X, y = _family(30, term=0.0, seed=1)
    reg = DescriptorRegressor("ridge", anchor="e_comp").fit(X, y)
    cal = reg.calibration()
    ref = stats.linregress(X["e_comp"], y)
    assert cal["a"] == pytest.approx(ref.intercept, rel=1e-9)
    assert cal["b"] == pytest.approx(ref.slope, rel=1e-9)
    # 95 % interval of the slope: t(n − 2) × its standard error (linregress's stderr).
    t = stats.t.ppf(0.975, 28)
    assert cal["b_ci95"][1] - cal["b"] == pytest.approx(t * ref.stderr, rel=1e-6)
    assert cal["b_ci95"][0] < 0.63 < cal["b_ci95"][1]


def test_without_a_descriptor_term_the_anchor_alone_is_chosen():
    chosen = [DescriptorRegressor("ridge", anchor="e_comp").fit(*_family(40, term=0.0, seed=s)).chosen_learner
              for s in range(5)]
    assert chosen.count("anchor") >= 4, chosen


def test_with_a_descriptor_term_the_correction_is_chosen():
    chosen = [DescriptorRegressor("ridge", anchor="e_comp").fit(*_family(40, term=2.0, seed=s)).chosen_learner
              for s in range(5)]
    assert chosen.count("anchor+correction") >= 4, chosen


@pytest.mark.parametrize("term", [0.0, 0.8])
def test_the_anchored_stage_beats_the_free_ridge_beyond_the_computed_members(term):
    """Downhill and uphill: the quarter with the lowest (highest) reference energy held out.
    Thirty descriptors and 1 kcal/mol of noise: ridge shrinks the computed column with the rest."""
    wins, ratio = [], []
    for seed in range(6):
        X, y = _family(40, term=term, seed=seed, noise=1.0, n_desc=30)
        order = np.argsort(y)
        q = len(y) // 4
        for train, test in ((order[q:], order[:q]), (order[:-q], order[-q:])):
            free = DescriptorRegressor("ridge").fit(X.iloc[train], y[train]).predict(X.iloc[test])
            anch = DescriptorRegressor("ridge", anchor="e_comp").fit(X.iloc[train], y[train]).predict(X.iloc[test])
            wins.append(np.mean(np.abs(anch - y[test])) < np.mean(np.abs(free - y[test])))
            ratio.append(np.mean(np.abs(anch - y[test])) / np.mean(np.abs(free - y[test])))
    assert np.mean(wins) >= 0.9 and np.median(ratio) < 0.6, (wins, ratio)


def test_rows_without_a_computed_energy_get_the_free_learner():
    X, y = _family(40, term=0.0, seed=2)
    reg = DescriptorRegressor("ridge", anchor="e_comp").fit(X, y)
    new = X.iloc[:4].copy()
    new.loc[new.index[:2], "e_comp"] = np.nan
    got = reg.predict(new)
    free = DescriptorRegressor("ridge").fit(X, y)
    assert np.allclose(got[:2], free.predict(new.iloc[:2]))      # the anchored stage's own free learner
    assert np.allclose(got[2:], reg.predict(X.iloc[2:4]))
    assert reg.anchored_rows(new).tolist() == [False, False, True, True]


def test_a_training_member_without_its_computed_energy_is_refused():
    X, y = _family(20, seed=4)
    X.loc[3, "e_comp"] = np.nan
    with pytest.raises(ValueError, match="missing for 1 training member"):
        DescriptorRegressor("ridge", anchor="e_comp").fit(X, y)


def test_the_anchored_stage_round_trips_through_json():
    X, y = _family(36, term=1.0, seed=5)
    reg = DescriptorRegressor("auto", anchor="e_comp").fit(X, y)
    again = DescriptorRegressor.from_dict(json.loads(json.dumps(reg.as_dict())))
    assert np.allclose(again.predict(X), reg.predict(X))
    assert again.chosen_learner == reg.chosen_learner


def test_end_splits_hold_out_each_end_of_the_computed_energies():
    a = np.arange(20.0)[::-1]
    (tr1, te1), (tr2, te2) = end_splits(a)
    assert set(a[te1]) == {0.0, 1.0, 2.0, 3.0, 4.0} and set(a[te2]) == {15.0, 16.0, 17.0, 18.0, 19.0}
    assert end_splits(np.arange(float(END_SPLIT_MIN - 1))) == []


def test_per_family_intercepts_under_one_slope():
    """Invented: two families whose computed energies carry different offsets, one slope."""
    X, y = _family(40, term=0.0, seed=7, n_desc=5)
    fam = np.repeat([0.0, 1.0], 20)
    X["family=a"], X["family=b"] = 1.0 - fam, fam
    y = y + 4.0 * fam
    shared = DescriptorRegressor("ridge", anchor="e_comp").fit(X, y)
    own = DescriptorRegressor("ridge", anchor="e_comp", fixed=("family=a", "family=b")).fit(X, y)
    assert own.state_["fixed"][0] == shared.state_["fixed"][0]
    assert len(own.state_["candidates"]["anchor"]["fixed"]) == 2     # one indicator: the other is the intercept's
    resid_own = y - own.predict(X)
    assert np.std(resid_own) < 0.5
    assert own.calibration()["b"] == pytest.approx(0.63, abs=0.03)


def test_fit_and_screen_with_a_computed_energy_column(tmp_path):
    """The command line: --computed-energy anchors the energy stage (JSON contract: ``anchor``
    with a, b and their 95 % intervals; each regime's free energy stage beside the anchored
    one), and screen reads the library's own computed energies (in --units) for it."""
    from families import substituent_family
    from typer.testing import CliRunner

    from barrierscope.cli import app

    runner = CliRunner()
    fam = tmp_path / "fam.csv"
    df = substituent_family(30, seed=4, path=fam)
    rng = np.random.default_rng(0)
    df["e_xtb"] = (df["dE"] - 2.0) / 0.7 + rng.normal(0, 0.3, len(df))     # invented: dE ≈ 2 + 0.7 × e_xtb
    df.to_csv(fam, index=False)
    out = tmp_path / "m.json"
    common = ["--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG", "--shuffles", "0",
              "--cache-dir", str(tmp_path / "c")]
    r = runner.invoke(app, ["fit", str(fam), *common, "--computed-energy", "e_xtb", "-o", str(out), "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    a = s["anchor"]
    assert a["column"] == "e_xtb" and a["source"] == "your column"
    assert a["b_ci95"][0] < 0.7 < a["b_ci95"][1] and a["a_ci95"][0] < 2.0 < a["a_ci95"][1]
    assert a["choice"] in ("anchor", "anchor+correction", "free") and a["black_box_choice"]
    for name, regime in s["validation"].items():
        if not regime.get("skipped"):
            assert {"energy_stage", "energy_stage_free"} <= set(regime), name
    assert s["validation"]["downhill"]["energy_stage"]["mae"] < s["validation"]["downhill"]["energy_stage_free"]["mae"]
    # The column cannot be the reference energies themselves.
    bad = runner.invoke(app, ["fit", str(fam), *common, "--computed-energy", "dE", "-o", str(tmp_path / "x.json")])
    assert bad.exit_code == 2 and "reaction energy" in bad.stderr
    # Screen: the library's own computed energies drive the anchored stage; a row without one
    # gets the free learner and says so.
    lib = df[["R1", "R2", "e_xtb"]].copy()
    lib.loc[0, "e_xtb"] = np.nan
    lib.to_csv(tmp_path / "lib.csv", index=False)
    r = runner.invoke(app, ["screen", str(out), str(tmp_path / "lib.csv"), "-o", str(tmp_path / "s.csv"),
                            "--cache-dir", str(tmp_path / "c"), "--quiet"])
    assert r.exit_code == 0, r.output
    res = pd.read_csv(tmp_path / "s.csv", keep_default_na=False).sort_values("row").reset_index(drop=True)
    assert "free learner" in res.loc[0, "notes"]
    e = res["reaction_energy_kcal_mol"].astype(float).to_numpy()[1:]
    assert np.corrcoef(e, 2.0 + 0.7 * lib["e_xtb"].to_numpy()[1:])[0, 1] > 0.95
