"""Rates and half-lives from free-energy barriers (Eyring–Evans–Polanyi).

    k = κ (k_B T / h) exp(-ΔG‡ / RT)          (H. Eyring, J. Chem. Phys. 1935, 3, 107;
                                               M. G. Evans, M. Polanyi, Trans. Faraday Soc. 1935, 31, 875)
    t½ = ln 2 / k                              (first order)

Only a Gibbs free-energy barrier gives a rate. Functions here take energies in
kcal/mol and temperatures in kelvin; constants come from :mod:`scipy.constants`.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy import constants as _c

from .units import J_PER_KCAL

#: Gas constant in kcal/(mol K).
R_KCAL = _c.R / J_PER_KCAL


def _check_temperature(temperature: float) -> float:
    t = float(temperature)
    if not np.isfinite(t) or t <= 0:
        raise ValueError(f"temperature must be a positive number of kelvin, got {temperature!r}")
    return t


def eyring_rate(barrier_kcal, temperature: float = 298.15, transmission: float = 1.0):
    """First-order (or pseudo-first-order) rate constant, s⁻¹.

    Parameters
    ----------
    barrier_kcal : float or array, kcal/mol
        Gibbs free energy of activation ΔG‡ (standard state as given by the user).
    temperature : float, K
    transmission : float
        Transmission coefficient κ (dimensionless, 0 < κ ≤ 1 usually; 1 by default).
    """
    t = _check_temperature(temperature)
    if not (np.isfinite(transmission) and transmission > 0):
        raise ValueError(f"transmission coefficient must be positive, got {transmission!r}")
    g = np.asarray(barrier_kcal, dtype=float)
    prefactor = transmission * _c.Boltzmann * t / _c.Planck  # s⁻¹
    out = prefactor * np.exp(-g / (R_KCAL * t))
    return out if out.ndim else float(out)


def half_life(barrier_kcal, temperature: float = 298.15, transmission: float = 1.0):
    """First-order half-life ln 2 / k, in seconds."""
    k = np.asarray(eyring_rate(barrier_kcal, temperature, transmission), dtype=float)
    with np.errstate(divide="ignore"):
        out = np.log(2.0) / k
    return out if out.ndim else float(out)


def barrier_for_half_life(seconds, temperature: float = 298.15, transmission: float = 1.0):
    """The free-energy barrier (kcal/mol) that gives a first-order half-life of ``seconds``."""
    t = _check_temperature(temperature)
    s = np.asarray(seconds, dtype=float)
    k = np.log(2.0) / s
    prefactor = transmission * _c.Boltzmann * t / _c.Planck
    out = -R_KCAL * t * np.log(k / prefactor)
    return out if out.ndim else float(out)


@lru_cache(maxsize=65536)  # libraries repeat half-lives (few distinct substituent combinations)
def format_duration(seconds: float) -> str:
    """A half-life in the unit a chemist would say it in ("3.2 h", "41 s", "12 years")."""
    s = float(seconds)
    if not np.isfinite(s):
        return "inf" if s > 0 else "nan"
    steps = [(1e-9, "ps", 1e-12), (1e-6, "ns", 1e-9), (1e-3, "µs", 1e-6), (1.0, "ms", 1e-3), (120.0, "s", 1.0),
             (7200.0, "min", 60.0), (172800.0, "h", 3600.0), (2 * 365.25 * 86400, "days", 86400.0)]
    for limit, unit, size in steps:
        if s < limit:
            return f"{s / size:.3g} {unit}"
    return f"{s / (365.25 * 86400):.3g} years"
