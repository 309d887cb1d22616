"""Descriptor tiers by name, and the engine that fills them through the cache.

A tier is a family of descriptors with one cost: ``2d`` (microseconds, RDKit), ``table``
(a lookup), ``xtb`` (about a second per substituent, GFN2-xTB), ``steric3d`` (conformers and
Sterimol). Each tier describes substituents, whole molecules, or both; its code version is
part of every cache key, so changing a tier's code means bumping its version.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import pandas as pd

from .cache import DescriptorCache


@dataclass(frozen=True)
class Tier:
    name: str
    version: str
    substituent_columns: tuple[str, ...] = ()
    molecule_columns: tuple[str, ...] = ()
    substituent_fn: Callable[[str], dict] | None = None
    molecule_fn: Callable[[str], dict] | None = None
    slow: bool = False          # worth spreading over processes or a cluster
    extra: str | None = None    # the pip extra that provides it
    description: str = ""
    #: Run once in the calling process before units are computed; its (picklable) result is
    #: passed to every unit computation as ``context`` (the xtb tier's σ calibration).
    prepare: Callable[[DescriptorCache, str], object] | None = None

    def columns(self, kind: str) -> tuple[str, ...]:
        return self.substituent_columns if kind == "substituent" else self.molecule_columns

    def function(self, kind: str):
        return self.substituent_fn if kind == "substituent" else self.molecule_fn


# Tier functions take (key, context); heavy modules are imported only when a tier runs.
def _topological_substituent(key, context=None):
    from .topological import substituent_descriptors
    return substituent_descriptors(key)


def _topological_molecule(key, context=None):
    from ..structures.molecule import molecule_from_key
    from .topological import molecule_descriptors
    return molecule_descriptors(molecule_from_key(key))


def _table_substituent(key, context=None):
    from .hammett import table_descriptors
    return table_descriptors(key)


def _xtb_prepare(cache, kind):
    if kind != "substituent":
        return None
    from .xtb_sigma import calibration
    return calibration(cache)


def _xtb_substituent(key, context=None):
    from .xtb_sigma import xtb_sigma_descriptors
    return xtb_sigma_descriptors(key, context)


def _xtb_molecule(key, context=None):
    from .xtb_orbitals import xtb_molecule_descriptors
    return xtb_molecule_descriptors(key)


def _steric_substituent(key, context=None):
    from .sterics import sterimol_descriptors
    return sterimol_descriptors(key)


def _steric_molecule(key, context=None):
    from .sterics import molecule_shape_descriptors
    return molecule_shape_descriptors(key)


def _centre_substituent(key, context=None):
    from .centre import substituent_centre
    return substituent_centre(key)


def _build_registry() -> dict[str, Tier]:
    from . import centre, hammett, topological

    tiers = [
        Tier("2d", topological.VERSION, topological.SUBSTITUENT_COLUMNS, topological.MOLECULE_COLUMNS,
             _topological_substituent, _topological_molecule,
             description="RDKit 2D descriptors (microseconds)"),
        Tier("table", hammett.VERSION, hammett.COLUMNS, (), _table_substituent, None,
             description="Hammett σm, σp, F, R from Hansch, Leo, Taft, Chem. Rev. 1991, 91, 165"),
        Tier("xtb", "xtb-1", ("sigma_m_xtb", "sigma_p_xtb"), ("homo_xtb", "lumo_xtb", "gap_xtb", "dipole_xtb"),
             _xtb_substituent, _xtb_molecule, slow=True, extra="xtb",
             description="GFN2-xTB Hammett-like scale (substituents) or orbital energies (molecules)",
             prepare=_xtb_prepare),
        Tier("steric3d", "steric3d-1", ("sterimol_l", "sterimol_b1", "sterimol_b5", "buried_volume"),
             ("sasa", "volume"), _steric_substituent, _steric_molecule, slow=True, extra="steric",
             description="Sterimol L, B1, B5 and buried volume from a low-energy conformer"),
        # Molecules and reactions get their centre row by row (featurize.centre_block): where the
        # centre is depends on the whole reaction or on --centre, not on one unit alone.
        Tier("centre", centre.VERSION, tuple(f"centre_{f}" for f in centre.FEATURES), (), _centre_substituent, None,
             description="the reaction centre: the atoms whose bonding changes and their first shell"),
    ]
    return {t.name: t for t in tiers}


TIERS = _build_registry()
DEFAULT_TIERS = ("2d", "table")


def parse_tiers(text: str | None) -> tuple[str, ...]:
    """``"2d,table"`` → ("2d", "table"); ``"none"`` → (); unknown names list the choices."""
    if text is None:
        return DEFAULT_TIERS
    names = tuple(t.strip().lower() for t in str(text).split(",") if t.strip())
    if names in ((), ("none",)):
        return ()
    unknown = [n for n in names if n not in TIERS]
    if unknown:
        raise ValueError(f"unknown descriptor tier(s) {', '.join(map(repr, unknown))}; valid choices: "
                         f"{', '.join(TIERS)}, none")
    if len(set(names)) != len(names):
        raise ValueError("a descriptor tier is named twice")
    return names


#: Descriptor payloads an engine keeps in memory (the SQLite cache holds every one; this bound
#: keeps a million-row screen's process from growing with its distinct substituents).
MEMO_SIZE = 200_000


class BoundedMemo:
    """A dict that forgets its oldest entries beyond ``size`` (first in, first out)."""

    def __init__(self, size: int):
        self.size, self._data = int(size), {}

    def get(self, key):
        return self._data.get(key)

    def put(self, key, value) -> None:
        self._data[key] = value
        while len(self._data) > self.size:
            del self._data[next(iter(self._data))]

    def __len__(self) -> int:
        return len(self._data)


class DescriptorError(RuntimeError):
    """A tier could not describe one unit (a substituent or a molecule)."""


@dataclass
class UnitTable:
    """Descriptors of distinct units (index: canonical key), plus per-key errors and notes."""

    values: pd.DataFrame
    errors: dict[str, str]
    notes: dict[str, list[str]]


class DescriptorEngine:
    """Fills tiers for sets of canonical keys: memory first, then the SQLite cache, then compute.

    ``executor`` (optional) maps a function over keys for slow tiers — a process pool or a
    Dask client wrapper from :mod:`barrierscope.jobs.executors`; results are identical either way.
    """

    def __init__(self, tiers=DEFAULT_TIERS, cache: DescriptorCache | None = None, executor=None,
                 xtb_settings=None):
        from ..semiempirical.species import XtbSettings

        self.tiers = tuple(tiers)
        self.cache = cache if cache is not None else DescriptorCache(None)
        self.executor = executor
        #: Level and solvent of GFN2-xTB reaction energies (the xtb tier with reactions).
        self.xtb_settings = xtb_settings if xtb_settings is not None else XtbSettings(level="sp", solvent=None)
        self._memo = BoundedMemo(MEMO_SIZE)
        self._contexts: dict[tuple[str, str], object] = {}
        self.computed = 0
        self.hits = 0

    def columns(self, kind: str, exclude=()) -> list[str]:
        return [c for t in self.tiers if t not in exclude for c in TIERS[t].columns(kind)]

    def _through_cache(self, scope: str, version: str, keys: list[str], compute) -> dict[str, dict]:
        """Payloads of ``keys``: from memory, else the SQLite cache, else ``compute(todo)`` (a
        list of payloads in the order of ``todo``), which are then stored in both. A payload
        marked ``transient`` (an error caused by this machine, such as a missing package) is
        kept in memory for the run but never stored: it must not outlive the fix."""
        out: dict[str, dict] = {}
        missing = []
        for k in keys:
            hit = self._memo.get((scope, version, k))
            if hit is not None:
                out[k] = hit
            else:
                missing.append(k)
        stored = self.cache.get_many(scope, version, missing) if missing else {}
        out.update(stored)
        todo = [k for k in missing if k not in stored]
        self.hits += len(keys) - len(todo)
        fresh = dict(zip(todo, compute(todo))) if todo else {}
        self.computed += len(todo)
        if fresh:
            self.cache.put_many(scope, version, {k: v for k, v in fresh.items() if not v.get("transient")})
        out.update(fresh)
        for k in (*stored, *fresh):
            self._memo.put((scope, version, k), out[k])
        return out

    def _map(self, function, args: list, parallel: bool) -> list:
        if parallel and self.executor is not None and len(args) > 1:
            return list(self.executor.map(function, args))
        return [function(a) for a in args]

    def species_energies(self, species) -> tuple[dict[str, float], dict[str, str]]:
        """GFN2-xTB energies (kcal/mol) of distinct species, through the cache and the executor.

        ``species`` are :class:`~barrierscope.structures.reaction.Species`; returns
        (energy by species key, error by species key).
        """
        settings = self.xtb_settings
        unique = {f"{s.smiles}|{s.multiplicity}": s for s in species}
        found = self._through_cache(
            "xtb:species", settings.cache_version(), list(unique),
            lambda todo: self._map(_species_payload, [(unique[k].smiles, unique[k].multiplicity, settings)
                                                      for k in todo], parallel=True))
        energies = {k: v["values"]["energy"] for k, v in found.items() if not v.get("error")}
        errors = {k: v["error"] for k, v in found.items() if v.get("error")}
        return energies, errors

    def _payloads(self, tier: Tier, kind: str, keys: list[str]) -> dict[str, dict]:
        def compute(todo):
            context = self._context(tier, kind)
            if isinstance(context, dict) and context.get("error"):
                return [context for _ in todo]
            return self._map(_compute_payload, [(tier.name, kind, k, context) for k in todo], parallel=tier.slow)

        return self._through_cache(f"{tier.name}:{kind}", tier.version, keys, compute)

    def _context(self, tier: Tier, kind: str):
        if tier.prepare is None:
            return None
        if (tier.name, kind) not in self._contexts:
            try:
                self._contexts[(tier.name, kind)] = tier.prepare(self.cache, kind)
            except ImportError as exc:
                self._contexts[(tier.name, kind)] = {
                    "error": f"needs an optional package ({exc.name or exc}); pip install "
                             f"'barrierscope[{tier.extra}]'", "transient": True}
        return self._contexts[(tier.name, kind)]

    def describe(self, keys, kind: str, exclude=()) -> UnitTable:
        """Descriptors of every distinct key, for ``kind`` "substituent" or "molecule"."""
        keys = list(dict.fromkeys(keys))
        columns = self.columns(kind, exclude)
        data = {k: {} for k in keys}
        errors: dict[str, str] = {}
        notes: dict[str, list[str]] = {}
        for name in self.tiers:
            if name in exclude:
                continue
            tier = TIERS[name]
            cols = tier.columns(kind)
            if not cols:
                continue
            payloads = self._payloads(tier, kind, keys)
            for k in keys:
                p = payloads[k]
                if p.get("error"):
                    errors.setdefault(k, f"{name} tier: {p['error']}")
                    data[k].update({c: math.nan for c in cols})
                    continue
                vals = p["values"]
                data[k].update({c: vals.get(c, math.nan) for c in cols})
                gaps = [c for c in cols if not _finite(vals.get(c))]
                if gaps:
                    notes.setdefault(k, []).append(f"{name}: no value for {', '.join(gaps)}")
        frame = pd.DataFrame.from_dict(data, orient="index", columns=columns, dtype=float)
        return UnitTable(frame, errors, notes)


def _finite(v) -> bool:
    return isinstance(v, (int, float)) and math.isfinite(v)


def _compute_payload(args) -> dict:
    """One unit through one tier: {"values": {...}} or {"error": "..."} (never raises)."""
    name, kind, key, context = args
    fn = TIERS[name].function(kind)
    try:
        values = fn(key, context)
    except ImportError as exc:
        extra = TIERS[name].extra
        return {"error": f"needs an optional package ({exc.name or exc}); pip install 'barrierscope[{extra}]'",
                "transient": True}
    except Exception as exc:  # one bad unit must not stop a library; the row gets the message
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        return {"error": text[:300]}
    return {"values": {k: float(v) for k, v in values.items()}}


def _species_payload(args) -> dict:
    """One species' GFN2-xTB energy: {"values": {"energy": kcal/mol}} or {"error": ...}."""
    smiles, multiplicity, settings = args
    try:
        from ..semiempirical.species import species_energy

        values = species_energy(smiles, settings, uhf=multiplicity - 1)
    except ImportError as exc:
        return {"error": f"needs an optional package ({exc.name or exc}); pip install 'barrierscope[xtb]'",
                "transient": True}
    except Exception as exc:  # a failed species gives its rows a status, never a crash
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        return {"error": text[:300]}
    return {"values": {k: float(v) for k, v in values.items()}}
