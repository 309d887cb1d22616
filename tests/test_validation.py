"""Validation: no leakage, the engine equals refitting the estimators, the verdict on invented
families with a known truth, and interval coverage. All families here are invented test
data (labelled so)."""

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from barrierscope.estimators import DescriptorRegressor, HybridRegressor, TwoStageRegressor
from barrierscope.relations import get_relation
from barrierscope.validation.metrics import clearly_better, metrics, paired_comparison
from barrierscope.validation.routes import out_of_fold
from barrierscope.validation.splits import end_split, loo_splits
from barrierscope.validation.verdict import decide
from barrierscope.validation.yrandom import constant_predictor_loo_mae

ASYM = get_relation("asymptotic")


def invented_family(n, seed, p=8, noise_e=1.0, noise_b=0.7):
    """Invented: energy linear in 3 of p descriptors over a wide span; barrier on a known curve."""
    rng = np.random.default_rng(seed)
    X = pd.DataFrame(rng.normal(size=(n, p)), columns=[f"d{j}" for j in range(p)])
    energy = X.to_numpy()[:, :3] @ np.array([10.0, -7.0, 5.0]) - 8.0 + rng.normal(0, noise_e, n)
    barrier = ASYM.barrier(energy, np.array([4.0, -6.0, 4.0])) + rng.normal(0, noise_b, n)
    return X, energy, barrier


def test_engine_equals_refitting_the_estimators_split_by_split():
    # The batched engine must give what a plain loop of estimator refits gives: the same
    # predictions for every route, in leave-one-out and in an extrapolation split.
    X, energy, barrier = invented_family(16, seed=4, p=5)
    for splits in (loo_splits(16), [end_split(energy, "downhill")]):
        oof = out_of_fold(X, energy, barrier, splits)
        for s in splits:
            Xtr, Xte = X.iloc[s.train], X.iloc[s.test]
            ts = TwoStageRegressor().fit(Xtr, barrier[s.train], energy=energy[s.train])
            expect = {
                "two_stage": ts.predict(Xte),
                "curve_on_true_energy": ts.predict(Xte, energy=energy[s.test]),
                "hybrid": HybridRegressor().fit(Xtr, barrier[s.train], energy=energy[s.train]).predict(Xte),
                "direct": DescriptorRegressor().fit(Xtr, barrier[s.train]).predict(Xte),
                "family_mean": np.full(s.test.size, barrier[s.train].mean()),
            }
            for route, values in expect.items():
                assert np.allclose(oof.pred[route][s.test], values, atol=1e-5), route


@pytest.mark.parametrize("learner", ["pls", "gp", "forest"])
def test_engine_equals_plain_refits_for_every_learner(learner):
    # The same check for the other learners, split by split from the estimators' building blocks.
    # Validation refits of these learners are bounded as the engine documents: a forest grows the
    # refit's trees (effort="refit") and a Gaussian process starts its hyper-parameter search
    # from the family's own optimum (warm_start).
    from barrierscope.curves.regressor import CurveRegressor
    from barrierscope.estimators.two_stage import clip_energy

    X, energy, barrier = invented_family(14, seed=5, p=4)
    warm_e = DescriptorRegressor(learner).fit(X, energy)
    warm_d = DescriptorRegressor(learner).fit(X, barrier)
    for s in loo_splits(14)[:5] + [end_split(energy, "uphill")]:      # (test sets of one call never overlap)
        oof = out_of_fold(X, energy, barrier, [s], learner=learner,
                          routes=("two_stage", "direct", "curve_on_true_energy"))
        Xtr, Xte = X.iloc[s.train], X.iloc[s.test]
        stage = DescriptorRegressor(learner, effort="refit").fit(Xtr, energy[s.train], warm_start=warm_e)
        e_hat, _ = clip_energy(stage.predict(Xte), energy[s.train].min(), energy[s.train].max())
        curve = CurveRegressor(intervals="none").fit(energy[s.train], barrier[s.train])
        direct = DescriptorRegressor(learner, effort="refit").fit(Xtr, barrier[s.train], warm_start=warm_d)
        assert np.allclose(oof.pred["two_stage"][s.test], curve.predict(e_hat), atol=1e-5)
        assert np.allclose(oof.pred["curve_on_true_energy"][s.test], curve.predict(energy[s.test]), atol=1e-5)
        assert np.allclose(oof.pred["direct"][s.test], direct.predict(Xte), atol=1e-5)


def test_engine_equals_plain_refits_when_each_split_chooses_its_relation():
    # relation="auto": each split picks the relation with the lowest leave-one-out RMSE on its own
    # training members, as CurveRegressor(relation="auto") does on the same members.
    from barrierscope.curves.regressor import CurveRegressor

    X, energy, barrier = invented_family(14, seed=6, p=4)
    for s in loo_splits(14)[:6] + [end_split(energy, "downhill")]:
        oof = out_of_fold(X, energy, barrier, [s], relation="auto", routes=("curve_on_true_energy",))
        curve = CurveRegressor(relation="auto", intervals="none").fit(energy[s.train], barrier[s.train])
        assert oof.relations[0] == curve.relation_.name
        assert np.allclose(oof.pred["curve_on_true_energy"][s.test], curve.predict(energy[s.test]), atol=1e-4)


def test_no_leakage_with_shuffled_targets():
    # If anything were fitted on the held-out member, shuffled targets would still be predicted
    # better than by the best constant (mean or median of the others). They must not be (beyond noise).
    X, energy, barrier = invented_family(30, seed=3)
    rng = np.random.default_rng(0)
    worse = 0
    for _ in range(4):
        perm = rng.permutation(30)
        res = out_of_fold(X, energy[perm], barrier[perm], loo_splits(30), routes=("two_stage", "direct"))
        floor = constant_predictor_loo_mae(barrier[perm])
        for r in ("two_stage", "direct"):
            worse += np.mean(np.abs(res.pred[r] - barrier[perm])) >= 0.9 * floor
    assert worse == 8


def test_downhill_split_holds_out_the_most_exergonic_quarter():
    energy = np.array([5.0, -3.0, -20.0, 0.0, -11.0, 8.0, -7.0, 2.0])
    s = end_split(energy, "downhill")
    assert s.test.tolist() == [2, 4] and sorted(s.train.tolist() + s.test.tolist()) == list(range(8))
    assert end_split(energy, "uphill").test.tolist() == [0, 5]


def test_two_stage_beats_direct_at_small_n_and_intervals_cover():
    wins, coverage = [], []
    for seed in range(5):
        X, energy, barrier = invented_family(24, seed)
        res = out_of_fold(X, energy, barrier, loo_splits(24))
        ts = metrics(barrier, res.pred["two_stage"], res.low["two_stage"], res.high["two_stage"])
        di = metrics(barrier, res.pred["direct"], res.low["direct"], res.high["direct"])
        wins.append(ts.mae < di.mae)
        coverage.append(ts.pi90_coverage)
    assert sum(wins) >= 4, wins
    # 5 × 24 = 120 intervals: binomial SE of 90 % coverage is 2.7 %; allow 0.80–0.98.
    assert 0.80 <= np.mean(coverage) <= 0.98, coverage


def test_paired_comparison_against_scipy():
    rng = np.random.default_rng(4)
    a = rng.normal(0.0, 1.0, 30)
    b = np.sign(a) * (np.abs(a) + np.abs(rng.normal(0.5, 0.3, 30)))
    c = paired_comparison(a, b)
    assert c.delta_mae == pytest.approx(np.mean(np.abs(a) - np.abs(b)))
    assert c.ci95[0] < c.delta_mae < c.ci95[1] < 0
    assert c.wilcoxon_p == pytest.approx(stats.wilcoxon(np.abs(a), np.abs(b)).pvalue)
    assert clearly_better(c) and not clearly_better(paired_comparison(b, a))


def test_verdict_calls_ties_and_names_the_members_behind_large_misses():
    rng = np.random.default_rng(8)
    ids = [f"m{i}" for i in range(24)]
    small = rng.normal(0, 1.0, 24)
    errors = {"two_stage": small.copy(), "hybrid": small * 1.01, "direct": rng.normal(0, 1.0, 24),
              "family_mean": rng.normal(0, 6.0, 24)}
    errors["two_stage"][5] = 66.0  # one member blown up
    d = decide(errors, ids)
    # The hybrid and the black box have errors of the same size; the two-stage's one blown member
    # widens its bootstrap interval: nothing clearly beats everything else.
    assert d["winner"] == "tie" and d["tied"][0] == "hybrid" and {"direct", "two_stage"} <= set(d["tied"])
    assert d["misses"]["two_stage"][0][0] == "m5"
    assert "family_mean" not in d["beats_mean"] and "direct" in d["beats_mean"]


def _errors_with_gap(gap: float, n: int = 40, seed: int = 3) -> dict:
    """Invented held-out errors: the hybrid misses every member by ``gap`` kcal/mol more than
    the two-stage route (same sign), the black box and the family mean by far more."""
    rng = np.random.default_rng(seed)
    e = rng.normal(0.0, 1.5, n)
    return {"two_stage": e, "hybrid": e + np.sign(e) * gap, "direct": rng.normal(0.0, 5.0, n),
            "family_mean": rng.normal(0.0, 8.0, n)}


def test_a_difference_below_the_margin_is_equivalent_not_a_win():
    ids = [f"m{i}" for i in range(40)]
    errors = _errors_with_gap(0.05)
    d = decide(errors, ids)
    # Statistically the 0.05 kcal/mol gap is certain (every member, same sign: ``clear``); by
    # size it is nothing a chemist would act on.
    pair = d["pairs"]["two_stage_vs_hybrid"]
    assert pair.clear and not pair.beats and pair.equivalent and pair.margin == pytest.approx(0.5)
    assert d["winner"] == "tie" and d["tied"] == ["two_stage", "hybrid"] and d["equivalent"] == ["hybrid"]
    assert set(d["leader_beats"]) == {"direct", "family_mean"}


def test_a_difference_of_two_kcal_per_mol_wins():
    d = decide(_errors_with_gap(2.0), [f"m{i}" for i in range(40)])
    assert d["winner"] == "two_stage" and d["pairs"]["two_stage_vs_hybrid"].beats
    assert not d["pairs"]["two_stage_vs_hybrid"].equivalent


def test_practical_margin_is_the_floor_or_a_tenth_of_the_better_mae():
    from barrierscope.validation.metrics import practical_margin

    assert practical_margin(1.0, 3.0) == 0.5 and practical_margin(8.0, 6.0) == pytest.approx(0.6)
    assert practical_margin(8.0, 6.0, floor=1.0) == 1.0


def test_no_route_beats_the_mean_when_the_barrier_ignores_everything():
    # Invented: barriers are pure noise; no route may be called a winner over the family mean.
    X, energy, _ = invented_family(30, seed=6)
    barrier = np.random.default_rng(6).normal(15.0, 2.0, 30)
    res = out_of_fold(X, energy, barrier, loo_splits(30))
    d = decide({r: res.pred[r] - barrier for r in res.pred}, [str(i) for i in range(30)])
    assert d["winner"] in ("tie", "family_mean") and d["beats_mean"] == []


def test_curve_only_validation():
    rng = np.random.default_rng(5)
    energy = rng.uniform(-30, 15, 20)
    barrier = ASYM.barrier(energy, np.array([4.0, -6.0, 4.0])) + rng.normal(0, 0.7, 20)
    res = out_of_fold(None, energy, barrier, loo_splits(20))
    assert set(res.pred) == {"curve_on_true_energy", "family_mean"}
    assert metrics(barrier, res.pred["curve_on_true_energy"]).mae < 1.0


def test_wilcoxon_matches_scipy_including_ties_and_zeros():
    # Reference library: scipy.stats.wilcoxon (defaults: zero_method="wilcox", no continuity
    # correction, exact / permutation / normal approximation by sample size and ties).
    from barrierscope.validation.metrics import wilcoxon_p

    rng = np.random.default_rng(0)
    for n in (4, 9, 13, 14, 30, 50, 51, 90):
        for kind in ("plain", "ties", "zeros"):
            a, b = np.abs(rng.normal(1, 0.5, n)), np.abs(rng.normal(1.1, 0.5, n))
            if kind != "plain":
                a, b = np.round(a, 1), np.round(b, 1)
            if kind == "zeros":
                b[:2] = a[:2]
            assert wilcoxon_p(a, b) == pytest.approx(stats.wilcoxon(a, b).pvalue, abs=1e-12), (n, kind)


def test_clusters_are_found_and_every_member_is_held_out_once():
    from barrierscope.validation.splits import cluster_labels, cluster_splits

    rng = np.random.default_rng(2)
    centres = np.array([[0, 0, 0], [6, 0, 0], [0, 6, 0]], dtype=float)
    Z = np.vstack([c + rng.normal(0, 0.5, (8, 3)) for c in centres])
    labels = cluster_labels(Z, 3)
    assert sorted(np.bincount(labels)) == [8, 8, 8]
    splits, why = cluster_splits(Z)
    assert why == "" and len(splits) == 4  # min(5, 24 // 6) clusters
    assert sorted(np.concatenate([s.test for s in splits]).tolist()) == list(range(24))


def _curved_family(n, seed, barrier_follows_energy=True):
    """Invented: energy linear in three of six descriptors over a span that reaches far
    downhill onto the curve's floor (F = 4, M = −8, W = 3 kcal/mol); or, with
    ``barrier_follows_energy=False``, a barrier set by a descriptor the energy ignores."""
    rng = np.random.default_rng(seed)
    X = pd.DataFrame(rng.normal(size=(n, 6)), columns=[f"d{j}" for j in range(6)])
    energy = X.to_numpy()[:, :3] @ np.array([9.0, -6.0, 4.0]) - 10.0 + rng.normal(0, 0.8, n)
    if barrier_follows_energy:
        barrier = ASYM.barrier(energy, np.array([4.0, -8.0, 3.0])) + rng.normal(0, 0.6, n)
    else:
        barrier = 18.0 + 3.0 * X["d4"].to_numpy() + rng.normal(0, 0.5, n)
    return X, energy, barrier


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_downhill_favours_the_physics_route_when_the_black_box_must_extrapolate(seed):
    # Held out: the most exergonic quarter, on the floor. The black box extends the barrier's
    # slope below the floor; the energy stage extends a linear energy, and the curve's floor
    # holds the barrier there (the floor is the asymptotic relation's, METHOD §2).
    from barrierscope.validation.run import ValidationOptions, validate

    X, energy, barrier = _curved_family(32, seed)
    record = validate(X, energy, barrier, [f"m{i}" for i in range(32)],
                      opts=ValidationOptions(n_shuffles=0, regimes=("loo", "downhill")))
    down = record.validation["downhill"]
    assert down.n_test == 8
    assert down.winner in ("two_stage", "hybrid", "structure_curve", "tie")
    physics = {"two_stage", "hybrid", "structure_curve"}
    assert (down.winner in physics) or (set(down.tied) <= physics and "direct" in down.leader_beats)
    assert down.pairs["two_stage_vs_direct"].beats
    assert down.routes["two_stage"].mae < 0.5 * down.routes["direct"].mae


def test_the_verdict_says_so_when_the_barrier_does_not_follow_the_reaction_energy():
    from barrierscope.validation.run import ValidationOptions, validate
    from barrierscope.records import in_unit
    from barrierscope.views.verdict import verdict_text

    X, energy, barrier = _curved_family(30, 0, barrier_follows_energy=False)
    record = validate(X, energy, barrier, [f"m{i}" for i in range(30)],
                      opts=ValidationOptions(n_shuffles=0, regimes=("loo",)))
    assert record.validation["loo"].curve_beats_mean is False
    text = verdict_text(in_unit(record, "kcal/mol"), "kcal/mol")
    assert "does not follow the reaction energy" in text and "weak link" not in text
    # ... and does not say it when the barrier does follow the energy.
    X, energy, barrier = _curved_family(30, 0)
    record = validate(X, energy, barrier, [f"m{i}" for i in range(30)],
                      opts=ValidationOptions(n_shuffles=0, regimes=("loo",)))
    assert record.validation["loo"].curve_beats_mean is True
    assert "does not follow" not in verdict_text(in_unit(record, "kcal/mol"), "kcal/mol")


def test_gp_hyper_parameters_never_see_the_member_they_predict(monkeypatch):
    # Leave-one-out of 40 members searches GP hyper-parameters once per block of splits; every
    # search must leave out every member its block holds out. The targets are the members'
    # own indices, so each search's targets say which members it saw.
    from barrierscope.validation import routes
    from barrierscope.validation.splits import loo_splits

    seen = []
    real_fit = routes.DescriptorRegressor.fit

    def spy(self, X, y, warm_start=None):
        if self.learner == "gp" and not (isinstance(warm_start, dict) and warm_start.get("fixed")):
            seen.append(set(np.asarray(y, dtype=int).tolist()))
        return real_fit(self, X, y, warm_start=warm_start)

    monkeypatch.setattr(routes.DescriptorRegressor, "fit", spy)
    rng = np.random.default_rng(0)
    X = rng.normal(size=(40, 3))
    y = np.arange(40.0)
    splits = loo_splits(40)
    starts = routes._gp_block_hypers(X, [y[s.train] for s in splits], splits, random_state=0, warm=None)
    assert len(seen) == routes.GP_BLOCKS and all(st["fixed"] for st in starts)
    blocks = np.array_split(np.arange(40), routes.GP_BLOCKS)
    for block, members in zip(blocks, seen):
        held = {int(splits[k].test[0]) for k in block}
        assert not held & members and len(members) == 40 - len(held)
