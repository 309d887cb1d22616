"""What the jobs return: typed records, every field with its unit class (kcal/mol inside).

- :class:`FitRecord` — a fitted, validated family (`fit --json`, the model file's record);
- :class:`JointRecord` with :class:`FamilyRegime` — several families fitted jointly;
- :class:`HammettRecord`, :class:`IntervalsRecord` — parts of the fit record;
- :class:`ScreenSummary` with :class:`TopRow` — what a screen found;
- :class:`SuggestRecord` with :class:`Pick` and :class:`PickFacts` — what to compute next.

The field names are the JSON keys; :func:`barrierscope.records.in_unit` converts by the
declarations.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..curves.records import CurveRecord, FamilyEntry, SharingTest, SkippedRow
from .. import records as q
from ..records import Record
from ..validation.records import Metrics, MembersTable, PairComparison, RegimeRecord, YRandomization


@dataclass(frozen=True)
class FamilyRegime(Record):
    """Validation of a joint fit by member (``loo``) or by family (``leave_family_out``)."""

    n_test: int = q.count()
    routes: dict[str, Metrics] = q.nested(factory=dict)
    pairs: dict[str, PairComparison] = q.nested(factory=dict)
    joint_beats: list = q.texts()
    note: str | None = q.text(None, absent=True)
    skipped: str | None = q.text(None, absent=True)


@dataclass(frozen=True)
class JointRecord(Record):
    """Several families fitted jointly (`curve --family`)."""

    relation: str = q.text()
    n: int = q.count()
    shared: list = q.texts()
    sharing_test: SharingTest | None = q.nested()
    sigma: float = q.energy()
    at_bound: list = q.texts()
    families: dict[str, FamilyEntry] = q.nested(factory=dict)
    too_small_alone: list = q.texts()
    validation: dict[str, FamilyRegime] = q.nested(factory=dict)
    energy_kind: str = q.text()
    units: str = q.text("kcal/mol")
    family_column: str = q.text()
    warnings: list = q.texts()
    skipped: list = q.texts()


@dataclass(frozen=True)
class HammettRecord(Record):
    """The Hammett line of the barrier on Σσ (kcal/mol per unit σ) and ρ at ``temperature``."""

    n: int = q.count()
    barrier_per_sigma: float = q.energy()
    barrier_per_sigma_ci95: list = q.energy(factory=list)
    barrier_at_zero_sigma: float = q.energy()
    rho: float = q.quantity(q.RHO, None)
    rho_ci95: list = q.quantity(q.RHO, factory=list)
    r2: float | None = q.dimensionless()
    temperature: float = q.quantity(q.KELVIN, 298.15)
    sigma_sum: list = q.dimensionless(factory=list)
    constants: dict = q.quantity(q.TEXT, factory=dict)
    basis: str = q.text()
    left_out_positions: list = q.texts()
    n_missing: int = q.count()
    #: the Σσ range the line and ρ above hold for (the steeper segment's when the series bends)
    rho_range: list = q.dimensionless(factory=list)
    #: ρ of one straight line through every member (what the plot would say without the bend test)
    rho_all: float | None = q.quantity(q.RHO, None)
    #: the line against two segments (curves.hammett.bend_test): AICc of each and the F-test p
    bend: bool = q.flag(False)
    aicc_line: float | None = q.quantity(q.LOGLIK, None)
    aicc_bend: float | None = q.quantity(q.LOGLIK, None)
    bend_f_p: float | None = q.probability(None)
    #: where the series bends: "floor" (levels off toward the curve's floor) or "slope change"
    bend_kind: str | None = q.text(None, absent=True)
    bend_at: float | None = q.dimensionless(None, absent=True)
    bend_intercept: float | None = q.energy(None, absent=True)
    bend_slopes: list | None = q.energy(None, absent=True)


@dataclass(frozen=True)
class IntervalsRecord(Record):
    """Which prediction intervals the model uses, for which route, at which level."""

    method: str = q.text("model")
    route: str = q.text()
    level: float = q.probability(0.90)
    folds: int | None = q.count(None, absent=True)


@dataclass(frozen=True)
class AnchorRecord(Record):
    """The energy stage anchored on a computed reaction energy (:mod:`..estimators.anchored`):
    the calibration line reaction energy = a + b·(computed energy) on every member, with 95 %
    intervals, and which candidate the inner score chose (kcal/mol inside)."""

    column: str = q.text()
    #: "xtb tier" (GFN2-xTB through the xtb tier) or "your column" (--computed-energy)
    source: str = q.text()
    a: float = q.energy()
    a_ci95: list = q.energy(factory=list)
    b: float = q.dimensionless()
    b_ci95: list = q.dimensionless(factory=list)
    residual_sd: float = q.energy()
    n: int = q.count()
    #: the energy stage's choice on every member: "anchor", "anchor+correction" or "free"
    choice: str = q.text()
    #: candidate → {"score_rmse", "loo_rmse", "end_rmse": [low end, high end]}, kcal/mol
    scores: dict = q.energy(factory=dict)
    #: the black box's choice, anchored on the same column
    black_box_choice: str = q.text()
    #: per-family intercepts under a shared slope (several families)
    per_family_intercepts: bool = q.flag(False)


@dataclass(frozen=True)
class FitRecord(Record):
    """A fitted, validated family (`fit --json`; kcal/mol inside)."""

    #: one sentence: which route to use where, or that nothing beats the family mean (no numbers)
    recommendation: str = q.text()
    n: int = q.count()
    units: str = q.text("kcal/mol")
    energy_kind: str = q.text()
    learner: str = q.text()
    #: the learner each descriptor model uses, fitted on all members (``auto``: its choice)
    learners_chosen: dict = q.quantity(q.TEXT, factory=dict)
    relation: str = q.text()
    requested_relation: str = q.text()
    features: list = q.texts()
    tiers: list = q.texts()
    primary_route: str = q.text()
    curve: CurveRecord | None = q.nested()
    # validation (see barrierscope.validation.records)
    validation: dict[str, RegimeRecord] = q.nested(factory=dict)
    routes: dict[str, Metrics | None] = q.nested(factory=dict)
    energy_stage: Metrics | None = q.nested()
    comparison: dict[str, PairComparison] = q.nested(factory=dict)
    winner: str | None = q.text(None)
    members: MembersTable | None = q.nested()
    relations_chosen_in_folds: dict | None = q.quantity(q.COUNT, None, absent=True)
    y_randomization: YRandomization | None = q.nested()
    energy_stage_importance: dict = q.energy(factory=dict)
    #: the energy stage's anchor on a computed reaction energy (None: not anchored)
    anchor: AnchorRecord | None = q.nested(None, absent=True)
    intervals: IntervalsRecord | None = q.nested()
    hammett: HammettRecord | None = q.nested(None, absent=True)
    # several families at once (fit --family)
    families: dict[str, FamilyEntry] | None = q.nested(None, absent=True)
    shared: list | None = q.quantity(q.TEXT, None, absent=True)
    sharing_test: SharingTest | None = q.nested(None, absent=True)
    family_validation: dict[str, FamilyRegime] | None = q.nested(None, absent=True)
    family_names: list | None = q.quantity(q.TEXT, None, absent=True)
    family_column: str | None = q.text(None, absent=True)
    warnings: list = q.texts()
    notes: list = q.texts()
    skipped: list[SkippedRow] = q.nested(factory=list)


@dataclass(frozen=True)
class TopRow(Record):
    """One of a screen's lowest barriers."""

    id: str = q.text()
    barrier: float = q.energy()
    low: float = q.energy()
    high: float = q.energy()
    alpha: float = q.dimensionless()
    half_life_s: float = q.quantity(q.SECONDS, None)
    energy: float = q.energy()
    energy_source: str = q.text()
    in_domain: bool = q.flag()
    route: str = q.text()
    #: the 90 % interval reaches the curve's floor: not to be told from the floor
    reaches_floor: bool = q.flag(False)
    structure: dict = q.quantity(q.TEXT, factory=dict)


@dataclass(frozen=True)
class ScreenSummary(Record):
    """What a screen found (kcal/mol)."""

    units: str = q.text("kcal/mol")
    energy_kind: str = q.text("free-energy")
    temperature: float = q.quantity(q.KELVIN, 298.15)
    rows: int = q.count()
    ok: int = q.count()
    errors: dict = q.quantity(q.COUNT, factory=dict)
    out_of_domain: int = q.count()
    energy_given: int = q.count()
    seconds: float = q.quantity(q.SECONDS, 0.0)
    rows_per_second: float | None = q.quantity(q.PER_SECOND, None)
    output: str = q.text()
    top: list[TopRow] = q.nested(factory=list)
    floor: float | None = q.energy()
    family_floors: dict = q.energy(factory=dict)
    at_floor: int = q.count()
    #: ok rows per half-life band at the screen's temperature (free-energy models only)
    half_life_bands: dict = q.quantity(q.COUNT, factory=dict)
    implausible_half_lives: int = q.count()
    distances: list = q.quantity(q.DISTANCE, factory=list)
    notes: dict = q.quantity(q.COUNT, factory=dict)
    #: molecularity, standard_state, concentration (mol/L), solvent, diffusion_rate_per_M_per_s
    kinetics: dict = q.quantity(q.TEXT, factory=dict)
    #: ok rows whose activation-controlled rate reaches the diffusion limit (bimolecular steps)
    diffusion_limited: int = q.count()


@dataclass(frozen=True)
class PickFacts(Record):
    """What a suggestion's reason rests on (kcal/mol)."""

    where: str = q.text()
    gap: float = q.energy()
    below: float = q.energy()
    above: float = q.energy()
    goal: str = q.text()
    floor_open: bool = q.flag(False)
    threshold: float | None = q.quantity(q.DISTANCE, None)
    #: a gap counts as sparse sampling above this (kcal/mol): twice the members' median spacing
    sparse_gap: float | None = q.energy()
    #: no other available candidate gained more when this one was picked
    best: bool = q.flag(True)
    #: what the --domain rule did for this pick ("" when nothing)
    domain: str = q.text()


@dataclass(frozen=True)
class Pick(Record):
    """One suggested calculation."""

    id: str = q.text()
    score: float = q.dimensionless()
    energy: float = q.energy()
    energy_sd: float = q.energy()
    energy_given: bool = q.flag(False)
    in_domain: bool = q.flag(True)
    ad_distance: float | None = q.quantity(q.DISTANCE, None)
    barrier: float = q.energy()
    low: float = q.energy()
    high: float = q.energy()
    facts: PickFacts | None = q.nested()
    energy_outside_span: bool = q.flag(False)
    energy_clipped: bool = q.flag(False)
    unusual_descriptors: bool = q.flag(False)
    structure: dict = q.quantity(q.TEXT, factory=dict)


@dataclass(frozen=True)
class SuggestRecord(Record):
    """What to compute next, and what was left out and why."""

    goal: str = q.text()
    #: the domain rule: prefer (in-domain first unless clearly outgained), only, any
    domain: str = q.text("prefer")
    k: int = q.count()
    units: str = q.text("kcal/mol")
    energy_kind: str = q.text("free-energy")
    candidates: int = q.count()
    considered: int = q.count()
    already_computed: int = q.count()
    already_computed_ids: list = q.texts()
    left_out: dict = q.quantity(q.COUNT, factory=dict)
    picks: list[Pick] = q.nested(factory=list)


__all__ = ["FamilyRegime", "JointRecord", "HammettRecord", "IntervalsRecord", "FitRecord", "TopRow", "ScreenSummary",
           "PickFacts", "Pick", "SuggestRecord"]
