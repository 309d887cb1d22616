"""The Hammett plot: which σ each position takes, and ρ from the barrier's slope.

ρ = −b/(RT ln 10) follows from log10 k = log10(κ kB T/h) − ΔG‡/(RT ln 10) (Eyring) and
log10(k/k0) = ρσ (L. P. Hammett, J. Am. Chem. Soc. 1937, 59, 96). RT ln 10 = 1.364 kcal/mol
at 298.15 K (common practice: the "1.36 kcal/mol per tenfold in rate" rule)."""

import numpy as np
import pandas as pd
import pytest

from barrierscope.curves.hammett import hammett_fit, ring_relations, sigma_sum


@pytest.mark.parametrize("core, expected", [
    ("CC(=O)c1ccc([*:1])c([*:2])c1", {"R1": "para", "R2": "meta"}),   # 3,4-disubstituted acetophenones
    ("OC(=O)c1ccc([*:1])cc1", {"R1": "para"}),                       # Hammett's benzoic acids
    ("OC(=O)c1cccc([*:1])c1", {"R1": "meta"}),
    ("OC(=O)c1ccccc1[*:1]", {"R1": "ortho"}),
    ("[*:1]c1ccccc1", {}),                                            # no reaction centre on the ring
    ("CC([*:1])C(=O)O", {}),                                          # no ring
])
def test_positions_relative_to_the_reaction_centre(core, expected):
    assert ring_relations(core) == expected


def test_rho_from_a_slope_worked_by_hand():
    # A barrier falling by 1.364 kcal/mol per unit σ is a tenfold rise in k per unit σ: ρ = +1.00.
    sigma = np.array([-0.27, -0.17, 0.0, 0.23, 0.37, 0.45, 0.78])
    barrier = 20.0 - 1.3642 * sigma
    fit = hammett_fit(sigma, barrier, 298.15)
    assert fit["rho"] == pytest.approx(1.000, abs=2e-4)
    assert fit["barrier_per_sigma"] == pytest.approx(-1.3642) and fit["r2"] == pytest.approx(1.0)
    # At 350 K the same slope is a smaller ρ: RT ln 10 grows with T.
    assert hammett_fit(sigma, barrier, 350.0)["rho"] == pytest.approx(298.15 / 350.0, rel=1e-3)


def test_rho_interval_covers_the_truth_and_needs_spread():
    rng = np.random.default_rng(0)
    sigma = rng.uniform(-0.3, 0.8, 30)
    barrier = 18.0 - 2.0 * 1.3642 * sigma + rng.normal(0, 0.3, 30)      # invented: ρ = 2
    fit = hammett_fit(sigma, barrier)
    assert fit["rho_ci95"][0] < 2.0 < fit["rho_ci95"][1]
    assert hammett_fit(np.zeros(6), np.arange(6.0)) is None             # no spread in σ
    assert hammett_fit(sigma[:3], barrier[:3]) is None                  # too few members


def test_sigma_sum_takes_meta_and_para_constants_and_skips_ortho():
    X = pd.DataFrame({"R1_sigma_p": [0.78, -0.27], "R1_sigma_m": [0.71, 0.12],
                      "R2_sigma_p": [0.23, 0.0], "R2_sigma_m": [0.37, 0.0],
                      "R3_sigma_p": [0.5, 0.5], "R3_sigma_m": [0.4, 0.4]})
    total, used = sigma_sum(X, ["R1", "R2", "R3"], {"R1": "para", "R2": "meta", "R3": "ortho"})
    assert used == {"R1": "σp", "R2": "σm"}
    assert total.tolist() == pytest.approx([0.78 + 0.37, -0.27 + 0.0])
    total, used = sigma_sum(X, ["R1", "R2"], {})                         # relation unknown: σp
    assert used == {"R1": "σp", "R2": "σp"} and total.tolist() == pytest.approx([1.01, -0.27])


def _bent_series(seed: int, n: int = 24):
    """Invented: barriers on the asymptotic curve (floor 12, midpoint 0, width 2 kcal/mol) of a
    reaction energy linear in Σσ (−15 kcal/mol per σ), plus 0.4 kcal/mol noise — strong
    acceptors push the barrier onto the floor, the bend a computed Hammett plot shows."""
    from barrierscope.relations import get_relation

    rng = np.random.default_rng(seed)
    sigma = np.sort(rng.uniform(-0.8, 1.4, n))
    energy = 6.0 - 15.0 * sigma
    barrier = get_relation("asymptotic").barrier(energy, np.array([12.0, 0.0, 2.0]))
    return sigma, barrier + rng.normal(0.0, 0.4, n)


@pytest.mark.parametrize("seed", range(5))
def test_a_bent_series_is_found_bent_and_rho_comes_from_its_straight_part(seed):
    sigma, barrier = _bent_series(seed)
    fit = hammett_fit(sigma, barrier)
    assert fit["bend"] and fit["bend_kind"] == "floor"
    # The floor is reached near Σσ = 0.4 (reaction energy 0); the straight part lies left of it,
    # where the barrier follows the energy with slope 1: 15 kcal/mol per σ, ρ = 15/1.364 = 11.
    assert 0.0 < fit["bend_at"] < 0.9
    assert fit["rho_range"][1] <= fit["bend_at"] + 1e-9
    assert fit["rho"] == pytest.approx(11.0, rel=0.2)
    # One line through every member understates it: the floor drags the slope down.
    assert abs(fit["rho_all"]) < abs(fit["rho"])


@pytest.mark.parametrize("seed", range(10))
def test_a_straight_series_is_not_called_bent(seed):
    rng = np.random.default_rng(100 + seed)
    sigma = rng.uniform(-0.8, 1.0, 24)
    barrier = 22.0 - 3.0 * sigma + rng.normal(0.0, 0.4, 24)            # invented, straight
    fit = hammett_fit(sigma, barrier)
    assert not fit["bend"] and fit["rho_range"] == [sigma.min(), sigma.max()]
    assert fit["aicc_line"] < fit["aicc_bend"] + 2.0


def test_the_plot_never_draws_log_k_above_kT_over_h(tmp_path):
    # A line extended past the data would predict negative barriers at large Σσ (log k above
    # k_BT/h); the figure draws no line below a zero barrier.
    from matplotlib.figure import Figure

    from barrierscope.jobs.records import HammettRecord
    from barrierscope.kinetics import eyring_rate
    from barrierscope.views import figures

    sigma = np.array([-0.3, 0.0, 0.3, 0.6, 0.9, 1.2, 1.3])
    barrier = 8.0 - 7.0 * sigma                                           # crosses zero at Σσ = 1.14
    fit = hammett_fit(sigma, barrier)
    rec = HammettRecord(**fit, sigma_sum=sigma.tolist(), constants={"R1": "σp"}, basis="test")
    drawn = []
    original = Figure.savefig

    def spy(self, *args, **kwargs):
        drawn.extend(self.axes)
        return original(self, *args, **kwargs)

    Figure.savefig = spy
    try:
        figures.hammett_png(rec, np.clip(barrier, 0.5, None), "kcal/mol")
    finally:
        Figure.savefig = original
    ceiling = np.log10(eyring_rate(0.0, 298.15))
    right = drawn[1]
    for line in right.get_lines():
        y = np.asarray(line.get_ydata(), dtype=float)
        assert np.all(y[np.isfinite(y)] <= ceiling + 1e-9), line.get_label()
