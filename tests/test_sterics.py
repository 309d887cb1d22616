"""Sterimol parameters against Verloop's values (typed from memory of his table, as reprinted
in A. V. Brethomé, S. P. Fletcher, R. S. Paton, ACS Catal. 2019, 9, 2313; CPK radii there,
CRC radii here, so agreement is to a few tenths of an ångström, and in order)."""

import pytest

pytest.importorskip("morfeus", reason="the steric3d tier needs morfeus-ml (extra 'steric')")

from barrierscope.descriptors.sterics import (  # noqa: E402
    molecule_shape_descriptors,
    sterimol_descriptors,
)

VERLOOP = {  # L, B1, B5 in Å (from memory)
    "*[H]": (2.06, 1.00, 1.00), "*C": (2.87, 1.52, 2.04), "*Cl": (3.52, 1.80, 1.80),
    "*C(F)(F)F": (3.30, 1.98, 2.61), "*C(C)(C)C": (4.11, 2.59, 2.97), "*c1ccccc1": (6.28, 1.70, 3.11),
}


@pytest.fixture(scope="module")
def computed():
    return {k: sterimol_descriptors(k) for k in VERLOOP}


@pytest.mark.parametrize("key", sorted(VERLOOP))
def test_close_to_verloop(computed, key):
    L, B1, B5 = VERLOOP[key]
    d = computed[key]
    assert d["sterimol_l"] == pytest.approx(L, abs=0.4)
    assert d["sterimol_b1"] == pytest.approx(B1, abs=0.35)
    assert d["sterimol_b5"] == pytest.approx(B5, abs=0.35)


def test_orders_match_verloop(computed):
    from scipy.stats import spearmanr

    ours = sorted(VERLOOP, key=lambda g: computed[g]["sterimol_l"])
    assert ours == sorted(VERLOOP, key=lambda g: VERLOOP[g][0])
    # B5 of phenyl and tert-butyl differ by 0.14 Å in Verloop's table and tie here (radii
    # differ), so the B5 order is checked by rank correlation rather than exactly.
    groups = sorted(VERLOOP)
    rho = spearmanr([computed[g]["sterimol_b5"] for g in groups], [VERLOOP[g][2] for g in groups]).statistic
    assert rho >= 0.9


def test_buried_volume_grows_with_bulk(computed):
    assert computed["*[H]"]["buried_volume"] < computed["*C"]["buried_volume"] < computed["*C(C)(C)C"]["buried_volume"]


def test_molecule_shape():
    small, big = molecule_shape_descriptors("C"), molecule_shape_descriptors("CCCCCCCC")
    assert 0 < small["sasa"] < big["sasa"] and 0 < small["volume"] < big["volume"]
