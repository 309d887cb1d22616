"""Barrier–reaction-energy relations, by name.

Each relation lives in its own module; this registry is how the rest of barrierscope
finds them. To add one, subclass :class:`~barrierscope.relations.base.Relation` in a new
module and add it to :data:`RELATIONS` (see DEVELOPERS.md).
"""

from __future__ import annotations

from .agmon_levine import AgmonLevineRelation
from .asymptotic import AsymptoticRelation
from .base import Relation
from .blowers_masel import BlowersMaselRelation
from .linear import LinearRelation
from .marcus import MarcusNoWorkRelation, MarcusRelation
from .rehm_weller import RehmWellerRelation

#: The relations compared by default, in display order.
RELATIONS: dict[str, type[Relation]] = {
    cls.name: cls
    for cls in (LinearRelation, MarcusRelation, AgmonLevineRelation, RehmWellerRelation, BlowersMaselRelation,
                AsymptoticRelation)
}
#: Relations that can be asked for by name but are not in the default comparison.
EXTRA_RELATIONS: dict[str, type[Relation]] = {MarcusNoWorkRelation.name: MarcusNoWorkRelation}

DEFAULT_RELATION = "asymptotic"


def _unit_table(what: str) -> dict[str, str]:
    """Name → unit class over every relation (a name means the same quantity in each)."""
    table: dict[str, str] = {}
    for cls in [*RELATIONS.values(), *EXTRA_RELATIONS.values()]:
        units = ({n: ("dimensionless" if n in cls.dimensionless else "energy") for n in cls.param_names}
                 if what == "params" else dict(cls.derived_units))
        for name, unit in units.items():
            if table.setdefault(name, unit) != unit:
                raise TypeError(f"{cls.__name__}: {what} {name!r} is {unit} here and {table[name]} elsewhere")
    return table


_PARAM_UNITS = _unit_table("params")
#: Quantities read off a fitted curve (relation.derived, and the joint fit's α at a family's centre).
_DERIVED_UNITS = {**_unit_table("derived"), "alpha_at_centre": "dimensionless"}


def param_unit(name: str) -> str:
    """The unit class of a relation parameter called ``name``."""
    return _PARAM_UNITS[name]


def derived_unit(name: str) -> str:
    """The unit class of a derived quantity called ``name``."""
    return _DERIVED_UNITS[name]


def get_relation(name: str) -> Relation:
    """The relation called ``name``; the error lists the valid choices."""
    key = str(name).strip().lower().replace("-", "_")
    cls = RELATIONS.get(key) or EXTRA_RELATIONS.get(key)
    if cls is None:
        valid = ", ".join([*RELATIONS, *EXTRA_RELATIONS])
        raise ValueError(f"unknown relation {name!r}; valid choices: {valid}")
    return cls()


__all__ = [
    "Relation", "RELATIONS", "EXTRA_RELATIONS", "DEFAULT_RELATION", "get_relation", "param_unit", "derived_unit",
    "LinearRelation", "MarcusRelation", "MarcusNoWorkRelation", "AgmonLevineRelation",
    "RehmWellerRelation", "BlowersMaselRelation", "AsymptoticRelation",
]
