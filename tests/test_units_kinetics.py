"""Unit factors and Eyring kinetics against outside references."""

import numpy as np
import pytest

from barrierscope import kinetics, units


def test_thermochemical_calorie_is_exact():
    # 1 cal = 4.184 J exactly (thermochemical calorie; NIST SP 811, appendix B.8).
    assert units.factor_to_kcal("kJ/mol") == pytest.approx(1 / 4.184, rel=1e-15)
    assert units.J_PER_KCAL == 4184.0


def test_hartree_and_ev_against_codata():
    # From memory (CODATA 2018): 1 Eh = 627.509474 kcal/mol, 1 eV = 23.060548 kcal/mol.
    assert units.factor_to_kcal("hartree") == pytest.approx(627.509474, rel=2e-9)
    assert units.factor_to_kcal("eV") == pytest.approx(23.060548, rel=2e-8)


@pytest.mark.parametrize("unit", ["kcal/mol", "kJ/mol", "eV", "hartree"])
def test_round_trip(unit):
    x = np.array([-40.0, 0.0, 1e-3, 25.0])
    assert np.allclose(units.from_kcal(units.to_kcal(x, unit), unit), x, rtol=1e-15, atol=0)


def test_unknown_unit_lists_choices():
    with pytest.raises(units.UnitError, match="valid choices: kcal/mol, kJ/mol, eV, hartree"):
        units.normalize_unit("cal/g")


def test_unit_mixup_hint_for_kj_read_as_kcal():
    # Barriers of 60-120 given in kJ/mol but declared kcal/mol look implausible.
    hint = units.unit_mixup_hint(np.array([90.0, 100.0, 120.0, 95.0]), "kcal/mol")
    assert hint is not None and "kJ/mol" in hint
    assert units.unit_mixup_hint(np.array([15.0, 20.0, 25.0]), "kcal/mol") is None
    # hartree values declared as kcal/mol are tiny.
    assert "hartree" in units.unit_mixup_hint(np.array([0.03, 0.035, 0.04]), "kcal/mol")


def test_kt_over_h_at_room_temperature():
    # k_B T / h at 298.15 K = 6.21e12 s^-1 (common practice; textbook value).
    assert kinetics.eyring_rate(0.0, 298.15) == pytest.approx(6.2124e12, rel=1e-4)


def test_eyring_rules_of_thumb():
    # Common practice (no single source): at 25 °C about 23 kcal/mol gives a half-life of a
    # couple of hours, about 20 kcal/mol about a minute.
    t23 = kinetics.half_life(23.0, 298.15)
    t20 = kinetics.half_life(20.0, 298.15)
    assert 1.0 * 3600 < t23 < 4.0 * 3600
    assert 20.0 < t20 < 120.0
    # Each 1.364 kcal/mol at 298 K is a factor of ten in rate (RT ln 10, common practice). Worked by
    # hand: R = 8.314462618 J/(mol K) / 4184 J/kcal = 1.9872043e-3 kcal/(mol K); × 298.15 K × ln 10
    # (2.3025851) = 1.364247 kcal/mol.
    ratio = kinetics.eyring_rate(20.0) / kinetics.eyring_rate(21.364247)
    assert ratio == pytest.approx(10.0, rel=1e-6)


def test_transmission_and_inverse():
    k1 = kinetics.eyring_rate(18.0, 310.0, transmission=1.0)
    k05 = kinetics.eyring_rate(18.0, 310.0, transmission=0.5)
    assert k05 == pytest.approx(0.5 * k1)
    g = kinetics.barrier_for_half_life(kinetics.half_life(21.3, 350.0), 350.0)
    assert g == pytest.approx(21.3, abs=1e-10)


def test_bad_temperature():
    with pytest.raises(ValueError, match="temperature"):
        kinetics.eyring_rate(20.0, -5.0)


def test_format_duration():
    assert kinetics.format_duration(7200.0) == "2 h"
    assert kinetics.format_duration(45.0) == "45 s"
    assert "years" in kinetics.format_duration(1e9)
