"""The `fit` job: a family's table in; a validated model and its record out (kcal/mol).

Steps: the usable members (:mod:`.members`); the two-stage, hybrid and direct routes and
the applicability domain fitted on all members; validation in every regime with everything
refitted inside each split (:mod:`..validation.run`); the route the evidence supports.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..curves.fit import FitError
from ..errors import FitRefused, InputError
from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.domain import ApplicabilityDomain
from ..estimators.hybrid import HybridRegressor
from ..estimators.learners import AUTO_GP_MAX, check_learner, minimum_members
from ..estimators.two_stage import TwoStageRegressor
from ..relations import RELATIONS, get_relation
from ..units import normalize_unit, parse_energy_kind
from ..validation.run import ValidationOptions, validate
from ..validation.splits import REGIMES
from ..validation.verdict import primary_route, recommendation
from .members import prepare_members
from .model import FamilyModel
from .records import AnchorRecord, FitRecord, IntervalsRecord
from ..curves.records import SkippedRow
from ..records import replace
from .options import at_least, one_of, option


@dataclass
class FitOptions:
    energy_column: str
    barrier_column: str
    learner: str = "auto"
    relation: str = "asymptotic"
    units: str = "kcal/mol"
    energy_kind: str = "free-energy"
    extra_descriptors: list[str] = field(default_factory=list)
    id_column: str | None = None
    skip_bad_rows: bool = False
    n_shuffles: int = 5
    level: float = 0.90
    random_state: int = 0
    max_atoms: int = 200
    regimes: tuple[str, ...] = REGIMES
    #: "model" (each route's own intervals) or "jackknife+" (the primary route's, from refits)
    prediction_intervals: str = "model"
    #: several families at once: the column naming each member's family, and the shared parameters
    family_column: str | None = None
    share: tuple[str, ...] = ("width",)
    #: the practical margin's floor in ``units`` (None: 0.5 kcal/mol; see validation.metrics)
    margin: float | None = None
    #: a column of computed reaction energies (in ``units``) the energy stage is anchored on;
    #: None: the xtb tier's, when computed for every member; "none": never anchored
    computed_energy: str | None = None
    #: rows repeating a structure with other numbers: refuse, lowest, mean or boltzmann
    duplicates: str = "refuse"
    #: K: the Boltzmann weights of --duplicates boltzmann
    temperature: float = 298.15
    #: the barriers' step (1: unimolecular, 2: A + B → TS) and their standard state (1M, 1atm)
    molecularity: int = 1
    standard_state: str = "1M"

INTERVAL_METHODS = ("model", "jackknife+")


def _check_sizes(n: int, has_x: bool, opts: FitOptions) -> None:
    relations = list(RELATIONS) if opts.relation == "auto" else [opts.relation]
    need_curve = max(get_relation(r).n_params for r in relations) + 3
    if n < need_curve:
        raise FitRefused(f"{n} usable member(s): the {opts.relation} relation needs at least {need_curve} for a "
                         f"fit validated by leave-one-out (parameters + 3)")
    if has_x and n < minimum_members(opts.learner) + 1:
        raise FitRefused(f"{n} usable member(s): the {opts.learner} learner needs at least "
                         f"{minimum_members(opts.learner) + 1} for a leave-one-out validation")


def descriptor_notes(two_stage: TwoStageRegressor, X, energy, learner: str, *, random_state: int):
    """(notes, warnings, permutation importance) about the energy stage's descriptors."""
    from ..estimators.importance import permutation_importance

    pre = two_stage.energy_.preprocessor_
    notes = [f"descriptor {k} left out: {v}" for k, v in pre.dropped.items()]
    warnings = []
    if pre.imputed:
        warnings.append("missing descriptor values imputed with the training median: " +
                        ", ".join(f"{k} ({v} member(s))" for k, v in pre.imputed.items()))
    Z = two_stage.energy_.standardise(X)
    rank = int(np.linalg.matrix_rank(Z - Z.mean(axis=0))) if Z.size else 0
    if Z.shape[1] > rank:
        notes.append(f"{Z.shape[1] - rank} descriptor(s) are linear combinations of others (collinear, or more "
                     f"descriptors than members); the {learner} learner is regularised, so the fit stands, "
                     f"but single coefficients mean little")
    imp = permutation_importance(two_stage.energy_, X, energy, random_state=random_state)
    importance = {str(X.columns[j]): float(imp[j]) for j in np.argsort(imp)[::-1][:20]}
    return notes, warnings, importance


#: The xtb tier's reaction energy: the anchor when it was computed for every member.
XTB_ENERGY = "reaction_energy_xtb"
#: Fewest members per family for each family to get its own anchor intercept.
FAMILY_INTERCEPT_MIN = 3


@dataclass(frozen=True)
class Anchor:
    """Which column of X the energy stage and the black box are anchored on (None: neither)."""

    column: str | None = None
    fixed: tuple[str, ...] = ()
    source: str = ""
    note: str | None = None


def choose_anchor(X, opts: FitOptions, families=None) -> Anchor:
    """The anchor: the user's --computed-energy column, else the xtb tier's reaction energy
    when every member has one; with several families of at least :data:`FAMILY_INTERCEPT_MIN`
    members, each family's indicator is fitted unpenalised too (its own intercept under one
    slope: the computed method's compression is the method's, not the family's)."""
    if X is None or X.shape[1] == 0 or (opts.computed_energy or "").lower() == "none":
        return Anchor()
    col, source = (opts.computed_energy, "your column") if opts.computed_energy else (XTB_ENERGY, "xtb tier")
    if col not in X.columns:
        return Anchor()
    missing = int((~np.isfinite(X[col].to_numpy(dtype=float))).sum())
    if missing:
        return Anchor(note=f"the energy stage is not anchored on {col}: {missing} member(s) have none (the "
                           f"calculation failed for them)")
    fixed = ()
    if families is not None:
        counts = np.unique(np.asarray(families, dtype=object), return_counts=True)[1]
        if counts.min() >= FAMILY_INTERCEPT_MIN:
            fixed = tuple(c for c in X.columns if str(c).startswith("family="))
    return Anchor(column=col, fixed=fixed, source=source)


def anchor_record(anchor: Anchor, two_stage, direct) -> AnchorRecord | None:
    """The energy stage's calibration on its anchor, for the record (None: not anchored)."""
    if anchor.column is None or two_stage.energy_ is None:
        return None
    cal = two_stage.energy_.calibration()
    if cal is None:
        return None
    return AnchorRecord(column=anchor.column, source=anchor.source, a=cal["a"], a_ci95=cal["a_ci95"], b=cal["b"],
                        b_ci95=cal["b_ci95"], residual_sd=cal["residual_sd"], n=cal["n"], choice=cal["choice"],
                        scores=cal["scores"], black_box_choice=direct.chosen_learner if direct is not None else "",
                        per_family_intercepts=bool(anchor.fixed))


def fit_routes(X, energy, barrier, opts: FitOptions, *, anchor: Anchor = Anchor()):
    """(two_stage, hybrid, direct, domain, structure) fitted on all members; ``structure`` the
    structure-dependent curve (None without descriptors, or when it cannot be fitted); the
    energy stage and the black box anchored alike on ``anchor``."""
    has_x = X is not None and X.shape[1] > 0
    a = dict(anchor=anchor.column, fixed=anchor.fixed)
    two_stage = TwoStageRegressor(opts.learner, opts.relation, curve_intervals="profile",
                                  random_state=opts.random_state, **a).fit(X if has_x else None, barrier, energy)
    relation = two_stage.curve_.relation_.name
    hybrid = direct = None
    Z = None
    if has_x:
        hybrid = HybridRegressor(opts.learner, relation, opts.random_state, **a).fit(X, barrier, energy)
        direct = DescriptorRegressor(opts.learner, opts.random_state, **a).fit(X, barrier)
        Z = two_stage.energy_.standardise(X)
    return two_stage, hybrid, direct, ApplicabilityDomain().fit(Z, energy), _structure_curve(X, energy, barrier,
                                                                                               two_stage.curve_)


def _structure_curve(X, energy, barrier, curve):
    """The structure-dependent curve on every member, started from the plain curve."""
    from ..curves.structure import fit_beside

    if X is None or X.shape[1] == 0:
        return None
    try:
        return fit_beside(curve, X, energy, barrier)
    except (ValueError, np.linalg.LinAlgError):
        return None


def margin_kcal(margin: float | None, unit: str) -> float:
    """The practical margin's floor in kcal/mol from ``--margin`` (in the table's unit)."""
    from ..units import to_kcal
    from ..validation.metrics import MARGIN_KCAL

    return MARGIN_KCAL if margin is None else float(to_kcal(margin, unit))


def check_options(opts: FitOptions) -> tuple[str, str]:
    """(energy kind, unit) once every option is known to be usable; else the option's message."""
    with option("--learner"):
        check_learner(opts.learner)
    if opts.relation != "auto":
        with option("--relation"):
            get_relation(opts.relation)
    with option("--kind"):
        kind = parse_energy_kind(opts.energy_kind).value
    with option("--units"):
        unit = normalize_unit(opts.units)
    one_of("--prediction-intervals", opts.prediction_intervals, INTERVAL_METHODS)
    from ..io.pairs import DUPLICATE_POLICIES

    one_of("--duplicates", opts.duplicates, DUPLICATE_POLICIES)
    from ..bimolecular import STANDARD_STATES

    if opts.molecularity not in (1, 2):
        raise InputError(f"--molecularity {opts.molecularity}: 1 (a unimolecular step) or 2 (A + B → TS)")
    if opts.standard_state not in STANDARD_STATES:
        raise InputError(f"--standard-state {opts.standard_state!r}: choose one of {', '.join(STANDARD_STATES)}")
    at_least("--shuffles", opts.n_shuffles, 0)
    if opts.margin is not None and not opts.margin >= 0:
        raise InputError(f"--margin must be zero or a positive energy in the table's unit (got {opts.margin})")
    if opts.family_column and opts.prediction_intervals != "model":
        raise InputError("--prediction-intervals jackknife+ is not available with --family yet: its refits know one "
                         "curve, not each family's")
    ce = opts.computed_energy
    if ce and ce.lower() != "none" and ce in (opts.energy_column, opts.barrier_column):
        raise InputError(f"--computed-energy {ce!r} is the {'reaction energy' if ce == opts.energy_column else 'barrier'} "
                         f"column itself: give the column of cheaply computed reaction energies (GFN2-xTB, a smaller "
                         f"basis...) that stands beside the reference ones")
    if ce and ce in opts.extra_descriptors:
        raise InputError(f"--computed-energy {ce!r} is also in --extra-descriptors: name it once")
    return kind, unit


def fit_family(df, source: str, spec, engine, *, opts: FitOptions):
    """(FamilyModel, FitRecord) for one family's table; the record is in kcal/mol, built once.

    BLAS runs on one thread meanwhile: validation solves thousands of small systems (a
    Gaussian process's kernel of a few hundred members, per split), where threads cost more
    than they give (measured on the 2-core development machine: a 250-member fit 25.9 s with
    two BLAS threads, 11.2 s with one)."""
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1, user_api="blas"):
        return _fit_family(df, source, spec, engine, opts=opts)


def _fit_family(df, source: str, spec, engine, *, opts: FitOptions):
    from ..progress import stage

    kind, unit = check_options(opts)
    stage(f"describing {len(df)} rows" + (f" (tiers {', '.join(engine.tiers)})" if getattr(engine, "tiers", None)
                                          else ""))
    X, pairs, spec = prepare_members(df, source, spec, engine, opts=opts)
    stage(f"fitting the routes on {pairs.n} members (learner {opts.learner})")
    has_x = X is not None and X.shape[1] > 0
    _check_sizes(pairs.n, has_x, opts)
    energy, barrier = pairs.energy, pairs.barrier
    anchor = choose_anchor(X if has_x else None, opts, pairs.families)
    try:
        two_stage, hybrid, direct, domain, structure = fit_routes(X, energy, barrier, opts, anchor=anchor)
    except FitError as exc:      # the data cannot support a curve (no span, say): the chemist's to know
        raise FitRefused(str(exc)) from None
    curve = two_stage.curve_
    warnings, notes, importance = list(pairs.warnings), [anchor.note] if anchor.note else [], {}
    if opts.molecularity == 2:
        from ..bimolecular import standard_state_shift

        notes.append(f"a bimolecular step (A + B → TS), barriers in the {opts.standard_state} standard state: screen "
                     f"and suggest give second-order rate constants (M⁻¹ s⁻¹) from the 1 M barrier" +
                     (f" (a 1 atm barrier is {standard_state_shift(opts.temperature):.2f} kcal/mol higher than the 1 M "
                      f"one at {opts.temperature:g} K, taken off before the rate)" if opts.standard_state == "1atm"
                      else "") + ", and half-lives with the partner's --concentration")
    if curve.fit_.at_bound:
        warnings.append(f"curve parameter(s) {', '.join(curve.fit_.at_bound)} at the edge of the search range: "
                        f"see the identifiability verdict")
    if has_x:
        more_notes, more_warnings, importance = descriptor_notes(two_stage, X, energy, opts.learner,
                                                                 random_state=opts.random_state)
        notes += more_notes
        warnings += more_warnings
    if has_x and opts.learner == "auto" and pairs.n > AUTO_GP_MAX:
        notes.append(f"learner auto: ridge only above {AUTO_GP_MAX} members (a Gaussian process's hyper-parameter "
                     f"search in every validation split would cost O(n³) each step)")
    checked = validate(X if has_x else None, energy, barrier, pairs.ids,
                       opts=ValidationOptions(opts.learner, opts.relation, opts.level, opts.random_state, opts.n_shuffles,
                                              opts.regimes, margin=margin_kcal(opts.margin, unit),
                                              anchor=anchor.column, fixed=anchor.fixed))
    primary = primary_route(checked.validation["loo"], checked.routes) if has_x else "two_stage"
    notes += checked.notes
    hammett = None
    if has_x and "table" in getattr(engine, "tiers", ()):
        from .hammett import hammett_record

        hammett = hammett_record(X, spec, barrier)
    joint, family_fields = None, {}
    if opts.family_column:
        stage("fitting the families jointly")
        joint, primary, family_fields = _families(energy, barrier, pairs.families, checked, primary=primary, opts=opts, notes=notes)
    jackknife, intervals, regimes, more = prediction_intervals(X if has_x else None, energy, barrier, primary,
                                                               checked=checked, opts=opts, anchor=anchor)
    notes += more
    tiers = list(getattr(engine, "tiers", ())) if has_x else []
    fields = {f: getattr(checked, f) for f in ("routes", "energy_stage", "comparison", "winner", "members",
                                               "relations_chosen_in_folds", "y_randomization")}
    chosen = ({"energy_stage": two_stage.energy_.chosen_learner, "direct": direct.chosen_learner} if has_x else {})
    advice = recommendation(regimes, primary=primary if has_x else "curve_on_true_energy",
                            black_box=chosen.get("direct"))
    record = FitRecord(
        recommendation=advice, n=pairs.n, units=unit, energy_kind=kind, learner=opts.learner,
        learners_chosen=chosen, relation=curve.relation_.name,
        requested_relation=opts.relation, features=list(X.columns) if has_x else [], tiers=tiers,
        primary_route=primary, curve=curve.record(), validation=regimes, **fields,
        energy_stage_importance=importance, intervals=intervals, hammett=hammett, **family_fields,
        anchor=anchor_record(anchor, two_stage, direct if has_x else None),
        warnings=warnings, notes=notes,
        skipped=[SkippedRow(row=p.row, id=p.ident, problem=p.message) for p in pairs.skipped])
    model = FamilyModel(
        spec=spec, tiers=tuple(tiers), features=record.features,
        extra_descriptors=list(opts.extra_descriptors), computed_energy=anchor.column if anchor.source == "your column"
        else None, learner=opts.learner, relation=opts.relation, units=unit,
        energy_kind=kind, energy_column=opts.energy_column, barrier_column=opts.barrier_column,
        two_stage=two_stage, hybrid=hybrid, direct=direct, domain=domain, structure=structure,
        training={"n": pairs.n, "ids": pairs.ids, "rows": [int(r) for r in pairs.rows],
                  "keys": pairs.keys if spec.mode != "none" else None,
                  "energy": energy.tolist(), "barrier": barrier.tolist(),
                  "structures": member_structures(df, spec, pairs.rows), "families": pairs.families,
                  "stands_for": pairs.stands_for,
                  "energy_range": [float(energy.min()), float(energy.max())],
                  "barrier_range": [float(barrier.min()), float(barrier.max())]},
        validation={k: v for k, v in record.as_dict().items() if k != "curve"},
        primary_route=primary, level=opts.level, warnings=warnings,
        descriptor_versions=_versions(engine) if has_x else {}, xtb=_xtb_settings(engine) if has_x else {},
        intervals=jackknife, family_column=opts.family_column, joint=joint, molecularity=opts.molecularity,
        standard_state=opts.standard_state)
    return model, record


def _families(energy, barrier, labels, checked, *, primary: str, opts: FitOptions, notes: list):
    """The families' joint curves, the model's route, and the record's family fields
    (``families``, ``shared``, ``sharing_test``, ``family_validation``, ``family_names``,
    ``family_column``): the model predicts through the joint curves unless the black box won
    leave-one-out (the hybrid's correction is learned for one curve, so it is not offered)."""
    from .families import joint_record

    e_loo = checked.members.energy_pred if checked.members is not None else None
    rec, fit, _, names = joint_record(energy, barrier, labels, opts.relation if opts.relation != "auto" else
                                      "asymptotic", share=opts.share, energy_pred=e_loo)
    fields = {"families": rec.families, "shared": rec.shared, "sharing_test": rec.sharing_test,
              "family_validation": rec.validation, "family_names": names, "family_column": opts.family_column}
    if primary in ("hybrid", "structure_curve"):
        notes.append(f"the {primary.replace('_', ' ')} route is not offered with --family (it is learned for one "
                     f"curve); the model predicts through each family's own curve")
    return {"fit": fit, "names": names}, ("direct" if primary == "direct" else "two_stage"), fields


def prediction_intervals(X, energy, barrier, primary: str, *, checked, opts: FitOptions, anchor: Anchor = Anchor()):
    """(JackknifePlus or None, the record's ``intervals``, the regimes with jackknife+ coverage
    added, notes): which intervals the model uses, their measured coverage per regime, and a
    note when the model's own intervals miss their nominal level in leave-one-out."""
    from ..estimators.jackknife import JackknifePlus
    from ..validation.conformal import coverage_by_regime, off_nominal

    route = primary if X is not None else "curve_on_true_energy"
    loo = checked.validation["loo"]
    cover = getattr(loo.routes.get(route), "pi90_coverage", None)
    notes = []
    if cover is not None and off_nominal(cover, loo.n_test, opts.level) and opts.prediction_intervals == "model":
        notes.append(f"the {route.replace('_', '-')} intervals hold for {cover:.0%} of the members in "
                     f"leave-one-out against {opts.level:.0%} nominal: --prediction-intervals jackknife+ "
                     f"builds them from the family's held-out errors instead")
    if opts.prediction_intervals == "model":
        return None, IntervalsRecord(method="model", route=route, level=opts.level), checked.validation, notes
    vopts = ValidationOptions(opts.learner, opts.relation, opts.level, opts.random_state, 0, opts.regimes,
                              anchor=anchor.column, fixed=anchor.fixed)
    routes = (route, "curve_on_true_energy") if X is not None else (route,)
    coverage = coverage_by_regime(X, energy, barrier, routes, opts=vopts)
    regimes = {name: (replace(r, jackknife_plus=coverage[name]) if name in coverage else r)
               for name, r in checked.validation.items()}
    fitted = JackknifePlus(primary, opts.learner, opts.relation, opts.level, random_state=opts.random_state,
                           anchor=anchor.column, fixed=anchor.fixed).fit(X, barrier, energy)
    return fitted, IntervalsRecord(method=fitted.method, route=route, level=opts.level,
                                   folds=len(fitted.folds_)), regimes, notes


def member_structures(df, spec, rows) -> dict | None:
    """Each member's structure columns as given (for the report's drawings), in member order."""
    from ..io.tables import ROW

    if spec.mode == "none" or ROW not in df.columns:
        return None
    table = df.set_index(ROW)
    return {c: [str(table.at[r, c]) for r in rows] for c in spec.columns if c in table.columns}


def _xtb_settings(engine) -> dict:
    if "xtb" not in getattr(engine, "tiers", ()):
        return {}
    st = engine.xtb_settings
    return {"level": st.level, "solvent": st.solvent, "cache_version": st.cache_version()}


def _versions(engine) -> dict:
    from ..descriptors.tiers import TIERS

    return {t: TIERS[t].version for t in getattr(engine, "tiers", ())}


@dataclass(frozen=True)
class EngineOptions:
    """Where descriptors come from: tiers, cache, workers, and GFN2-xTB settings."""

    tiers: str = "2d,table"
    cache_dir: object = "default"
    workers: int = 1
    scheduler: str | None = None
    xtb_level: str = "sp"
    solvent: str | None = None


def fit_table(df, source: str, structure: dict, opts: FitOptions, *, engine_opts: EngineOptions = EngineOptions()):
    """The one path from a table to a fitted family, for the command line and the Python API:
    the structure options (``structure``: substituents, molecule, core, reaction, template,
    multiplicity) checked together with the tiers, the descriptor engine set up and closed,
    and :func:`fit_family`. Returns (model, record)."""
    import contextlib

    from .setup import descriptor_engine, structure_spec

    spec = structure_spec(**structure)
    e = engine_opts
    if spec.mode == "none" and e.tiers != "2d,table":
        raise InputError("--tiers needs a structure input (--substituents, --molecule, --reaction or --template)")
    engine_cm = (descriptor_engine(e.tiers, e.cache_dir, e.workers, e.scheduler, xtb_level=e.xtb_level, solvent=e.solvent)
                 if spec.mode != "none" else contextlib.nullcontext(None))
    with engine_cm as engine:
        if engine is not None and not engine.tiers and not opts.extra_descriptors:
            raise InputError("--tiers none leaves no descriptors: add --extra-descriptors, or drop the structure "
                             "options for a curve-only model")
        return fit_family(df, source, spec, engine, opts=opts)


def fit_file(data, output, structure: dict, opts: FitOptions, *, engine_opts: EngineOptions = EngineOptions(),
             members=None, report=None, figures=None):
    """The `fit` command: read, fit, validate, write the model (and the member table and the
    report when asked). Returns (model, record)."""
    from ..io import modelfile
    from ..io.tables import detect_format, read_table, write_table
    from ..views.members import members_frame
    from .report import write_report

    model, record = fit_table(read_table(data), str(data), structure, opts, engine_opts=engine_opts)
    modelfile.save(model.as_dict(), output)
    if members is not None:
        # Rounded for reading (CSV/TSV); full precision in Parquet, as for screens.
        write_table(members_frame(record, model.units, rounded=detect_format(members) != "parquet"), members)
    if report is not None or figures is not None:
        write_report(model, record, report, figures, source=str(data))
    return model, record
