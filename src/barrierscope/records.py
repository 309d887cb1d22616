"""Typed results: frozen dataclasses whose every field declares its unit class.

A job's result (a fit, a validation regime, a curve comparison, a joint fit, a screen, a
set of suggestions) is a :class:`Record`, built once and never changed afterwards. Each
field says what it holds — an energy, a squared energy, a dimensionless number, a count, a
flag, text, a nested record, or parameters whose units come from the relation that owns them
— and :func:`in_unit` converts a record into the user's unit by those declarations alone:
no output key is ever looked up in a list of names. Inside, every energy is kcal/mol.

    @dataclass(frozen=True)
    class Metrics(Record):
        mae: float = energy()
        rmse: float = energy()
        r2: float = dimensionless()

``as_dict()`` gives the record as plain JSON data in kcal/mol (the keys are the field names:
the JSON contract); ``from_dict()`` restores it (model files). Numbers inside a field's
containers (lists, dicts, tuples) share the field's unit class; records inside containers
keep their own declarations.
"""

from __future__ import annotations

import dataclasses
import math
import types
import typing
from collections.abc import Callable

import numpy as np

#: Unit classes. Only the energy classes change with the user's unit; the others are listed
#: so that every field says what it is.
ENERGY = "energy"                  # kcal/mol inside
ENERGY2 = "energy²"                # (kcal/mol)², e.g. differences of squared errors
DIMENSIONLESS = "dimensionless"    # Leffler α, R², ratios, σ, ρ
PROBABILITY = "probability"        # p values, coverages, shares
COUNT = "count"
KELVIN = "K"
SECONDS = "s"
PER_SECOND = "1/s"
DISTANCE = "descriptor distance"   # distances in standardised descriptor space
LOGLIK = "log-likelihood scale"    # AICc, BIC, likelihood-ratio statistics: computed from kcal/mol
                                   # residuals; only their differences mean anything, unit-free
RHO = "reaction constant"          # Hammett ρ: dimensionless, but it grows with the barriers' scale at fixed T
FLAG = "flag"
TEXT = "text"
RECORD = "record"                  # a nested record (or a container of them): its own declarations
KEYED = "keyed"                    # a dict whose keys name quantities of known units (see keyed())
INTERNAL = "internal"              # kept in the model file, never shown (mixed-unit matrices)

#: Powers of the energy factor each class is converted by.
ENERGY_POWER = {ENERGY: 1, ENERGY2: 2}
UNIT_CLASSES = (ENERGY, ENERGY2, DIMENSIONLESS, PROBABILITY, COUNT, KELVIN, SECONDS, PER_SECOND, DISTANCE, LOGLIK,
                RHO, FLAG, TEXT, RECORD, KEYED, INTERNAL)


def quantity(unit: str, default=dataclasses.MISSING, *, factory=dataclasses.MISSING, by_key=None,
             absent: bool = False):
    """A record field of unit class ``unit`` (with ``by_key``: the unit of each key, for KEYED).
    ``absent``: when the value is None the key is left out of the record's data altogether
    (it does not apply to this record, rather than being unknown)."""
    if unit not in UNIT_CLASSES:
        raise ValueError(f"unknown unit class {unit!r}")
    md = {"unit": unit, "by_key": by_key, "absent": absent}
    if factory is not dataclasses.MISSING:
        return dataclasses.field(default_factory=factory, metadata=md)
    return dataclasses.field(default=default, metadata=md)


def energy(default=None, **kw):
    return quantity(ENERGY, default, **kw)


def energy2(default=None, **kw):
    return quantity(ENERGY2, default, **kw)


def dimensionless(default=None, **kw):
    return quantity(DIMENSIONLESS, default, **kw)


def probability(default=None, **kw):
    return quantity(PROBABILITY, default, **kw)


def count(default=0, **kw):
    return quantity(COUNT, default, **kw)


def flag(default=None, **kw):
    return quantity(FLAG, default, **kw)


def text(default="", **kw):
    return quantity(TEXT, default, **kw)


def nested(default=None, **kw):
    return quantity(RECORD, default, **kw)


def internal(default=None, **kw):
    return quantity(INTERNAL, default, **kw)


def keyed(by_key: Callable[[str], str], default=None, **kw):
    """A dict field whose keys name quantities: ``by_key(key)`` gives each one's unit class
    (relation parameters and derived quantities: their relation declares them)."""
    return quantity(KEYED, default, by_key=by_key, **kw)


def texts():
    return quantity(TEXT, factory=list)


class Record:
    """Base of every typed result (a frozen dataclass; see the module docstring)."""

    @classmethod
    def field_units(cls) -> dict[str, str]:
        """Field name → unit class (every field declares one: checked here)."""
        out = {}
        for f in dataclasses.fields(cls):
            unit = f.metadata.get("unit")
            if unit is None:
                raise TypeError(f"{cls.__name__}.{f.name} declares no unit class")
            out[f.name] = unit
        return out

    def as_dict(self) -> dict:
        """Plain JSON data in kcal/mol, keys as the fields are named."""
        return {f.name: plain(v) for f, v in _present(self)}

    @classmethod
    def from_dict(cls, d: dict):
        """The record back from :meth:`as_dict`'s data (missing optional fields take their
        defaults); nested records are rebuilt from the field annotations."""
        hints = typing.get_type_hints(cls)
        kwargs = {}
        for f in dataclasses.fields(cls):
            if f.name in d:
                kwargs[f.name] = _rebuild(hints.get(f.name), d[f.name])
        return cls(**kwargs)


def _present(record: Record):
    """(field, value) of every field that applies (see ``absent`` in :func:`quantity`)."""
    for f in dataclasses.fields(record):
        v = getattr(record, f.name)
        if v is None and f.metadata.get("absent"):
            continue
        yield f, v


def plain(v):
    """Records, numpy values and containers as plain JSON data (tuples become lists)."""
    if isinstance(v, Record):
        return v.as_dict()
    if isinstance(v, dict):
        return {k: plain(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [plain(x) for x in v]
    if isinstance(v, np.ndarray):
        return plain(v.tolist())
    if isinstance(v, np.bool_):
        return bool(v)
    if isinstance(v, np.integer):
        return int(v)
    if isinstance(v, np.floating):
        return float(v)
    return v


def _rebuild(hint, value):
    """``value`` (plain data) as the annotated type: records and containers of records."""
    if value is None or hint is None:
        return value
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        inner = [a for a in typing.get_args(hint) if a is not type(None)]
        return _rebuild(inner[0], value) if len(inner) == 1 else value
    if isinstance(hint, type) and issubclass(hint, Record):
        return hint.from_dict(value)
    if origin is dict:
        _, vt = typing.get_args(hint) or (None, None)
        return {k: _rebuild(vt, x) for k, x in value.items()}
    if origin in (list, tuple):
        args = typing.get_args(hint)
        return [_rebuild(args[0] if args else None, x) for x in value]
    return value


def in_unit(obj, unit: str):
    """``obj`` (a record, or a container of records) as plain data with every energy in
    ``unit``, converted by the fields' declarations; INTERNAL fields are left out."""
    from .units import factor_to_kcal, normalize_unit

    factor = factor_to_kcal(normalize_unit(unit))
    return _convert(obj, None, factor)


def _scale(v, power: int, factor: float):
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return v
    if isinstance(v, (int, float, np.integer, np.floating)):
        x = float(v) if power else v
        return x / factor ** power if power and math.isfinite(x) else (x if power else plain(v))
    if isinstance(v, dict):
        return {k: _scale(x, power, factor) for k, x in v.items()}
    if isinstance(v, (list, tuple, np.ndarray)):
        return [_scale(x, power, factor) for x in (v.tolist() if isinstance(v, np.ndarray) else v)]
    if isinstance(v, Record):
        return _convert(v, None, factor)
    return plain(v)


def _convert(obj, unit: str | None, factor: float, by_key=None):
    if isinstance(obj, Record):
        out = {}
        for f, v in _present(obj):
            u = f.metadata.get("unit")
            if u != INTERNAL:
                out[f.name] = _convert(v, u, factor, f.metadata.get("by_key"))
        return out
    if unit == KEYED:
        return None if obj is None else {k: _scale(v, ENERGY_POWER.get(by_key(k), 0), factor) for k, v in obj.items()}
    if unit == RECORD or unit is None:
        if isinstance(obj, dict):
            return {k: _convert(v, unit, factor) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return [_convert(v, unit, factor) for v in obj]
        return plain(obj)
    return _scale(obj, ENERGY_POWER.get(unit, 0), factor)


def unit_classes(obj):
    """The shape of :func:`in_unit`'s output with each number replaced by its declared unit
    class: what a test or a reader checks a number against."""
    return _classes(obj, None, None)


def _classes(obj, unit, by_key):
    if isinstance(obj, Record):
        return {f.name: _classes(v, f.metadata.get("unit"), f.metadata.get("by_key")) for f, v in _present(obj)
                if f.metadata.get("unit") != INTERNAL}
    if unit == KEYED:
        return None if obj is None else {k: _classes(v, by_key(k), None) for k, v in obj.items()}
    if isinstance(obj, dict):
        return {k: _classes(v, unit, by_key) for k, v in obj.items()}
    if isinstance(obj, (list, tuple, np.ndarray)):
        return [_classes(v, unit, by_key) for v in (obj.tolist() if isinstance(obj, np.ndarray) else obj)]
    if isinstance(obj, (bool, np.bool_, str)) or obj is None:
        return obj
    return unit


def replace(record: Record, **changes) -> Record:
    """A new record with ``changes`` (records are never changed in place)."""
    return dataclasses.replace(record, **changes)
