"""What the curve layer returns: typed records, every field with its unit class (kcal/mol).

- :class:`CurveRecord` — one fitted relation (the fit record's ``curve``, the model file's
  curve), with :class:`Identifiability` and its :class:`Tangent`;
- :class:`RelationEntry`, :class:`CurveComparison` — every relation on the same pairs (`curve`);
- :class:`FamilyEntry`, :class:`SharingTest` — several families fitted jointly (the whole
  joint record is :class:`barrierscope.jobs.records.JointRecord`).

Relation parameters and derived quantities are dicts keyed by name; their units come from
the relation registry (:func:`~barrierscope.relations.param_unit`, ``derived_unit``).
"""

from __future__ import annotations

from dataclasses import dataclass

from .. import records as q
from ..records import Record
from ..relations import derived_unit, param_unit


def params_field(default=None, **kw):
    return q.keyed(param_unit, default, **kw)


def derived_field(default=None, **kw):
    return q.keyed(derived_unit, default, **kw)


@dataclass(frozen=True)
class Tangent(Record):
    """What a narrow span does determine: the tangent at the centre of the data."""

    center: float = q.energy()
    barrier_at_center: float = q.energy()
    alpha: float = q.dimensionless()
    alpha_ci95: list = q.dimensionless(factory=list)


@dataclass(frozen=True)
class Identifiability(Record):
    """Does the span pin the asymptotic curve's curvature, or only its tangent?"""

    identifiable: bool = q.flag()
    span: float = q.energy()
    width: float = q.energy()
    span_over_width: float = q.dimensionless()
    unpinned: list = q.texts()
    curvature_p: float = q.probability()
    tangent: Tangent | None = q.nested()


@dataclass(frozen=True)
class CurveRecord(Record):
    """One relation fitted to (reaction energy, barrier) pairs."""

    relation: str = q.text()
    requested_relation: str = q.text()
    loss: str = q.text("squared")
    params: dict = params_field(factory=dict)
    theta: list = q.quantity(q.INTERNAL, factory=list)         # the parameter vector (mixed units)
    cov: list = q.quantity(q.INTERNAL, factory=list)           # its covariance (mixed units)
    sigma: float = q.energy()
    dof: int = q.count()
    n_train: int = q.count()
    energy_range: list = q.energy(factory=list)
    correlation: list = q.dimensionless(factory=list)
    ci95: dict = params_field(factory=dict)
    ci95_open: dict = q.quantity(q.FLAG, factory=dict)
    derived: dict = derived_field(factory=dict)
    intervals: str = q.text("none")
    identifiability: Identifiability | None = q.nested(None, absent=True)
    reverse: dict | None = params_field(None, absent=True)


@dataclass(frozen=True)
class RelationEntry(Record):
    """One relation in the comparison of every relation on the same pairs."""

    label: str = q.text()
    skipped: str | None = q.text(None, absent=True)
    params: dict | None = params_field(None, absent=True)
    derived: dict | None = derived_field(None, absent=True)
    loo_mae: float | None = q.energy(None, absent=True)
    loo_rmse: float | None = q.energy(None, absent=True)
    rmse: float | None = q.energy(None, absent=True)
    mae: float | None = q.energy(None, absent=True)
    aicc: float | None = q.quantity(q.LOGLIK, None, absent=True)
    bic: float | None = q.quantity(q.LOGLIK, None, absent=True)
    n_outside_validity: int = q.count()
    at_bound: list = q.texts()
    # the asymptotic curve's intervals and verdict
    interval_method: str | None = q.text(None, absent=True)
    ci95: dict | None = params_field(None, absent=True)
    ci95_open: dict | None = q.quantity(q.FLAG, None, absent=True)
    correlation: list | None = q.dimensionless(None, absent=True)
    reverse: dict | None = params_field(None, absent=True)
    identifiable: bool | None = q.flag(None, absent=True)
    identifiability: Identifiability | None = q.nested(None, absent=True)
    alpha_members: list | None = q.dimensionless(None, absent=True)


@dataclass(frozen=True)
class AsymptoticSummary(Record):
    """The asymptotic curve's verdict at the top of `curve --json` (``asymptotic``)."""

    params: dict | None = params_field()
    ci95: dict | None = params_field()
    identifiable: bool | None = q.flag()
    derived: dict | None = derived_field()
    reverse: dict | None = params_field()


@dataclass(frozen=True)
class SkippedRow(Record):
    """A row left out of a fit (--skip-bad-rows), and why."""

    row: int = q.count()
    id: str = q.text()
    problem: str = q.text()


@dataclass(frozen=True)
class CurveComparison(Record):
    """Every relation fitted to one family's pairs and compared (`curve`)."""

    n: int = q.count()
    energy_kind: str = q.text()
    energy_range: list = q.energy(factory=list)
    relations: dict[str, RelationEntry] = q.nested(factory=dict)
    best: str | None = q.text(None)
    best_by: str = q.text()
    loss: str = q.text("squared")
    asymptotic: AsymptoticSummary | None = q.nested(None, absent=True)
    energy_column: str = q.text()
    barrier_column: str = q.text()
    units: str = q.text("kcal/mol")
    warnings: list = q.texts()
    skipped: list[SkippedRow] = q.nested(factory=list)


@dataclass(frozen=True)
class SeparateFit(Record):
    """A family fitted alone: its parameters and their profile intervals."""

    params: dict = params_field(factory=dict)
    ci95: dict = params_field(factory=dict)
    ci95_open: dict = q.quantity(q.FLAG, factory=dict)
    at_bound: list = q.texts()


@dataclass(frozen=True)
class FamilyEntry(Record):
    """One family of a joint fit."""

    n: int = q.count()
    params: dict = params_field(factory=dict)
    ci95: dict = params_field(factory=dict)
    ci95_open: dict = q.quantity(q.FLAG, factory=dict)
    derived: dict = derived_field(factory=dict)
    derived_ci95: dict = derived_field(factory=dict)
    centre: float = q.energy()
    energy_range: list = q.energy(factory=list)
    separate: SeparateFit | None = q.nested(None, absent=True)


@dataclass(frozen=True)
class SharingTest(Record):
    """Shared against separate parameters: likelihood ratio, its χ² p, and AICc of both."""

    p: float | None = q.probability()
    lr: float | None = q.quantity(q.LOGLIK, None)
    df: int = q.count()
    aicc_shared: float | None = q.quantity(q.LOGLIK, None)
    aicc_separate: float | None = q.quantity(q.LOGLIK, None)
    approximate: bool = q.flag(False)
