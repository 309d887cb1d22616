"""Fitting, intervals, identifiability and the comparison of relations.

Synthetic families here are invented test data with a known truth, labelled as such.
"""

import math

import numpy as np
import pytest

from barrierscope.curves.stats import aicc as aicc_only, information_criteria
from barrierscope.curves.compare import (
    compare_relations,
    loo_predictions,
)
from barrierscope.curves.fit import FitError, fit_relation
from barrierscope.curves.intervals import bootstrap_intervals, wald_intervals
from barrierscope.curves.regressor import CurveRegressor
from barrierscope.relations import get_relation

ASYM = get_relation("asymptotic")
TRUTH = np.array([5.0, -8.0, 6.0])  # invented: floor, midpoint, width (kcal/mol)


def invented_family(seed, n=30, lo=-35.0, hi=20.0, noise=1.5, truth=TRUTH):
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(lo, hi, n))
    return x, ASYM.barrier(x, truth) + rng.normal(0.0, noise, n)


def test_recovers_known_parameters_without_noise():
    x = np.linspace(-40, 25, 25)
    for truth in ([5.0, -8.0, 6.0], [0.5, 3.0, 2.0], [12.0, -20.0, 15.0]):
        truth = np.array(truth)
        fit = fit_relation(ASYM, x, ASYM.barrier(x, truth))
        assert np.allclose(fit.params, truth, rtol=1e-6, atol=1e-6)


@pytest.mark.slow
def test_profile_intervals_cover_the_truth_about_95_percent():
    # Repeated noisy draws of an invented family with known truth; the profile-t 95 %
    # intervals (Bates & Watts 1988, ch. 6) should hold the truth in about 95 % of draws.
    # 200 draws: binomial standard error 1.5 %, so the band 0.89–0.99 is about ±4 SE.
    draws = 200
    hits = np.zeros(3)
    for seed in range(draws):
        x, y = invented_family(seed)
        curve = CurveRegressor("asymptotic").fit(x, y)
        for k, name in enumerate(ASYM.param_names):
            lo, hi = curve.ci_[name]
            hits[k] += lo <= TRUTH[k] <= hi
    coverage = hits / draws
    assert np.all(coverage >= 0.89) and np.all(coverage <= 0.99), coverage


def test_wald_intervals_of_the_line_cover_95_percent():
    # For a straight line the t-interval is exact (any regression text, e.g. Draper & Smith).
    line = get_relation("linear")
    hits = 0
    for seed in range(400):
        rng = np.random.default_rng(seed)
        x = rng.uniform(-10, 10, 15)
        y = 12.0 + 0.35 * x + rng.normal(0, 1.0, 15)
        ci = wald_intervals(fit_relation(line, x, y))
        hits += ci["alpha"][0] <= 0.35 <= ci["alpha"][1]
    assert 0.92 <= hits / 400 <= 0.98


def test_profile_and_bootstrap_agree_on_a_well_determined_family():
    x, y = invented_family(7, n=60, noise=1.0)
    fit = fit_relation(ASYM, x, y)
    prof = CurveRegressor("asymptotic").fit(x, y).ci_
    boot = bootstrap_intervals(fit, x, y, n_boot=400, random_state=1)
    for name in ASYM.param_names:
        w_p = prof[name][1] - prof[name][0]
        w_b = boot[name][1] - boot[name][0]
        assert 0.5 < w_b / w_p < 2.0, (name, prof[name], boot[name])


def test_exact_loo_matches_refitting_one_by_one():
    x, y = invented_family(3, n=18)
    for name in ("linear", "marcus", "agmon_levine", "rehm_weller", "asymptotic"):
        rel = get_relation(name)
        fit = fit_relation(rel, x, y)
        fast = loo_predictions(fit, x, y)
        slow = np.empty_like(fast)
        for i in range(x.size):
            keep = np.arange(x.size) != i
            slow[i] = fit_relation(rel, x[keep], y[keep]).predict(x[i:i + 1])[0]
        assert np.allclose(fast, slow, atol=1e-5), name


def test_linear_loo_equals_the_hat_matrix_formula():
    # Closed form for least squares: e_(i) = e_i / (1 − h_ii) (e.g. Cook & Weisberg 1982).
    rng = np.random.default_rng(0)
    x = rng.uniform(-20, 5, 25)
    y = 14 + 0.4 * x + rng.normal(0, 1, 25)
    fit = fit_relation(get_relation("linear"), x, y)
    X = np.column_stack([np.ones_like(x), x])
    h = np.einsum("ij,jk,ik->i", X, np.linalg.inv(X.T @ X), X)
    e = y - X @ np.linalg.lstsq(X, y, rcond=None)[0]
    expected = y - e / (1 - h)
    assert np.allclose(loo_predictions(fit, x, y), expected, atol=1e-9)


def test_comparison_prefers_the_true_form_and_reports_criteria():
    x, y = invented_family(11, n=40, noise=1.0)
    comp = compare_relations(x, y)
    assert comp.best == "asymptotic"
    s = comp.scores
    assert s["asymptotic"].aicc < s["linear"].aicc
    assert s["asymptotic"].loo_rmse < s["linear"].loo_rmse
    for score in s.values():
        assert score.loo_rmse >= score.rmse * 0.99  # out-of-sample cannot beat in-sample here


def test_information_criteria_formula():
    # AICc = n ln(RSS/n) + 2k + 2k(k+1)/(n−k−1), k = p + 1 (C. M. Hurvich, C.-L. Tsai, Biometrika 1989);
    # BIC = n ln(RSS/n) + k ln n (G. Schwarz 1978). Worked by hand for RSS = 50, n = 20, p = 3 (k = 4):
    # 20 ln 2.5 = 18.325815; AICc = 18.325815 + 8 + 40/15 = 28.992481; BIC = 18.325815 + 4 ln 20 = 30.308744.
    aicc, bic = information_criteria(rss=50.0, n=20, k=4)
    assert aicc == pytest.approx(28.99248130414977, rel=1e-12)
    assert bic == pytest.approx(30.308743731699067, rel=1e-12)
    # The joint fit's criterion is the same function: an exact fit (RSS = 0) has no likelihood
    # maximum and no criterion, whoever asks.
    assert math.isnan(information_criteria(rss=0.0, n=20, k=4)[0]) and math.isnan(aicc_only(0.0, 20, 4))


def test_narrow_span_is_called_not_identifiable_with_the_tangent():
    x, y = invented_family(5, n=20, lo=-3.0, hi=3.0, noise=1.0)
    curve = CurveRegressor("asymptotic").fit(x, y)
    ident = curve.identifiability_
    assert not ident.identifiable
    from barrierscope.views.curve_text import identifiability_text

    message = identifiability_text(ident.as_dict(), "kcal/mol")
    assert "not determined" in message and "tangent" in message
    # The tangent is what the data determine: the line's slope agrees with the truth's α there.
    true_alpha = 1 / (1 + np.exp(-(np.mean(x) - TRUTH[1]) / TRUTH[2]))
    lo, hi = ident.tangent.alpha_ci95
    assert lo < true_alpha < hi


def test_wide_span_is_identifiable():
    x, y = invented_family(5, n=30, noise=1.0)
    ident = CurveRegressor("asymptotic").fit(x, y).identifiability_
    assert ident.identifiable and ident.span_over_width > 3


def test_robust_loss_resists_an_outlier():
    x, y = invented_family(9, n=30, noise=0.5)
    y[4] += 25.0
    plain = fit_relation(ASYM, x, y)
    robust = fit_relation(ASYM, x, y, loss="soft_l1", f_scale=1.0)  # scipy's name (the CLI says "soft")
    err_plain = np.abs(plain.params - TRUTH).sum()
    err_robust = np.abs(robust.params - TRUTH).sum()
    assert err_robust < err_plain


def test_predictive_interval_adds_energy_uncertainty():
    x, y = invented_family(2)
    curve = CurveRegressor("asymptotic", intervals="none").fit(x, y)
    e = np.array([-30.0, 0.0, 15.0])
    _, s0 = curve.predict(e, return_std=True)
    _, s1 = curve.predict(e, return_std=True, energy_std=3.0)
    alpha = curve.slope(e)
    assert np.allclose(s1 ** 2 - s0 ** 2, (alpha * 3.0) ** 2)


def test_auto_relation_picks_by_loo():
    x, y = invented_family(13, n=35, noise=1.0)
    curve = CurveRegressor("auto", intervals="none").fit(x, y)
    assert curve.relation_.name == curve.comparison_.best == "asymptotic"


@pytest.mark.parametrize("x,y,match", [
    ([1.0, 1.0, 1.0, 1.0, 1.0], [10, 11, 12, 13, 14], "zero reaction-energy span"),
    ([1.0, 2.0], [10.0, 11.0], "at least 4"),
    ([1.0, np.nan, 3.0, 4.0, 5.0], [1, 2, 3, 4, 5], "non-finite"),
])
def test_fit_refuses_with_a_reason(x, y, match):
    with pytest.raises(FitError, match=match):
        fit_relation(ASYM, np.array(x), np.array(y, dtype=float))
