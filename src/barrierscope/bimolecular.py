"""Bimolecular steps A + B → TS: standard states, second-order rate constants, the diffusion limit.

    k₂ = κ (k_B T / h) (1 / c°) exp(−ΔG‡(c°) / RT)            c° = 1 mol/L, in M⁻¹ s⁻¹
    ΔG‡(1 M) = ΔG‡(1 atm) − RT ln(RT / p° in L/mol)            Δn = −1 (two species → one)
    k_diff = 8RT / (3η)                                        Smoluchowski with Stokes–Einstein
    1/k = 1/k_act + 1/k_diff                                   (F. C. Collins, G. E. Kimball,
                                                               J. Colloid Sci. 1949, 4, 425)
    t½ = ln 2 / (k [B])                                        pseudo-first order, B in excess

The standard-state term: RT ln(24.46) = 1.89 kcal/mol at 298.15 K (V. S. Bryantsev, M. S.
Diallo, W. A. Goddard III, J. Phys. Chem. B 2008, 112, 9709, who give 1.89 kcal/mol for the
1 atm → 1 M change of one species). The diffusion-controlled rate constant 8RT/(3η) assumes
equal radii of the partners (their Stokes–Einstein coefficients and encounter radius cancel;
M. v. Smoluchowski, Z. Phys. Chem. 1917, 92, 129; P. Debye, Trans. Electrochem. Soc. 1942, 82,
265); for water at 25 °C it is 7.4 × 10⁹ M⁻¹ s⁻¹. Energies in kcal/mol, temperatures in K,
concentrations in mol/L, viscosities in mPa·s.
"""

from __future__ import annotations

import re

import numpy as np
from scipy import constants as _c

from .kinetics import R_KCAL, eyring_rate

#: Dynamic viscosity at 25 °C, mPa·s (CRC Handbook of Chemistry and Physics, "Viscosity of
#: liquids"; values from memory of the 97th edition, 2016). Used at any temperature: the
#: diffusion limit is an order-of-magnitude ceiling, not a fitted rate.
VISCOSITY_MPA_S = {
    "water": 0.890, "methanol": 0.544, "ethanol": 1.074, "2-propanol": 2.04, "acetonitrile": 0.369,
    "acetone": 0.306, "dmso": 1.987, "dmf": 0.794, "thf": 0.456, "dichloromethane": 0.413, "chloroform": 0.537,
    "toluene": 0.560, "benzene": 0.604, "hexane": 0.300, "diethyl ether": 0.224, "ethyl acetate": 0.423,
    "1,4-dioxane": 1.177, "pyridine": 0.879, "nitromethane": 0.614, "acetic acid": 1.056,
}
_ALIASES = {"h2o": "water", "meoh": "methanol", "etoh": "ethanol", "mecn": "acetonitrile", "ch3cn": "acetonitrile",
            "dcm": "dichloromethane", "ch2cl2": "dichloromethane", "chcl3": "chloroform", "ether": "diethyl ether",
            "et2o": "diethyl ether", "etoac": "ethyl acetate", "dioxane": "1,4-dioxane", "ipa": "2-propanol",
            "isopropanol": "2-propanol", "dimethylsulfoxide": "dmso", "dimethylformamide": "dmf", "acoh": "acetic acid",
            "n-hexane": "hexane", "tetrahydrofuran": "thf"}
STANDARD_STATES = ("1M", "1atm")
#: With no solvent named: no solution-phase bimolecular step is faster than this (M⁻¹ s⁻¹;
#: common practice, the diffusion limit of the least viscous common solvents).
DIFFUSION_CEILING = 1e10


def solvent_viscosity(name: str) -> float:
    """Viscosity (mPa·s, 25 °C) of a solvent by name; the error lists the table."""
    key = str(name).strip().lower()
    key = _ALIASES.get(key, key)
    if key not in VISCOSITY_MPA_S:
        raise ValueError(f"no viscosity for solvent {name!r}; known: {', '.join(sorted(VISCOSITY_MPA_S))}")
    return VISCOSITY_MPA_S[key]


def standard_state_shift(temperature: float = 298.15) -> float:
    """RT ln(RT/p°) with RT/p° in L/mol (kcal/mol): how much higher a bimolecular barrier is
    with a 1 atm standard state than with a 1 M one (p° = 1 atm = 101325 Pa)."""
    t = float(temperature)
    litres_per_mol = _c.R * t / _c.atm * 1000.0
    return R_KCAL * t * float(np.log(litres_per_mol))


def barrier_1M(barrier_kcal, standard_state: str, temperature: float = 298.15):
    """The barrier in the 1 M standard state (kcal/mol) from one given in ``standard_state``."""
    g = np.asarray(barrier_kcal, dtype=float)
    if standard_state == "1M":
        return g
    if standard_state == "1atm":
        return g - standard_state_shift(temperature)
    raise ValueError(f"unknown standard state {standard_state!r}; valid choices: {', '.join(STANDARD_STATES)}")


def second_order_rate(barrier_kcal_1M, temperature: float = 298.15, transmission: float = 1.0):
    """Activation-controlled k (M⁻¹ s⁻¹) from a 1 M standard-state barrier (kcal/mol)."""
    return np.asarray(eyring_rate(barrier_kcal_1M, temperature, transmission), dtype=float) / 1.0  # ÷ c° = 1 M


def diffusion_rate(viscosity_mpa_s: float, temperature: float = 298.15) -> float:
    """The diffusion-controlled rate constant 8RT/(3η), M⁻¹ s⁻¹."""
    eta = float(viscosity_mpa_s) * 1e-3                      # Pa·s
    return 8.0 * _c.R * float(temperature) / (3.0 * eta) * 1000.0    # m³ → L


def observed_rate(k_act, k_diff: float | None):
    """1/k = 1/k_act + 1/k_diff (k_diff None: no diffusion limit), M⁻¹ s⁻¹."""
    k_act = np.asarray(k_act, dtype=float)
    if k_diff is None:
        return k_act
    return 1.0 / (1.0 / k_act + 1.0 / float(k_diff))


def parse_concentration(text) -> float:
    """mol/L from ``0.1M``, ``100mM``, ``50 uM``/``50 µM``, ``2 mol/L`` or a bare number (M)."""
    s = str(text).strip().replace(" ", "").replace("µ", "u").replace("μ", "u")
    m = re.fullmatch(r"([0-9.eE+-]+)(M|mM|uM|nM|mol/L|mol/l|mmol/L|mmol/l)?", s)
    if not m:
        raise ValueError(f"concentration {text!r} is not a number with a unit (0.1M, 100mM, 50uM)")
    value = float(m.group(1))
    factor = {None: 1.0, "M": 1.0, "mol/L": 1.0, "mol/l": 1.0, "mM": 1e-3, "mmol/L": 1e-3, "mmol/l": 1e-3,
              "uM": 1e-6, "nM": 1e-9}[m.group(2)]
    c = value * factor
    if not (np.isfinite(c) and c > 0):
        raise ValueError(f"concentration {text!r} must be positive")
    return c
