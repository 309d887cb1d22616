"""Validate a family as the chemist will use it: every regime, every route, one record.

:func:`validate` runs leave-one-out and the extrapolation regimes (:mod:`.splits`), scores
every route on the held-out members (:mod:`.metrics`), decides each regime (:mod:`.verdict`),
y-randomises, and keeps the per-member leave-one-out table. Everything is refitted inside
each split (:mod:`.routes`). The result is a typed record (:mod:`.records`) in kcal/mol; the
views turn it into the user's unit and words.
"""

from __future__ import annotations

from dataclasses import dataclass

from collections import Counter

import numpy as np

from ..estimators.preprocess import Preprocessor
from .metrics import MARGIN_KCAL, judge, metrics, paired_comparison
from .records import MembersTable, RegimeRecord, ValidationRecord
from .routes import ROUTES, out_of_fold
from .splits import REGIMES, loo_scheme, regimes
from .verdict import decide
from .yrandom import y_randomization

#: How each regime holds members out (leave-one-out's depends on the family's size).
SCHEMES = {"downhill": "end", "uphill": "end", "clusters": "clusters"}

#: Learners whose every refit runs a hyper-parameter search (or grows a forest): their
#: y-randomisation keeps at most this many shuffles, and says so.
SLOW_LEARNERS = ("auto", "gp", "forest")
SLOW_SHUFFLES = 2

#: |residual| above this many robust standard deviations marks a member as unusual (common
#: practice for outlier screening: about 3σ; the σ is 1.4826·MAD of the residuals).
UNUSUAL_Z = 3.0


@dataclass(frozen=True)
class ValidationOptions:
    learner: str = "ridge"
    relation: str = "asymptotic"
    level: float = 0.90
    random_state: int = 0
    n_shuffles: int = 5
    regimes: tuple[str, ...] = REGIMES
    #: the practical margin's floor, kcal/mol (:func:`.metrics.practical_margin`)
    margin: float = MARGIN_KCAL
    #: X's column holding a computed reaction energy the energy stage and the black box are
    #: anchored on (None: not anchored), and further unpenalised columns (family indicators)
    anchor: str | None = None
    fixed: tuple[str, ...] = ()


def standardised(X) -> np.ndarray | None:
    """The family's descriptors imputed and standardised (None without descriptors)."""
    if X is None or np.shape(X)[1] == 0:
        return None
    A = X.to_numpy(dtype=float) if hasattr(X, "to_numpy") else np.asarray(X, dtype=float)
    return Preprocessor.fit(A, [str(c) for c in range(A.shape[1])]).transform(A)


def _regime_record(oof, energy, barrier, ids, *, random_state, scheme: str, margin: float) -> RegimeRecord:
    routes = {r: metrics(barrier, oof.pred[r], oof.low[r], oof.high[r]) for r in ROUTES if r in oof.pred}
    decision = decide({r: oof.pred[r] - barrier for r in oof.pred}, ids, random_state, margin)
    pairs = dict(decision["pairs"])
    structure = _computed_energy_pair(oof, barrier, random_state, margin)
    if structure is not None:
        pairs["structure_curve_on_true_energy_vs_curve_on_true_energy"] = structure
    return RegimeRecord(n_test=int(oof.tested.sum()), scheme=scheme, routes=routes, winner=decision["winner"],
                        tied=decision["tied"], leader_beats=decision["leader_beats"],
                        equivalent=decision["equivalent"], margin=margin,
                        beats_mean=decision["beats_mean"], misses=decision["misses"], pairs=pairs,
                        energy_stage=None if oof.energy is None else metrics(energy, oof.energy),
                        energy_stage_free=None if oof.energy_free is None else metrics(energy, oof.energy_free),
                        learners={t: dict(Counter(names)) for t, names in oof.learners.items()},
                        curve_beats_mean=_curve_beats_mean(oof, barrier, random_state, margin))


def _computed_energy_pair(oof, barrier, random_state, margin: float):
    """The structure-dependent curve against the plain one, both fed the members' own
    reaction energies: does where the reaction happens add to how far downhill it goes?"""
    a, b = "structure_curve_on_true_energy", "curve_on_true_energy"
    if a not in oof.pred or b not in oof.pred:
        return None
    ok = np.isfinite(oof.pred[a]) & np.isfinite(oof.pred[b])
    if ok.sum() < 3:
        return None
    ea, eb = oof.pred[a][ok] - barrier[ok], oof.pred[b][ok] - barrier[ok]
    return judge(paired_comparison(ea, eb, random_state=random_state), np.mean(np.abs(ea)), np.mean(np.abs(eb)), margin)


def _curve_beats_mean(oof, barrier, random_state, margin: float) -> bool | None:
    """Does the barrier follow the reaction energy at all: does the curve fed the held-out
    members' own reaction energies beat the family mean on them (clearly, and by the margin)?"""
    if "curve_on_true_energy" not in oof.pred or "family_mean" not in oof.pred:
        return None
    t = oof.tested
    if t.sum() < 3:
        return None
    e_curve = oof.pred["curve_on_true_energy"][t] - barrier[t]
    e_mean = oof.pred["family_mean"][t] - barrier[t]
    c = paired_comparison(e_curve, e_mean, random_state=random_state)
    return bool(judge(c, np.mean(np.abs(e_curve)), np.mean(np.abs(e_mean)), margin).beats)


def _members(oof, energy, barrier, ids) -> MembersTable:
    """The per-member leave-one-out table (column-oriented, kcal/mol)."""
    # A member the curve misses badly even from its own reaction energy points at the data
    # (a transition state that is not the right one, or a mis-assigned energy), not the model.
    resid = oof.pred["curve_on_true_energy"] - barrier
    mad = 1.4826 * float(np.median(np.abs(resid - np.median(resid))))
    unusual = (np.abs(resid - np.median(resid)) > UNUSUAL_Z * mad).tolist() if mad > 0 else [False] * len(ids)
    domain = {}
    if oof.ad_out is not None:
        domain = {"ad_distance": oof.ad_distance.tolist(), "ad_out": oof.ad_out.tolist(),
                  "energy_pred_outside": oof.energy_pred_outside.tolist(),
                  "energy_clipped": oof.energy_clipped.tolist(), "unusual_descriptors": oof.off_manifold.tolist()}
    return MembersTable(id=list(ids), energy=energy.tolist(), barrier=barrier.tolist(),
                        energy_pred=None if oof.energy is None else oof.energy.tolist(),
                        energy_sd=None if oof.energy_std is None else oof.energy_std.tolist(),
                        pred={r: v.tolist() for r, v in oof.pred.items()},
                        low={r: v.tolist() for r, v in oof.low.items()},
                        high={r: v.tolist() for r, v in oof.high.items()},
                        energy_true_outside=oof.energy_true_outside.tolist(), unusual=unusual, **domain)


def validate(X, energy, barrier, ids, *, opts: ValidationOptions = ValidationOptions()) -> ValidationRecord:
    """Every regime in ``opts.regimes``; see the module docstring. Energies in kcal/mol."""
    energy = np.asarray(energy, dtype=float)
    barrier = np.asarray(barrier, dtype=float)
    has_x = X is not None and np.shape(X)[1] > 0
    plan = regimes(energy, standardised(X) if has_x else None, opts.random_state, opts.regimes)
    kw = dict(learner=opts.learner, relation=opts.relation, level=opts.level, random_state=opts.random_state,
              anchor=opts.anchor if has_x else None, fixed=opts.fixed)
    regimes_out: dict[str, RegimeRecord] = {}
    notes: list[str] = []
    loo = None
    capped = fits = 0
    designs: dict = {}  # ridge fold designs shared by every target on the same splits
    from ..progress import stage

    for name, regime in plan.items():
        if regime.skipped:
            regimes_out[name] = RegimeRecord(skipped=regime.skipped)
            continue
        stage(f"validating: {name} ({len(regime.splits)} split(s), every route refitted in each)")
        oof = out_of_fold(X if has_x else None, energy, barrier, regime.splits, designs=designs, **kw)
        regimes_out[name] = _regime_record(oof, energy, barrier, ids, random_state=opts.random_state,
                                           scheme=SCHEMES.get(name, name) if name != "loo" else loo_scheme(energy.size),
                                           margin=opts.margin)
        capped, fits = capped + oof.optimizer_capped, fits + oof.fits
        if name == "loo":
            loo = oof
    if loo is None:
        raise ValueError("leave-one-out validation is required")
    top = regimes_out["loo"]
    shuffles = opts.n_shuffles
    if has_x and opts.learner in SLOW_LEARNERS and shuffles > SLOW_SHUFFLES:
        shuffles = SLOW_SHUFFLES
        notes.append(f"y-randomisation capped at {SLOW_SHUFFLES} shuffles for the {opts.learner} learner "
                     f"(each shuffle refits it in every fold); {opts.n_shuffles} were asked for")
    if has_x and opts.learner == "forest":
        from ..estimators.learners import FOREST_TREES, REFIT_FOREST_TREES

        notes.append(f"validation refits grow forests of {REFIT_FOREST_TREES} trees (the model's has "
                     f"{FOREST_TREES}): a bounded cost, every split refitting the forest")
    if capped:
        notes.append(f"the {opts.learner} learner's hyper-parameter search stopped at a bound or an "
                     f"iteration limit in {capped} of {fits} validation refits; those fits stand")
    shuffled = None
    if has_x and shuffles:
        stage(f"y-randomisation ({shuffles} shuffles)")
        shuffled = y_randomization(X, energy, barrier, opts.learner, relation=opts.relation, n_shuffles=shuffles,
                                   random_state=opts.random_state, designs=designs, anchor=kw["anchor"],
                                   fixed=opts.fixed)
    return ValidationRecord(
        validation=regimes_out,
        routes={r: top.routes.get(r) for r in ROUTES},
        energy_stage=top.energy_stage,
        comparison={k: top.pairs[k] for k in ("two_stage_vs_direct", "hybrid_vs_direct", "structure_curve_vs_direct")
                    if k in top.pairs},
        winner=top.winner, members=_members(loo, energy, barrier, ids),
        relations_chosen_in_folds=({k: loo.relations.count(k) for k in sorted(set(loo.relations))}
                                   if opts.relation == "auto" else None),
        y_randomization=shuffled,
        notes=notes)
