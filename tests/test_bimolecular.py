"""Bimolecular steps: standard states, second-order rate constants, the diffusion limit.

Checks against published or handbook values: the 1 atm → 1 M free-energy change of one
species, RT ln 24.46 = 1.89 kcal/mol at 298.15 K (V. S. Bryantsev, M. S. Diallo, W. A.
Goddard III, J. Phys. Chem. B 2008, 112, 9709); k_BT/h = 6.2124 × 10¹² s⁻¹ at 298.15 K
(CODATA constants); the viscosity of water at 25 °C, 0.890 mPa·s (CRC Handbook), giving the
Smoluchowski–Stokes–Einstein limit 8RT/3η = 7.43 × 10⁹ M⁻¹ s⁻¹, inside the 10⁹–10¹⁰ M⁻¹ s⁻¹
every textbook gives for diffusion control in water (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from barrierscope.bimolecular import (barrier_1M, diffusion_rate, observed_rate, parse_concentration,
                                      second_order_rate, solvent_viscosity, standard_state_shift)

RT = 8.314462618 * 298.15 / 4184.0        # kcal/mol
KT_H = 1.380649e-23 * 298.15 / 6.62607015e-34


def test_standard_state_term_is_the_published_1_89_kcal():
    assert standard_state_shift(298.15) == pytest.approx(1.89, abs=0.005)
    # By hand: RT/p° = 0.0820574 L atm/(mol K) × 298.15 K / 1 atm = 24.465 L/mol.
    assert standard_state_shift(298.15) == pytest.approx(RT * math.log(0.0820574 * 298.15), rel=1e-5)
    assert barrier_1M(20.0, "1atm") == pytest.approx(20.0 - 1.8943, abs=1e-3)
    assert barrier_1M(20.0, "1M") == 20.0


def test_second_order_rate_by_hand():
    assert KT_H == pytest.approx(6.2124e12, rel=1e-4)
    assert second_order_rate(15.0) == pytest.approx(KT_H * math.exp(-15.0 / RT), rel=1e-9)
    assert second_order_rate(15.0) == pytest.approx(62.83, rel=1e-3)    # 6.2124e12 × e^(−25.317)


def test_diffusion_limit_of_water_at_25_c():
    k_diff = diffusion_rate(solvent_viscosity("water"))
    assert k_diff == pytest.approx(7.43e9, rel=2e-3) and 1e9 < k_diff < 1e10
    assert solvent_viscosity("MeCN") == solvent_viscosity("acetonitrile")
    # 1/k = 1/k_act + 1/k_diff: a barrier-free step runs at the limit, a slow one is untouched.
    assert observed_rate(second_order_rate(0.0), k_diff) == pytest.approx(k_diff, rel=2e-3)
    assert observed_rate(63.1, k_diff) == pytest.approx(63.1, rel=1e-6)
    with pytest.raises(ValueError, match="known:"):
        solvent_viscosity("unobtainium")


@pytest.mark.parametrize("text, molar", [("0.1M", 0.1), ("100mM", 0.1), ("50 µM", 5e-5), ("2", 2.0),
                                         ("0.5 mol/L", 0.5)])
def test_concentrations(text, molar):
    assert parse_concentration(text) == pytest.approx(molar)


def test_a_bimolecular_screen(tmp_path):
    """Screen with --molecularity 2: k in M⁻¹ s⁻¹ from the 1 M barrier, the half-life ln 2 /
    (k[B]), the diffusion flag; a 1 atm model's rates are exp(1.894/RT) = 24.5 times faster."""
    from families import substituent_family
    from typer.testing import CliRunner

    from barrierscope.cli import app

    runner = CliRunner()
    fam = tmp_path / "fam.csv"
    df = substituent_family(24, seed=8)
    df.to_csv(fam, index=False)
    model = tmp_path / "m.json"
    r = runner.invoke(app, ["fit", str(fam), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                            "-o", str(model), "--shuffles", "0", "--learner", "ridge", "--molecularity", "2",
                            "--cache-dir", str(tmp_path / "c")])
    assert r.exit_code == 0, r.output
    lib = tmp_path / "lib.csv"
    df[["R1", "R2"]].to_csv(lib, index=False)
    got = {}
    for state in ("1M", "1atm"):
        out = tmp_path / f"o_{state}.csv"
        r = runner.invoke(app, ["screen", str(model), str(lib), "-o", str(out), "--concentration", "100mM",
                                "--solvent", "water", "--standard-state", state, "--cache-dir", str(tmp_path / "c")])
        assert r.exit_code == 0, r.output
        assert "bimolecular step" in r.stderr or "bimolecular step" in r.stdout
        got[state] = pd.read_csv(out, keep_default_na=False).sort_values("row").reset_index(drop=True)
    res = got["1M"]
    b = res["barrier_kcal_mol"].astype(float).to_numpy()
    k = res["rate_constant_per_M_per_s"].astype(float).to_numpy()
    k_act = KT_H * np.exp(-b / RT)
    want = 1.0 / (1.0 / k_act + 1.0 / 7.4276e9)
    assert np.allclose(k, want, rtol=1e-2)          # barriers in the CSV are rounded to 0.01 kcal/mol
    hl = res["half_life_s"].astype(float).to_numpy()
    assert np.allclose(hl, math.log(2) / (k * 0.1), rtol=2e-3)
    assert res["diffusion_limited"].astype(str).isin(["True", "False", "true", "false"]).all()
    ratio = got["1atm"]["rate_constant_per_M_per_s"].astype(float) / res["rate_constant_per_M_per_s"].astype(float)
    slow = k < 1e6                                     # far from the diffusion limit
    assert np.allclose(ratio[slow], math.exp(standard_state_shift() / RT), rtol=1e-3)
    assert math.exp(standard_state_shift() / RT) == pytest.approx(24.47, abs=0.02)
