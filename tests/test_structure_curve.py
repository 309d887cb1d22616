"""The structure-dependent curve: an intrinsic barrier that moves with the reaction centre.

Invented families (labelled as invented) with a known truth: barriers on the asymptotic curve
(relation of METHOD §2, exact identities tested in test_relations.py) whose floor depends on
one centre feature. Checks: the effect is recovered with its interval; where the plain curve
must average two kinds of centre it misses downhill, and this one does not; the model file
round-trips it; a screen predicts through it when it is the model's route.
"""

import numpy as np
import pandas as pd
import pytest

from barrierscope.curves.structure import StructureCurve
from barrierscope.relations import get_relation

REL = get_relation("asymptotic")


def _invented(seed: int, n: int = 40, effect: float = 4.0):
    """A binary centre feature (conjugated or not) raising the floor by ``effect`` kcal/mol,
    three features that do nothing, reaction energies uniform on [−25, 10] kcal/mol."""
    rng = np.random.default_rng(seed)
    conj = rng.integers(0, 2, n).astype(float)
    X = pd.DataFrame({"centre1_conjugated_neighbours": conj,
                      **{f"centre1_noise{j}": rng.normal(size=n) for j in range(3)}})
    x = rng.uniform(-25.0, 10.0, n)
    theta = np.column_stack([8.0 + effect * conj, np.full(n, -5.0), np.full(n, 4.0)])
    y = REL.barrier(x[:, None], theta)[:, 0] + rng.normal(0.0, 0.5, n)
    return X, x, y, conj


@pytest.mark.parametrize("seed", range(6))
def test_the_intrinsic_barrier_effect_is_recovered_with_its_interval(seed):
    X, x, y, conj = _invented(seed)
    sc = StructureCurve().fit(X, x, y)
    effect = next(e for e in sc.effects() if e["parameter"] == "floor"
                  and e["descriptor"] == "centre1_conjugated_neighbours")
    truth = 4.0 * conj.std()                      # per standard deviation of the feature
    assert effect["low"] < truth < effect["high"]
    for e in sc.effects():                        # the noise features move nothing clearly
        if "noise" in e["descriptor"] and e["parameter"] == "floor":
            assert abs(e["effect"]) < 1.0
    # Leffler α is the relation's: in (0, 1), and the same member at a higher energy is later.
    a_lo, a_hi = sc.slope(X, x - 5.0), sc.slope(X, x + 5.0)
    assert np.all((a_lo > 0) & (a_hi < 1) & (a_hi > a_lo))


def test_the_downhill_floor_follows_the_centre_where_one_curve_cannot():
    # Held out: the most exergonic quarter, on the floors. One curve has one floor between the
    # two kinds of centre and misses both by about half the effect; the structure curve knows
    # which floor each member sits on.
    from barrierscope.validation.run import ValidationOptions, validate

    X, x, y, _ = _invented(3, n=48)
    rec = validate(X, x, y, [str(i) for i in range(48)],
                   opts=ValidationOptions(learner="ridge", n_shuffles=0, regimes=("loo", "downhill")))
    down = rec.validation["downhill"]
    plain, moving = down.routes["curve_on_true_energy"].mae, down.routes["structure_curve_on_true_energy"].mae
    assert plain > 1.2 and moving < 0.5 * plain
    assert rec.validation["loo"].pairs["structure_curve_on_true_energy_vs_curve_on_true_energy"].beats


def test_no_structure_effect_leaves_the_plain_curve():
    X, x, y, _ = _invented(4, effect=0.0)
    from barrierscope.curves.fit import fit_relation

    sc = StructureCurve().fit(X, x, y)
    plain = fit_relation(REL, x, y)
    assert np.max(np.abs(sc.predict(X, x) - plain.predict(x))) < 0.6


def test_round_trip_predicts_to_the_last_digit():
    X, x, y, _ = _invented(5)
    sc = StructureCurve().fit(X, x, y)
    import json

    again = StructureCurve.from_dict(json.loads(json.dumps(sc.as_dict())))
    assert np.array_equal(again.predict(X, x), sc.predict(X, x))


def test_a_relation_without_a_moving_form_says_so():
    X, x, y, _ = _invented(6)
    with pytest.raises(ValueError, match="unknown relation|no structure-dependent form"):
        StructureCurve("cubic").fit(X, x, y)


def test_the_model_predicts_through_it_when_it_is_the_route(tmp_path):
    # Radicals with the reacting atom as the one radical centre (molecule mode, centre tier);
    # the reaction energies are invented and unrelated to the descriptors, so every route
    # through predicted energies is poor and the structure curve's is the least poor.
    import barrierscope as bs

    kinds = {"[CH2]C{R}": 0, "C[CH]C{R}": 0, "[CH2]C=C{R}": 1, "[CH2]OC{R}": 0, "[CH2]C(=O)C{R}": 1}
    tails = ["", "C", "CC", "C(C)C", "CCC", "CCCC", "C(C)(C)C", "CC(C)C"]
    smiles = list(dict.fromkeys(k.replace("{R}", t) for k in kinds for t in tails))
    rng = np.random.default_rng(2)
    n = len(smiles)
    x = rng.uniform(-25.0, 8.0, n)
    conj = np.array([1.0 if ("C=C" in s or "C(=O)" in s) else 0.0 for s in smiles])
    theta = np.column_stack([9.0 + 3.5 * conj, np.full(n, -4.0), np.full(n, 4.0)])
    y = REL.barrier(x[:, None], theta)[:, 0] + rng.normal(0.0, 0.4, n)
    df = pd.DataFrame({"id": [f"m{i}" for i in range(n)], "smi": smiles, "dE": x.round(3), "dG": y.round(3)})
    family = bs.fit(df, energy="dE", barrier="dG", molecule="smi", tiers="centre", learner="ridge", n_shuffles=0,
                    cache_dir=str(tmp_path / "cache"))
    model = family.model
    assert model.structure is not None
    if model.primary_route != "structure_curve":
        pytest.skip(f"the model chose {model.primary_route} on this draw")
    lib = pd.DataFrame({"id": ["a", "b"], "smi": ["[CH2]C=CCC", "[CH2]CCC"], "dE_computed": [-10.0, -10.0]})
    hits = family.screen(lib, energy="dE_computed").set_index("id")
    assert (hits["route"] == "structure_curve_on_given_energy").all()
    # The conjugated centre sits on the higher floor (the invented truth: +3.5 kcal/mol).
    assert hits.loc["a", "barrier_kcal_mol"] - hits.loc["b", "barrier_kcal_mol"] > 2.0


def test_the_stacked_solver_gives_each_set_s_own_fit():
    """Validation fits every split's structure curve in one stacked problem; each must be the
    curve fitted on that split alone (and that one a true minimum: scipy's least_squares from
    the solution, at the same penalty, moves nowhere)."""
    from scipy.optimize import least_squares

    from barrierscope.curves.structure import PENALTIES
    from barrierscope.validation.structure_routes import structure_fits

    X, x, y, _ = _invented(7, n=36)
    rng = np.random.default_rng(0)
    trains = [np.sort(rng.choice(36, 28, replace=False)) for _ in range(4)]
    grids = [PENALTIES, PENALTIES, (3.0,), (0.3,)]
    fits, views = structure_fits(X, x, y, trains, names=["asymptotic"] * 4, thetas=[None] * 4, grids=grids)
    for t, g, fit, Z in zip(trains, grids, fits, views):
        alone = StructureCurve(penalties=g).fit(X.iloc[t], x[t], y[t])
        assert fit.penalty_ == alone.penalty_
        assert np.allclose(fit.predict(None, x, Z=Z), alone.predict(X, x), atol=1e-8)
        # A minimum of the penalised objective: least_squares started there stays there.
        q = Z.shape[1]
        u = np.concatenate([fit.theta0_, np.ravel(fit.coef_)])
        lo, hi = (np.asarray(b) for b in fit.bounds_)

        def resid(v):
            th = np.tile(v[:3], (t.size, 1))
            th[:, :2] += Z[t] @ v[3:].reshape(2, q).T
            return np.concatenate([REL.barrier(x[t][:, None], th)[:, 0] - y[t], np.sqrt(fit.penalty_) * v[3:]])

        ref = least_squares(resid, u, bounds=(np.r_[lo, np.full(2 * q, -np.inf)], np.r_[hi, np.full(2 * q, np.inf)]),
                            xtol=1e-12, ftol=1e-12, gtol=1e-12)
        assert np.sum(ref.fun ** 2) >= np.sum(resid(u) ** 2) - 1e-6
        assert np.allclose(ref.x, u, atol=1e-3)
