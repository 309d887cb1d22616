"""The cautions every output carries where a number could be mistaken for a safety figure."""

CAUTION = (
    "Caution: these are model estimates, for triage and planning. A barrier, rate or half-life "
    "from barrierscope is not a process-safety figure: low barriers and exothermic steps can mean "
    "runaway reactions. Thermal hazards are measured (calorimetry) and judged under local "
    "regulations and licensed practice."
)

RATE_NEEDS_FREE_ENERGY = (
    "no rate or half-life: the model's energies are {kind}, and only a Gibbs free-energy barrier "
    "gives a rate (Eyring). Refit with free energies (--kind free-energy) to get rates."
)

_KIND_WORDS = {"enthalpy": "enthalpies", "electronic": "electronic energies"}


def rate_note(energy_kind: str) -> str:
    """Why there are no rates, or "" for free-energy models."""
    if energy_kind == "free-energy":
        return ""
    return RATE_NEEDS_FREE_ENERGY.format(kind=_KIND_WORDS.get(energy_kind, energy_kind))
