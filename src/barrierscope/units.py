"""Energy units and energy kinds.

Inside barrierscope every energy is in kcal/mol (the thermochemical calorie,
1 cal = 4.184 J exactly). Other units are converted with CODATA constants taken
from :mod:`scipy.constants`, so the factors move with the library's CODATA
release rather than with numbers typed here.
"""

from __future__ import annotations

from enum import Enum

import numpy as np
from scipy import constants as _c

#: Joules per thermochemical kilocalorie (exact by definition).
J_PER_KCAL = 1000.0 * _c.calorie  # scipy's `calorie` is the thermochemical one, 4.184 J

#: Multiply an energy in the unit by this factor to get kcal/mol.
_TO_KCAL_PER_MOL: dict[str, float] = {
    "kcal/mol": 1.0,
    "kJ/mol": 1000.0 / J_PER_KCAL,
    # One electronvolt per particle, as a molar energy.
    "eV": _c.electron_volt * _c.Avogadro / J_PER_KCAL,
    # One hartree per particle, as a molar energy.
    "hartree": _c.physical_constants["Hartree energy"][0] * _c.Avogadro / J_PER_KCAL,
}

_ALIASES = {
    "kcal/mol": "kcal/mol", "kcal": "kcal/mol", "kcalmol": "kcal/mol", "kcal mol-1": "kcal/mol",
    "kj/mol": "kJ/mol", "kj": "kJ/mol", "kjmol": "kJ/mol", "kj mol-1": "kJ/mol",
    "ev": "eV", "electronvolt": "eV",
    "hartree": "hartree", "eh": "hartree", "ha": "hartree", "au": "hartree", "a.u.": "hartree",
}

#: The spellings shown to users, in the order offered.
UNITS = ("kcal/mol", "kJ/mol", "eV", "hartree")

#: A rough "typical magnitude" of barriers in each unit, used only to warn about mix-ups.
#: Common practice: thermal barriers of organic reactions are a few to a few tens of kcal/mol.
_PLAUSIBLE_BARRIER_KCAL = (0.0, 80.0)


class UnitError(ValueError):
    """An energy unit that barrierscope does not know."""


def normalize_unit(unit: str) -> str:
    """Return the canonical spelling of ``unit`` (one of :data:`UNITS`).

    Raises :class:`UnitError` listing the valid choices when ``unit`` is unknown.
    """
    key = str(unit).strip().lower().replace("_", "/")
    if key in _ALIASES:
        return _ALIASES[key]
    raise UnitError(f"unknown energy unit {unit!r}; valid choices: {', '.join(UNITS)}")


def factor_to_kcal(unit: str) -> float:
    """Factor that converts an energy in ``unit`` to kcal/mol (dimensionless multiplier)."""
    return _TO_KCAL_PER_MOL[normalize_unit(unit)]


def to_kcal(values, unit: str):
    """Convert energies from ``unit`` to kcal/mol. Arrays and scalars both work."""
    factor = factor_to_kcal(unit)
    return np.asarray(values, dtype=float) * factor if np.ndim(values) else float(values) * factor


def from_kcal(values, unit: str):
    """Convert energies from kcal/mol to ``unit``."""
    factor = factor_to_kcal(unit)
    return np.asarray(values, dtype=float) / factor if np.ndim(values) else float(values) / factor


class EnergyKind(str, Enum):
    """What the energies are. barrierscope never mixes kinds within one model."""

    FREE_ENERGY = "free-energy"   # Gibbs free energies: barriers give rates (Eyring)
    ENTHALPY = "enthalpy"         # enthalpies: no rate without an entropy term
    ELECTRONIC = "electronic"     # electronic energies (with or without ZPE): no rate

    @property
    def gives_rates(self) -> bool:
        return self is EnergyKind.FREE_ENERGY


ENERGY_KINDS = tuple(k.value for k in EnergyKind)


def parse_energy_kind(kind: str) -> EnergyKind:
    """Parse an energy kind, listing the valid choices when it is unknown."""
    text = str(kind).strip().lower().replace("_", "-")
    aliases = {"free": "free-energy", "gibbs": "free-energy", "g": "free-energy",
               "h": "enthalpy", "e": "electronic", "energy": "electronic"}
    text = aliases.get(text, text)
    try:
        return EnergyKind(text)
    except ValueError:
        raise ValueError(f"unknown energy kind {kind!r}; valid choices: {', '.join(ENERGY_KINDS)}") from None


#: Reaction energies of one substituent family rarely spread over more than this (kcal/mol,
#: between the 5th and 95th percentile; from experience, common practice): substituents tune
#: a reaction, they do not turn it into another. Measured on the open cycloaddition set: 28–71
#: within its 26 dipolarophile families, 89 at most within a whole dipole class.
_FAMILY_SPREAD_KCAL = 120.0
#: A smaller spread still counts together with high barriers.
_FAMILY_SPREAD_WITH_HIGH_BARRIERS_KCAL = 80.0
#: Barriers whose median exceeds this (kcal/mol) are high for a family someone computes.
_HIGH_BARRIER_KCAL = 40.0


def unit_mixup_hint(barriers_kcal: np.ndarray, unit: str, energies_kcal=None) -> str | None:
    """A warning when the numbers look implausible for the stated unit, else ``None``.

    The tests are facts of the trade (common practice), not rules: thermal barriers in
    solution mostly lie between about 0 and 60 kcal/mol, and the reaction energies of one
    substituent family rarely spread over more than :data:`_FAMILY_SPREAD_KCAL`. A median
    barrier far outside the first, or a spread of reaction energies beyond the second (read
    together: kJ/mol read as kcal/mol leaves plausible-looking barriers but a family spread
    over four times its usual range), usually means the numbers were given in another unit.
    """
    values = np.asarray(barriers_kcal, dtype=float)
    values = values[np.isfinite(values)]
    if values.size == 0:
        return None
    med = float(np.median(np.abs(values)))
    lo, hi = _PLAUSIBLE_BARRIER_KCAL
    e = np.asarray([] if energies_kcal is None else energies_kcal, dtype=float)
    e = e[np.isfinite(e)]
    spread = float(np.percentile(e, 95) - np.percentile(e, 5)) if e.size >= 4 else 0.0
    wide = spread > _FAMILY_SPREAD_KCAL or (spread > _FAMILY_SPREAD_WITH_HIGH_BARRIERS_KCAL and med > _HIGH_BARRIER_KCAL)
    if med <= hi and wide and normalize_unit(unit) == "kcal/mol":
        also = f" and the median barrier {med:.3g}" if med > _HIGH_BARRIER_KCAL else ""
        return (f"the reaction energies spread over {spread:.3g} kcal/mol within one family (5th to 95th percentile)"
                f"{also} after reading the data as {unit}; a family of substituent variants rarely spreads over more "
                f"than {_FAMILY_SPREAD_WITH_HIGH_BARRIERS_KCAL:g}. Read as kJ/mol the spread would be {spread / 4.184:.3g} and the median "
                f"barrier {med / 4.184:.3g} kcal/mol. Were the energies in kJ/mol? Check --units.")
    if med > hi:
        guesses = [u for u in UNITS if u != normalize_unit(unit)
                   and lo < med * factor_to_kcal(u) / factor_to_kcal(unit) <= hi]
        # A kJ/mol value read as kcal/mol is 4.184 times too large.
        return (f"the median |barrier| is {med:.3g} kcal/mol after reading the data as {unit}; "
                f"that is implausible for a thermal barrier. Were the energies in "
                f"{' or '.join(guesses) if guesses else 'another unit'}? Check --units.")
    if 0 < med < 0.2:
        return (f"the median |barrier| is {med:.3g} kcal/mol after reading the data as {unit}; "
                f"values this small usually mean hartree or eV read as kcal/mol. Check --units.")
    return None


#: A bare temperature below this is suspicious as kelvin (it is more likely Celsius).
_BARE_KELVIN_MIN = 150.0


def parse_temperature(text) -> tuple[float, str | None]:
    """(kelvin, warning or None) from ``298.15K``, ``298.15 K``, ``25C``, ``25°C`` or a bare number.

    A bare number is kelvin; below 150 it is still read as kelvin but with a warning naming
    Celsius (0 °C = 273.15 K exactly, by definition of the Celsius scale, CODATA / SI brochure).
    """
    s = str(text).strip().replace(" ", "").replace("°", "")
    scale = None
    if s[-1:].upper() in ("K", "C"):
        scale, s = s[-1].upper(), s[:-1]
    try:
        value = float(s)
    except ValueError:
        raise ValueError(f"temperature {text!r} is not a number with an optional unit (298.15K, 25C)") from None
    kelvin = value + _c.zero_Celsius if scale == "C" else value
    if not np.isfinite(kelvin) or kelvin <= 0:
        raise ValueError(f"temperature {text!r} is at or below absolute zero")
    warning = None
    if scale is None and value < _BARE_KELVIN_MIN:
        warning = (f"--temperature {text} is read as {value:g} K ({value - _c.zero_Celsius:.4g} °C); "
                   f"for {value:g} °C write {value:g}C")
    return kelvin, warning
