"""What validation returns: typed records, every field with its unit class (kcal/mol inside).

The JSON keys of `fit --json` are these field names: ``validation`` {regime:
:class:`RegimeRecord`}, ``routes`` {route: :class:`Metrics`}, ``comparison`` {pair:
:class:`PairComparison`}, ``members`` (:class:`MembersTable`), ``y_randomization``.
"""

from __future__ import annotations

from dataclasses import dataclass

from .. import records as q
from ..records import Record


@dataclass(frozen=True)
class Metrics(Record):
    """Errors of out-of-fold predictions (kcal/mol) and the share inside their interval."""

    mae: float = q.energy()
    rmse: float = q.energy()
    r2: float = q.dimensionless()
    pi90_coverage: float | None = q.probability(None, absent=True)


@dataclass(frozen=True)
class PairComparison(Record):
    """One route against another on the same members: MAE(route) − MAE(base) with its
    bootstrap 95 % (and 90 %) interval, the same for squared errors, and the Wilcoxon p; once
    judged (:func:`.metrics.judge`), the practical margin and the verdict on the pair."""

    delta_mae: float = q.energy()
    ci95: list = q.energy(factory=list)
    wilcoxon_p: float = q.probability()
    delta_mse: float = q.energy2()
    mse_ci95: list = q.energy2(factory=list)
    ci90: list = q.energy(factory=list)
    #: the smallest MAE difference counted for this pair
    margin: float | None = q.energy(None, absent=True)
    #: statistically clearly better (95 %), whatever the size
    clear: bool | None = q.flag(None, absent=True)
    #: clearly better and by at least the margin: what the verdict counts
    beats: bool | None = q.flag(None, absent=True)
    #: the MAE difference shown to lie inside ±margin (two one-sided tests at 5 %)
    equivalent: bool | None = q.flag(None, absent=True)


@dataclass(frozen=True)
class JackknifeCoverage(Record):
    """Coverage of jackknife+ intervals in one regime, by nested refits."""

    coverage: float = q.probability()
    n_test: int = q.count()
    width: float | None = q.energy()


@dataclass(frozen=True)
class RegimeRecord(Record):
    """One validation regime: every route's errors on the held-out members and the decision."""

    n_test: int = q.count()
    #: how members were held out: "leave-one-out", "10-fold" (large families), "end", "clusters"
    scheme: str = q.text()
    routes: dict[str, Metrics] = q.nested(factory=dict)
    winner: str | None = q.text(None)
    tied: list = q.texts()
    leader_beats: list = q.texts()
    #: on a tie, the routes shown equivalent to the lowest-MAE one (within the margin)
    equivalent: list = q.texts()
    beats_mean: list = q.texts()
    #: the practical margin's floor used (kcal/mol); each pair carries its own margin
    margin: float | None = q.energy(None)
    #: route → [(member id, signed error kcal/mol)] behind its large misses
    misses: dict = q.energy(factory=dict)
    pairs: dict[str, PairComparison] = q.nested(factory=dict)
    skipped: str = q.text()
    energy_stage: Metrics | None = q.nested()
    #: with an anchored energy stage: the free learner's energy stage on the same splits
    energy_stage_free: Metrics | None = q.nested(absent=True)
    curve_beats_mean: bool | None = q.flag()
    jackknife_plus: dict[str, JackknifeCoverage] = q.nested(factory=dict)
    #: target ("energy_stage", "direct") → {learner: splits it predicted in} (``auto`` chooses per split)
    learners: dict = q.quantity(q.COUNT, factory=dict)


@dataclass(frozen=True)
class MembersTable(Record):
    """The per-member leave-one-out table, column-oriented (kcal/mol)."""

    id: list = q.texts()
    energy: list = q.energy(factory=list)
    barrier: list = q.energy(factory=list)
    energy_pred: list | None = q.energy()
    energy_sd: list | None = q.energy()
    pred: dict = q.energy(factory=dict)
    low: dict = q.energy(factory=dict)
    high: dict = q.energy(factory=dict)
    energy_true_outside: list = q.quantity(q.FLAG, factory=list)
    ad_distance: list | None = q.quantity(q.DISTANCE, None, absent=True)
    ad_out: list | None = q.flag(None, absent=True)
    energy_pred_outside: list | None = q.flag(None, absent=True)
    energy_clipped: list | None = q.flag(None, absent=True)
    unusual_descriptors: list | None = q.flag(None, absent=True)
    unusual: list = q.quantity(q.FLAG, factory=list)


@dataclass(frozen=True)
class YRandomization(Record):
    """Leave-one-out MAE of the routes refitted on shuffled targets (kcal/mol)."""

    n_shuffles: int = q.count()
    mae_mean: float = q.energy()
    mae_std: float = q.energy()
    direct_mae_mean: float = q.energy()
    mean_predictor_mae: float = q.energy()


@dataclass(frozen=True)
class ValidationRecord(Record):
    """Everything :func:`.run.validate` finds, as the fit record's fields of the same names."""

    validation: dict[str, RegimeRecord] = q.nested(factory=dict)
    routes: dict[str, Metrics | None] = q.nested(factory=dict)
    energy_stage: Metrics | None = q.nested()
    comparison: dict[str, PairComparison] = q.nested(factory=dict)
    winner: str | None = q.text(None)
    members: MembersTable | None = q.nested()
    relations_chosen_in_folds: dict | None = q.quantity(q.COUNT, None, absent=True)
    y_randomization: YRandomization | None = q.nested()
    notes: list = q.texts()

