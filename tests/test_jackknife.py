"""Jackknife+ intervals (R. F. Barber, E. J. Candès, A. Ramdas, R. J. Tibshirani, Ann. Statist.
2021, 49, 486): the rank rule worked by hand, the estimator against the nested validation
engine, coverage near nominal on invented families (labelled so), and the model file."""

import numpy as np
import pytest

from barrierscope.estimators.jackknife import JackknifePlus, conformal_bounds, folds
from barrierscope.validation.conformal import jackknife_coverage, off_nominal
from barrierscope.validation.splits import Split, loo_splits

from test_validation import invented_family


def test_rank_rule_by_hand():
    # n = 9, α = 0.1: low is the ⌊0.1·10⌋ = 1st smallest of μ − R, high the ⌈0.9·10⌉ = 9th
    # smallest (the largest) of μ + R (Barber et al. 2021, eq. 6).
    mu = np.array([[10.0, 11, 9, 10, 12, 8, 10, 10, 11]])
    r = np.array([1.0, 2, 1, 3, 1, 2, 1, 1, 2])
    low, high = conformal_bounds(mu, r, 0.90)
    assert low[0] == pytest.approx(min(mu[0] - r)) == 6.0
    assert high[0] == pytest.approx(max(mu[0] + r)) == 13.0
    # n = 19, α = 0.1: the 2nd smallest and the 18th smallest.
    mu19, r19 = np.zeros((1, 19)), np.arange(1.0, 20.0)
    low, high = conformal_bounds(mu19, r19, 0.90)
    assert (low[0], high[0]) == (-18.0, 18.0)
    # Too few members for the rank: n = 4 gives infinite ends.
    low, high = conformal_bounds(np.zeros((1, 4)), np.ones(4), 0.90)
    assert low[0] == -np.inf and high[0] == np.inf


def test_folds_are_single_members_up_to_forty_then_ten():
    assert all(f.size == 1 for f in folds(40))
    big = folds(57)
    assert len(big) == 10 and sorted(np.concatenate(big).tolist()) == list(range(57))


@pytest.mark.parametrize("route", ["two_stage", "hybrid"])
def test_estimator_equals_the_nested_engine(route):
    # The interval the fitted estimator gives a new member equals the one the coverage check
    # builds for the same member held out (same refits, batched).
    X, energy, barrier = invented_family(18, seed=2, p=5)
    jk = JackknifePlus(route).fit(X.iloc[1:], barrier[1:], energy[1:])
    low, high = jk.interval(X.iloc[[0]])
    from barrierscope.validation import conformal

    inner = conformal._inner_splits([Split(np.arange(1, 18), np.array([0]))], 0)
    preds = conformal._predictions(X, energy, barrier, inner, routes=(route,), kw={})
    mu = np.array([[p[1] for p in preds[route]]])
    resid = np.array([abs(barrier[h[0]] - p[0]) for (_, h, _), p in zip(inner, preds[route])])
    elow, ehigh = conformal_bounds(mu, resid, 0.90)
    assert low[0] == pytest.approx(elow[0], abs=1e-4) and high[0] == pytest.approx(ehigh[0], abs=1e-4)


def test_coverage_near_nominal_on_invented_families():
    # 4 × 30 = 120 nested jackknife+ intervals; Barber et al. guarantee ≥ 80 % (1 − 2α) and
    # observe about 90 % in practice.
    cover = []
    for seed in range(4):
        X, energy, barrier = invented_family(30, seed)
        c = jackknife_coverage(X, energy, barrier, loo_splits(30), routes=("two_stage",))
        cover.append(c["two_stage"].coverage)
    assert 0.80 <= np.mean(cover) <= 0.98, cover


def test_off_nominal_uses_the_binomial_range():
    # 90 % nominal over 40 members: ±1.96·√(0.09/40) = ±9.3 points.
    assert not off_nominal(0.85, 40, 0.90) and off_nominal(0.78, 40, 0.90) and not off_nominal(0.5, 8, 0.90)
