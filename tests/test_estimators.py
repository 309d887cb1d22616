"""Learners and estimators: closed forms against brute force, scikit-learn conventions."""

import json

import numpy as np
import pandas as pd
import pytest
from sklearn.base import clone

from barrierscope.estimators import CurveRegressor, DescriptorRegressor, HybridRegressor, TwoStageRegressor
from barrierscope.estimators.learners import LEARNERS, RIDGE_ALPHAS, fit_state, predict_state
from barrierscope.relations import get_relation


def invented(n=30, p=6, seed=0):
    # Invented data with a known truth: linear descriptor → energy map, asymptotic curve.
    rng = np.random.default_rng(seed)
    X = pd.DataFrame(rng.normal(size=(n, p)), columns=[f"d{j}" for j in range(p)])
    energy = X.to_numpy()[:, :3] @ np.array([9.0, -6.0, 4.0]) - 8.0 + rng.normal(0, 1.0, n)
    barrier = get_relation("asymptotic").barrier(energy, np.array([5.0, -6.0, 5.0])) + rng.normal(0, 0.7, n)
    return X, energy, barrier


def test_ridge_loo_closed_form_matches_refitting():
    # Allen's PRESS identity e_(i) = e_i/(1 − h_ii) (Technometrics 1974) at the chosen penalty.
    rng = np.random.default_rng(1)
    Z = rng.normal(size=(20, 4))
    y = Z @ np.array([1.0, -2.0, 0.5, 0.0]) + rng.normal(0, 0.3, 20)
    state = fit_state("ridge", Z, y)
    alpha = state["alpha"]
    assert alpha in RIDGE_ALPHAS
    brute = np.empty(20)
    for i in range(20):
        tr = np.arange(20) != i
        zc, yc = Z[tr] - Z[tr].mean(0), y[tr] - y[tr].mean()
        w = np.linalg.solve(zc.T @ zc + alpha * np.eye(4), zc.T @ yc)
        brute[i] = y[i] - ((Z[i] - Z[tr].mean(0)) @ w + y[tr].mean())
    # Exact for penalised least squares with an unpenalised intercept (the refit re-centres).
    assert np.allclose(np.asarray(state["loo_residuals"]), brute, atol=1e-10)


def test_ridge_coefficients_match_the_normal_equations():
    rng = np.random.default_rng(2)
    Z = rng.normal(size=(25, 3))
    y = Z @ np.array([2.0, 0.0, -1.0]) + 3.0 + rng.normal(0, 0.1, 25)
    s = fit_state("ridge", Z, y)
    zc = Z - Z.mean(0)
    w = np.linalg.solve(zc.T @ zc + s["alpha"] * np.eye(3), zc.T @ (y - y.mean()))
    assert np.allclose(s["coef"], w, atol=1e-10)
    mean, std = predict_state(s, Z)
    assert np.all(std > 0) and np.corrcoef(mean, y)[0, 1] > 0.99


@pytest.mark.parametrize("learner", LEARNERS)
def test_every_learner_fits_and_round_trips_exactly(learner):
    X, energy, _ = invented(n=30)
    reg = DescriptorRegressor(learner).fit(X, energy)
    mean, std = reg.predict(X, return_std=True)
    assert mean.shape == (30,) and np.all(np.isfinite(std)) and np.all(std > 0)
    again = DescriptorRegressor.from_dict(json.loads(json.dumps(reg.as_dict())))
    m2, s2 = again.predict(X, return_std=True)
    assert np.array_equal(mean, m2) and np.array_equal(std, s2)


def test_forest_matches_scikit_learn():
    from sklearn.ensemble import RandomForestRegressor

    X, energy, _ = invented(n=40)
    reg = DescriptorRegressor("forest").fit(X, energy)
    Z = reg.standardise(X)
    rf = RandomForestRegressor(n_estimators=100, min_samples_leaf=2, max_features=1 / 3, oob_score=True,
                               random_state=0).fit(Z, energy)
    assert np.allclose(reg.predict(X), rf.predict(Z), atol=1e-9)


def test_gp_matches_scikit_learn():
    from sklearn.gaussian_process import GaussianProcessRegressor
    from sklearn.gaussian_process.kernels import RBF, ConstantKernel, WhiteKernel

    X, energy, _ = invented(n=25, p=3)
    reg = DescriptorRegressor("gp").fit(X, energy)
    Z = reg.standardise(X)
    kernel = (ConstantKernel(1.0, (1e-3, 1e3)) * RBF(np.sqrt(3), (1e-2, 1e3)) + WhiteKernel(0.1, (1e-6, 1e1)))
    gp = GaussianProcessRegressor(kernel, normalize_y=True, n_restarts_optimizer=2, random_state=0).fit(Z, energy)
    m, s = gp.predict(Z[:5], return_std=True)
    m2, s2 = reg.predict(X.iloc[:5], return_std=True)
    assert np.allclose(m, m2, atol=1e-6) and np.allclose(s, s2, rtol=1e-4)


def test_scikit_learn_conventions():
    reg = DescriptorRegressor("pls", random_state=3)
    assert clone(reg).get_params() == {"learner": "pls", "random_state": 3, "effort": "full", "anchor": None,
                                       "fixed": ()}
    with pytest.raises(ValueError, match="valid choices: auto, ridge, pls, gp, forest"):
        DescriptorRegressor("svm").fit(*invented(n=10)[:2])


def test_two_stage_uses_known_energies_directly():
    X, energy, barrier = invented()
    ts = TwoStageRegressor().fit(X, barrier, energy)
    given = np.where(np.arange(30) % 2 == 0, energy, np.nan)
    parts = ts.predict_parts(X, given)
    assert np.array_equal(parts["energy"][::2], energy[::2])
    assert np.all(parts["energy_std"][::2] == 0.0) and np.all(parts["energy_std"][1::2] > 0)
    curve_only = ts.curve_.predict(energy[::2])
    assert np.allclose(parts["barrier"][::2], curve_only)


def test_hybrid_corrects_out_of_fold_residuals():
    X, energy, barrier = invented()
    hyb = HybridRegressor().fit(X, barrier, energy=energy)
    assert hyb.oof_residuals_.shape == (30,)
    # What the correction learns, rebuilt by a plain loop against scikit-learn's Ridge (the reference
    # library): member i's energy from a ridge at the family's penalty fitted without it, fed to the
    # curve refitted without it. The closed forms inside must give the same residuals.
    from sklearn.linear_model import Ridge

    from barrierscope.curves.fit import fit_relation
    from barrierscope.relations import get_relation

    stage = hyb.two_stage_.energy_
    Z, alpha = stage.standardise(X), stage.state_["alpha"]
    rel = get_relation("asymptotic")
    expected = np.empty(30)
    for i in range(30):
        keep = np.arange(30) != i
        e_i = Ridge(alpha=alpha).fit(Z[keep], energy[keep]).predict(Z[i:i + 1])[0]
        theta = fit_relation(rel, energy[keep], barrier[keep], x0=hyb.two_stage_.curve_.params_).params
        expected[i] = barrier[i] - rel.barrier(np.array([e_i]), theta)[0]
    assert np.allclose(hyb.oof_residuals_, expected, atol=2e-3)


@pytest.mark.parametrize("estimator,least", [(TwoStageRegressor(), 0.6), (HybridRegressor(), 0.6),
                                             (TwoStageRegressor(relation="linear"), 0.3)])
def test_two_stage_and_hybrid_compose_with_cross_val_score(estimator, least):
    # scikit-learn's own cross-validation, default scoring (R², through RegressorMixin), with the
    # reaction energies routed to fit and sliced with the rows of every fold.
    from sklearn.model_selection import cross_val_score

    X, energy, barrier = invented(n=30)
    scores = cross_val_score(estimator, X, barrier, params={"energy": energy}, cv=5)
    assert scores.shape == (5,) and np.all(np.isfinite(scores))
    # The invented truth is a curve on a linear energy map: the chain explains most of it (a line
    # through the curve, less).
    assert np.mean(scores) > least


def test_estimators_honour_their_parameters():
    X, energy, barrier = invented()
    hyb = HybridRegressor(relation="linear").fit(X, barrier, energy=energy)
    assert hyb.two_stage_.curve_.relation_.name == "linear"
    ts = TwoStageRegressor(learner="pls", relation="rehm_weller").fit(X, barrier, energy=energy)
    assert ts.energy_.learner == "pls" and ts.curve_.relation_.name == "rehm_weller"
    assert clone(ts).get_params() == ts.get_params()


def test_fitted_state_only_through_fit():
    from sklearn.exceptions import NotFittedError

    X, energy, barrier = invented()
    for est in (TwoStageRegressor(), HybridRegressor(), DescriptorRegressor(), CurveRegressor()):
        with pytest.raises(NotFittedError):
            est.predict(energy if isinstance(est, CurveRegressor) else X)
    with pytest.raises(ValueError, match="reaction energies"):
        TwoStageRegressor().fit(X, barrier)


def test_tags_declare_the_input():
    from sklearn.utils import get_tags

    assert get_tags(CurveRegressor()).input_tags.one_d_array
    for est in (DescriptorRegressor(), TwoStageRegressor(), HybridRegressor()):
        tags = get_tags(est)
        assert tags.input_tags.allow_nan and tags.estimator_type == "regressor"


def test_two_stage_round_trips_through_plain_json():
    X, energy, barrier = invented()
    ts = TwoStageRegressor().fit(X, barrier, energy=energy)
    again = TwoStageRegressor.from_dict(json.loads(json.dumps(ts.as_dict(), default=float)))
    assert np.array_equal(ts.predict(X), again.predict(X))
