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


def get_relation(name: str) -> Relation:
    """The relation called ``name``; the error lists the valid choices."""
    key = str(name).strip().lower().replace("-", "_")
    cls = RELATIONS.get(key) or EXTRA_RELATIONS.get(key)
    if cls is None:
        valid = ", ".join([*RELATIONS, *EXTRA_RELATIONS])
        raise ValueError(f"unknown relation {name!r}; valid choices: {valid}")
    return cls()


__all__ = [
    "Relation", "RELATIONS", "EXTRA_RELATIONS", "DEFAULT_RELATION", "get_relation",
    "LinearRelation", "MarcusRelation", "MarcusNoWorkRelation", "AgmonLevineRelation",
    "RehmWellerRelation", "BlowersMaselRelation", "AsymptoticRelation",
]
