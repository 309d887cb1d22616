"""Exact properties of the barrier–reaction-energy relations (METHOD §3)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from barrierscope.relations import RELATIONS, get_relation
from barrierscope.relations.asymptotic import (
    asymptotic_alpha,
    asymptotic_barrier,
    intrinsic_barrier,
    reverse_parameters,
    uphill_excess,
)

ASYM = get_relation("asymptotic")
finite = dict(allow_nan=False, allow_infinity=False)
params = st.tuples(st.floats(-20, 40, **finite), st.floats(-60, 60, **finite), st.floats(0.1, 50, **finite))

EXAMPLE_THETA = {
    "linear": [12.0, 0.4], "marcus": [40.0, 2.0], "marcus_nowork": [40.0], "agmon_levine": [12.0],
    "rehm_weller": [12.0], "blowers_masel": [10.0, 100.0], "asymptotic": [5.0, -8.0, 6.0],
}


@settings(max_examples=300, deadline=None)
@given(params, st.floats(-200, 200, **finite))
def test_microscopic_reversibility(theta, de):
    # Forward minus reverse barrier is the reaction energy; the reverse barrier, as a function
    # of −dE, is the same curve with floor U = F − M and midpoint −M (METHOD §3.5).
    f, m, w = theta
    fwd = asymptotic_barrier(de, f, m, w)
    rf, rm, rw = reverse_parameters(f, m, w)
    rev = asymptotic_barrier(-de, rf, rm, rw)
    assert fwd - rev == pytest.approx(de, abs=1e-9 * (1 + abs(de) + abs(f) + abs(m)))


@settings(max_examples=200, deadline=None)
@given(params)
def test_slope_half_at_midpoint_and_curvature_peak(theta):
    f, m, w = theta
    assert asymptotic_alpha(m, m, w) == 0.5
    grid = np.linspace(m - 5 * w, m + 5 * w, 2001)
    curv = ASYM.curvature(grid, np.array(theta))
    assert abs(grid[np.argmax(curv)] - m) <= 5 * w / 1000 + 1e-12
    assert curv.max() == pytest.approx(0.25 / w, rel=1e-6)


@settings(max_examples=200, deadline=None)
@given(params)
def test_asymptotes(theta):
    f, m, w = theta
    far = 1e7
    assert asymptotic_barrier(-far, f, m, w) == pytest.approx(f, abs=1e-9)
    assert asymptotic_barrier(far, f, m, w) - far == pytest.approx(uphill_excess(f, m), abs=1e-6)


def test_no_overflow_anywhere():
    x = np.array([-1e300, -1e6, -1.0, 0.0, 1.0, 1e6, 1e300])
    for name in [*RELATIONS, "marcus_nowork"]:
        rel = get_relation(name)
        theta = np.array(EXAMPLE_THETA[name])
        with np.errstate(over="raise", invalid="raise", divide="raise", under="ignore"):
            y = rel.barrier(x[1:-1], theta)
            s = rel.slope(x[1:-1], theta)
            j = rel.jacobian(x[1:-1], theta)
        assert np.all(np.isfinite(y)) and np.all(np.isfinite(s)) and np.all(np.isfinite(j)), name
        assert np.all(np.isfinite(rel.barrier(x, theta))) or name == "linear"


def test_agmon_levine_worked_by_hand_and_as_the_special_case():
    # N. Agmon, R. D. Levine, Chem. Phys. Lett. 1977, 52, 197: dG‡ = dG + (G0/ln 2) ln(1 + exp(−dG ln 2/G0)).
    # Worked by hand for G0 = 10 kcal/mol (numbers ours): dG = 0 gives G0 = 10; dG = −10 gives
    # −10 + 10·log2(1 + 2) = 5.849625007211561; dG = +10 gives 10 + 10·log2(1 + 1/2) = 15.84962500721156.
    x = np.array([-10.0, 0.0, 10.0])
    hand = [5.849625007211561, 10.0, 15.84962500721156]
    al = get_relation("agmon_levine")
    assert al.barrier(x, np.array([10.0])) == pytest.approx(hand, rel=1e-14)
    assert al.slope(np.array([0.0]), np.array([10.0]))[0] == 0.5
    # The asymptotic curve with F = 0, M = 0, W = G0/ln 2 is the same function (METHOD §3.5).
    assert asymptotic_barrier(x, 0.0, 0.0, 10.0 / np.log(2)) == pytest.approx(hand, rel=1e-14)


def test_rehm_weller_worked_by_hand():
    # D. Rehm, A. Weller, Isr. J. Chem. 1970, 8, 259: dG‡ = dG/2 + sqrt((dG/2)² + G0²). For G0 = 9
    # (numbers ours, a 9-12-15 right triangle): dG = +24 gives 12 + 15 = 27; dG = −24 gives −12 + 15 = 3;
    # dG = 0 gives G0. Far downhill the barrier tends to G0²/|dG| (the form's own asymptote).
    rw = get_relation("rehm_weller")
    assert rw.barrier(np.array([-24.0, 0.0, 24.0]), np.array([9.0])) == pytest.approx([3.0, 9.0, 27.0], rel=1e-14)
    assert rw.barrier(np.array([-1e8]), np.array([9.0]))[0] == pytest.approx(81.0 / 1e8, rel=1e-6)


def test_marcus_worked_example():
    # Marcus (R. A. Marcus, J. Phys. Chem. 1968, 72, 891) in its expanded form
    #   dG‡ = w + dG‡0 + dG/2 + dG²/(16 dG‡0),  dG‡0 = λ/4.
    # Worked by hand (numbers ours): intrinsic barrier 10 kcal/mol (λ = 40), no work term,
    # dG = −8 kcal/mol: 10 − 4 + 64/160 = 6.4 kcal/mol; dG = +12: 10 + 6 + 144/160 = 16.9.
    marcus = get_relation("marcus")
    y = marcus.barrier(np.array([-8.0, 12.0, 0.0]), np.array([40.0, 0.0]))
    assert y == pytest.approx([6.4, 16.9, 10.0], abs=1e-12)
    # With a work term w = 1.5 the whole curve shifts by w.
    assert marcus.barrier(np.array([-8.0]), np.array([40.0, 1.5]))[0] == pytest.approx(7.9, abs=1e-12)
    # Activationless at dG = −λ, slope 1/2 at dG = 0 (Marcus 1956, J. Chem. Phys. 24, 966).
    assert marcus.barrier(np.array([-40.0]), np.array([40.0, 0.0]))[0] == pytest.approx(0.0, abs=1e-12)
    assert marcus.slope(np.array([0.0]), np.array([40.0, 0.0]))[0] == 0.5


def test_marcus_outside_normal_region_is_flagged_not_inverted():
    marcus = get_relation("marcus")
    theta = np.array([20.0, 1.0])
    x = np.array([-50.0, -20.0, 0.0, 20.0, 50.0])
    y = marcus.barrier(x, theta)
    # No inverted branch: the barrier never rises again downhill of −λ.
    assert y[0] == pytest.approx(1.0) and y[1] == pytest.approx(1.0)
    assert y[-1] == pytest.approx(51.0)
    assert marcus.outside_validity(x, theta).tolist() == [True, True, False, True, True]


@pytest.mark.parametrize("name", [*RELATIONS, "marcus_nowork"])
def test_analytic_jacobian_and_slope(name):
    rel = get_relation(name)
    theta = np.array(EXAMPLE_THETA[name], dtype=float)
    x = np.linspace(-35, 35, 71) + 0.123  # avoid Marcus's joins at exactly ±λ
    jac = rel.jacobian(x, theta)
    h = 1e-6
    num = np.stack([(rel.barrier(x, theta + e) - rel.barrier(x, theta - e)) / (2 * h)
                    for e in np.eye(theta.size) * h], axis=-1)
    assert np.allclose(jac, num, atol=1e-6)
    num_slope = (rel.barrier(x + h, theta) - rel.barrier(x - h, theta)) / (2 * h)
    assert np.allclose(rel.slope(x, theta), num_slope, atol=1e-6)


@pytest.mark.parametrize("name", [*RELATIONS])
def test_batched_evaluation_matches_single(name):
    rel = get_relation(name)
    theta = np.array(EXAMPLE_THETA[name], dtype=float)
    many = np.stack([theta, theta * 1.1, theta * 0.9])
    x = np.linspace(-30, 30, 13)
    batched = rel.barrier(x, many)
    for k in range(3):
        assert np.array_equal(batched[k], rel.barrier(x, many[k]))
    assert rel.jacobian(x, many).shape == (3, x.size, theta.size)


def test_intrinsic_barrier_and_derived():
    f, m, w = 4.0, -10.0, 5.0
    # Worked by hand: at dE = 0, (dE − M)/W = 2; F + W ln(1 + e²) = 4 + 5 ln(8.3890561) = 4 + 5 × 2.1269280
    # = 14.634640 kcal/mol; α(0) = σ(2) = 1/(1 + e⁻²) = 1/1.1353353 = 0.88079708; U = F − M = 14.
    assert intrinsic_barrier(f, m, w) == pytest.approx(14.634640, abs=1e-6)
    assert asymptotic_barrier(0.0, f, m, w) == pytest.approx(14.634640, abs=1e-6)
    d = ASYM.derived(np.array([f, m, w]))
    assert d["uphill_excess"] == 14.0
    assert d["alpha_at_zero"] == pytest.approx(0.88079708, abs=1e-8)
    assert ASYM.reverse(np.array([f, m, w])).tolist() == [14.0, 10.0, 5.0]


def test_unknown_relation_lists_choices():
    with pytest.raises(ValueError, match="valid choices: linear, marcus, agmon_levine, rehm_weller, blowers_masel, "
                                         "asymptotic"):
        get_relation("bep2")


def test_blowers_masel_worked_by_hand():
    # P. Blowers, R. Masel, AIChE J. 2000, 46, 2041, worked by hand (numbers ours) for E0 = 10,
    # w = 100 kcal/mol: V = 2w(w + E0)/(w − E0) = 2200/9; V − 2w = 400/9; V² − 4w² = 1600000/81.
    # dH = −20: 90·(400/9 − 20)²/(1600000/81 + 400) = 990/371;   dH = 0: E0 = 10;
    # dH = +20: 110·(400/9 + 20)²/(1600000/81 + 400) = 8410/371; dH = +36: 3865798/106561.
    bm = get_relation("blowers_masel")
    theta = np.array([10.0, 100.0])
    h = np.array([-20.0, 0.0, 20.0, 36.0])
    assert bm.barrier(h, theta) == pytest.approx([990 / 371, 10.0, 8410 / 371, 3865798 / 106561], rel=1e-12)
    # Slope exactly 1/2 at dH = 0; zero below −4E0; equal to dH above 4E0 (the published branches).
    assert bm.slope(np.array([0.0]), theta)[0] == pytest.approx(0.5, abs=1e-12)
    assert bm.barrier(np.array([-40.5, -100.0]), theta).tolist() == [0.0, 0.0]
    assert bm.barrier(np.array([40.5, 75.0]), theta).tolist() == [40.5, 75.0]
    # The published property that w → ∞ gives Marcus with λ = 4E0 (hand-worked Marcus values below).
    assert bm.barrier(np.array([-8.0, 12.0]), np.array([10.0, 1e8])) == pytest.approx([6.4, 16.9], abs=1e-5)
