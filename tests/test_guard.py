"""The energy stage's guard: one member whose descriptor *combination* is unlike the training
members' (no single value extreme) must not blow a prediction up. Invented test families
(labelled so): three collinear size descriptors (size, mass, refractivity) whose small
differences carry part of the energy, so that leave-one-out chooses a weak ridge penalty and
a large coefficient along a direction the members barely span — the mechanism of a blow-up."""

import numpy as np
import pandas as pd
import pytest

from barrierscope.estimators import DescriptorRegressor, TwoStageRegressor, ridge
from barrierscope.estimators.two_stage import ENERGY_MARGIN
from barrierscope.relations import get_relation


def collinear_family(seed, n=24):
    rng = np.random.default_rng(seed)
    size, delta = rng.normal(size=n), rng.normal(0, 0.05, n)
    X = pd.DataFrame({"size": size, "mass": size + delta, "refractivity": size + rng.normal(0, 0.05, n),
                      "sigma": rng.normal(size=n), "charge": rng.normal(size=n)})
    energy = -8.0 + 6.0 * X["sigma"].to_numpy() + 2.0 * size + 30.0 * delta + rng.normal(0, 0.5, n)
    barrier = get_relation("asymptotic").barrier(energy, np.array([4.0, -6.0, 4.0]))
    return X, energy, barrier


#: A large molecule with a small mass: each standardised value within about ±1.8 of the members'.
ODD = pd.DataFrame({"size": [1.0], "mass": [-1.0], "refractivity": [1.0], "sigma": [0.2], "charge": [0.0]})


def _beyond(e, lo, hi):
    return max(lo - e, e - hi, 0.0)


@pytest.mark.parametrize("seed", range(6))
def test_an_off_manifold_member_stays_within_the_span_plus_the_stated_margin(seed, monkeypatch):
    X, energy, barrier = collinear_family(seed)
    lo, hi = energy.min(), energy.max()
    z = (ODD - X.mean()) / X.std()
    assert np.abs(z.to_numpy()).max() < 1.8          # no single descriptor is extreme
    parts = TwoStageRegressor().fit(X, barrier, energy=energy).predict_parts(ODD)
    e = parts["energy"][0]
    assert lo - ENERGY_MARGIN * (hi - lo) - 1e-9 <= e <= hi + ENERGY_MARGIN * (hi - lo) + 1e-9
    assert parts["off_manifold"][0]                 # and it is flagged
    guarded = DescriptorRegressor().fit(X, energy).predict(ODD)[0]
    # Without the guard the same ridge blows up (the test's family does what it claims) ...
    monkeypatch.setattr(ridge, "GUARD_MARGIN", 1e9)
    raw = DescriptorRegressor().fit(X, energy).predict(ODD)[0]
    assert _beyond(raw, lo, hi) > 1.0 * (hi - lo)
    # ... and the principal-component clipping alone takes most of the excursion away.
    assert _beyond(guarded, lo, hi) < 0.3 * _beyond(raw, lo, hi)


def test_the_guard_leaves_members_like_the_training_ones_alone():
    X, energy, _ = collinear_family(0)
    reg = DescriptorRegressor().fit(X, energy)
    rng = np.random.default_rng(1)
    size = rng.normal(size=50)
    like = pd.DataFrame({"size": size, "mass": size + rng.normal(0, 0.05, 50),
                         "refractivity": size + rng.normal(0, 0.05, 50), "sigma": rng.normal(size=50),
                         "charge": rng.normal(size=50)})
    detail = reg.predict_detail(like)
    assert np.mean(detail["excess"] > ridge.GUARD_FLAG) <= 0.06
