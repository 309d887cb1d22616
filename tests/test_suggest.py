"""Next-calculation advice on invented families with a known truth (invented data, labelled).

A training set with a narrow reaction-energy span, a wide pool of candidates whose reaction
energies are computed (the curve-only route), and N picks computed (true curve plus noise).
Over 24 seeds, adding the N suggested members must shrink the asymptotic parameters' 95 %
intervals and the error on the rest of the pool more than adding N random members.
"""

import numpy as np
import pytest

from barrierscope.curves.regressor import CurveRegressor
from barrierscope.jobs.suggest import Candidates, pick
from barrierscope.relations import get_relation

ASYM = get_relation("asymptotic")
TRUTH = np.array([4.0, -6.0, 5.0])  # invented floor, midpoint, width (kcal/mol)


def experiment(seed: int, n_picks: int = 6, goal: str = "parameters"):
    rng = np.random.default_rng(seed)
    e_train = rng.uniform(-9.0, -1.0, 8)
    b_train = ASYM.barrier(e_train, TRUTH) + rng.normal(0, 0.8, 8)
    e_pool = rng.uniform(-40.0, 25.0, 150)
    b_pool_noisy = ASYM.barrier(e_pool, TRUTH) + rng.normal(0, 0.8, 150)
    curve = CurveRegressor("asymptotic", intervals="none").fit(e_train, b_train)
    cands = Candidates(ids=list(range(150)), energy=e_pool, energy_sd=np.zeros(150), Z=None,
                       in_domain=np.ones(150, bool), ad_distance=np.full(150, np.nan), given=np.ones(150, bool))
    chosen = [p["index"] for p in pick(curve, cands, n_picks, goal)]
    random = list(rng.choice(150, n_picks, replace=False))
    out = {}
    for name, idx in (("suggested", chosen), ("random", random)):
        e = np.concatenate([e_train, e_pool[idx]])
        b = np.concatenate([b_train, b_pool_noisy[idx]])
        fit = CurveRegressor("asymptotic", intervals="profile").fit(e, b)
        lo, hi = ASYM.bounds(e, b)
        widths = [min(fit.ci_[k][1], hi[j]) - max(fit.ci_[k][0], lo[j]) for j, k in enumerate(ASYM.param_names)]
        rest = np.setdiff1d(np.arange(150), idx)
        err = float(np.mean(np.abs(fit.predict(e_pool[rest]) - ASYM.barrier(e_pool[rest], TRUTH))))
        out[name] = (np.sum(np.log(widths)), err)
    return out, chosen


@pytest.mark.slow
@pytest.mark.parametrize("goal", ["parameters", "predictions"])
def test_suggested_beat_random_over_many_seeds(goal):
    seeds = range(24)
    width_gain, err_ratio = [], []
    for seed in seeds:
        res, _ = experiment(seed, goal=goal)
        width_gain.append(res["random"][0] - res["suggested"][0])  # > 0: suggested intervals narrower
        err_ratio.append(res["suggested"][1] / res["random"][1])
    mean_width_ratio = float(np.exp(np.mean(width_gain) / 3))
    mean_err_ratio = float(np.exp(np.mean(np.log(err_ratio))))
    print(f"\n{goal}: 95 % interval width, random / suggested (geometric mean per parameter) {mean_width_ratio:.2f}; "
          f"pool error, suggested / random {mean_err_ratio:.2f}")
    assert np.mean(width_gain) > 0 and mean_err_ratio < 1.0


def test_batch_is_not_one_candidate_repeated():
    _, chosen = experiment(0)
    assert len(set(chosen)) == len(chosen) == 6


def test_unknown_goal():
    with pytest.raises(ValueError, match="valid choices: parameters, predictions"):
        experiment(0, goal="everything")
