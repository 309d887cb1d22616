"""Out-of-fold predictions of every route, with everything refitted inside each split.

For every split, each route is fitted on the training members only — imputation, scaling,
the learner's hyper-parameters, the relation's choice (``auto``), the curve fit, the
hybrid's nested out-of-fold residuals — and predicts the test members. The routes:

- ``two_stage`` — energy stage, then the curve;
- ``hybrid`` — two-stage plus a correction learned from its out-of-fold residuals;
- ``direct`` — the black box: the same descriptors → barrier, same learner, same tuning;
- ``curve_on_true_energy`` — the curve fed the member's own reaction energy;
- ``structure_curve`` — energy stage, then the curve whose intrinsic barrier moves with the
  descriptors (:mod:`..curves.structure`);
- ``structure_curve_on_true_energy`` — that curve fed the member's own reaction energy;
- ``family_mean`` — the mean barrier of the training members (what any route must beat).

The curve fits of all splits are solved together (:func:`..curves.batch.fit_subsets`),
each from starting points computed on its own training members, so no held-out member
steers its refit; nested refits inside the hybrid start from the split's own curve. The
results equal refitting the estimators of :mod:`barrierscope.estimators` split by split
(tested), at a fraction of the cost. Energies in kcal/mol.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import special

from ..curves.batch import fit_subsets, interior, lm_solve
from ..curves.intervals import t_quantile
from ..curves.stats import predictive_variance
from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.domain import ApplicabilityDomain
from ..estimators.learners import auto_candidates, inner_mse, minimum_members
from ..estimators.hybrid import correction_learner, out_of_fold_energy
from ..estimators.ridge import GUARD_FLAG
from ..estimators.two_stage import clip_energy, rows
from ..relations import RELATIONS, get_relation
from .splits import Split, held_out_sets

ROUTES = ("two_stage", "hybrid", "direct", "structure_curve", "curve_on_true_energy", "structure_curve_on_true_energy",
          "family_mean")
DESCRIPTOR_ROUTES = ("two_stage", "hybrid", "direct", "structure_curve", "structure_curve_on_true_energy")
STRUCTURE_ROUTES = ("structure_curve", "structure_curve_on_true_energy")


@dataclass
class FoldCurves:
    """One fitted relation per split (all energies kcal/mol)."""

    relations: list            # Relation per split
    theta: list                # parameter vector per split
    cov: list                  # covariance per split
    sigma: np.ndarray          # residual standard deviation per split
    dof: np.ndarray

    def predict(self, k: int, energy, energy_std=None, level: float = 0.90):
        """(mean, std, low, high) of the barrier at ``energy`` from split k's curve."""
        rel, th = self.relations[k], self.theta[k]
        e = np.asarray(energy, dtype=float)
        var = predictive_variance(rel.jacobian(e, th), self.cov[k], self.sigma[k], rel.slope(e, th),
                                  energy_std=None if energy_std is None else np.broadcast_to(energy_std, e.shape))
        mean, std = rel.barrier(e, th), np.sqrt(var)
        q = t_quantile(level, max(int(self.dof[k]), 1))
        return mean, std, mean - q * std, mean + q * std


@dataclass
class OutOfFold:
    """Predictions of the tested members (NaN where a member was not tested), kcal/mol."""

    n: int
    pred: dict[str, np.ndarray] = field(default_factory=dict)
    std: dict[str, np.ndarray] = field(default_factory=dict)
    low: dict[str, np.ndarray] = field(default_factory=dict)
    high: dict[str, np.ndarray] = field(default_factory=dict)
    energy: np.ndarray | None = None
    energy_std: np.ndarray | None = None
    relations: list[str] = field(default_factory=list)
    tested: np.ndarray | None = None
    #: per member, as seen from the split that held it out: descriptor distance to the training
    #: members and whether it is beyond the domain threshold; predicted and true reaction energy
    #: outside the training members' span
    ad_distance: np.ndarray | None = None
    ad_out: np.ndarray | None = None
    energy_pred_outside: np.ndarray | None = None
    energy_true_outside: np.ndarray | None = None
    #: the energy stage's prediction clipped to the span plus margin / its descriptors clipped to
    #: the training box (the guard, see estimators.ridge and estimators.two_stage)
    energy_clipped: np.ndarray | None = None
    off_manifold: np.ndarray | None = None
    #: fits whose hyper-parameter search ended at a bound (Gaussian process), out of ``fits``
    optimizer_capped: int = 0
    fits: int = 0
    #: route → one array per split, aligned with that split's ``test`` (test sets may overlap)
    by_split: dict[str, list] = field(default_factory=dict)
    #: target ("energy_stage", "direct") → the learner that predicted in each split
    learners: dict[str, list] = field(default_factory=dict)
    #: an anchored energy stage: the free learner's predicted reaction energies beside it
    energy_free: np.ndarray | None = None

    def _put(self, route, idx, values):
        """Store ``values`` = (mean, std, low, high) of the members ``idx`` under ``route``."""
        mean = values[0]
        for store, v in zip((self.pred, self.std, self.low, self.high), values):
            store.setdefault(route, np.full(self.n, np.nan))[idx] = v
        self.by_split.setdefault(route, []).append(np.broadcast_to(np.asarray(mean, dtype=float), np.shape(idx)))


def _weights(splits: list[Split], n: int) -> np.ndarray:
    w = np.zeros((len(splits), n))
    for k, s in enumerate(splits):
        w[k, s.train] = 1.0
    return w


#: Elements of the nested refits' weight matrix solved at once (a memory bound; the results
#: do not depend on it: every refit is its own problem).
_NESTED_BLOCK = 2_000_000


def _nested_refits(rel, x, y, trains: list[np.ndarray], *, thetas, random_state: int = 0) -> list[np.ndarray]:
    """For every split k: each training member's parameters from the relation refitted to split
    k's training members without it (without its inner fold above ``LOO_MAX`` members),
    warm-started at split k's own fit θ_k and kept within split k's bounds. Returns, per split,
    an array (train.size, p) aligned with ``trains[k]``. The refits are solved in blocks of
    :data:`_NESTED_BLOCK` weights (each refit is its own problem: the blocks change nothing)."""
    out = [np.empty((t.size, rel.n_params)) for t in trains]
    jobs = [(k, held, rel.bounds(x[t], y[t])) for k, t in enumerate(trains)
            for held in held_out_sets(t.size, random_state)]
    step = max(1, _NESTED_BLOCK // max(1, x.size))
    for s0 in range(0, len(jobs), step):
        batch = jobs[s0:s0 + step]
        w = np.zeros((len(batch), x.size))
        for r, (k, held, _) in enumerate(batch):
            w[r, trains[k]] = 1.0
            w[r, trains[k][held]] = 0.0
        lows, highs = np.array([b[2][0] for b in batch]), np.array([b[2][1] for b in batch])
        starts = interior(np.array([thetas[k] for k, _, _ in batch]), lows, highs)
        theta, _, _ = lm_solve(rel, x, y, w, theta0=starts, lo=lows, hi=highs)
        for r, (k, held, _) in enumerate(batch):
            out[k][held] = theta[r]
    return out


def _choose_relations(x, y, trains: list[np.ndarray]) -> list[str]:
    """Per split: the relation with the lowest inner leave-one-out RMSE on its training members
    (each inner refit warm-started at that split's own fit of the relation)."""
    w = np.zeros((len(trains), x.size))
    for k, t in enumerate(trains):
        w[k, t] = 1.0
    scores = {}
    for name, cls in RELATIONS.items():
        rel = cls()
        if min(t.size for t in trains) < rel.n_params + 2:
            continue
        base = fit_subsets(rel, x, y, w).theta
        nested = _nested_refits(rel, x, y, trains, thetas=base)
        scores[name] = np.array([np.sqrt(np.mean((rel.barrier(x[t][:, None], th)[:, 0] - y[t]) ** 2))
                                 for t, th in zip(trains, nested)])
    names = list(scores)
    table = np.column_stack([scores[k] for k in names])
    return [names[j] for j in np.argmin(np.where(np.isfinite(table), table, np.inf), axis=1)]


def fold_curves(relation: str, energy, barrier, splits: list[Split]) -> FoldCurves:
    """The relation (or, for ``auto``, each split's choice) fitted to every split's training set."""
    x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
    w = _weights(splits, x.size)
    names = _choose_relations(x, y, [s.train for s in splits]) if relation == "auto" else [relation] * len(splits)
    m = len(splits)
    out = FoldCurves([None] * m, [None] * m, [None] * m, np.empty(m), np.empty(m))
    for name in dict.fromkeys(names):
        group = np.array([k for k in range(m) if names[k] == name])
        rel = get_relation(name)
        theta = fit_subsets(rel, x, y, w[group]).theta
        jac = rel.jacobian(x, theta)                                        # (g, n, p)
        r = rel.barrier(x, theta) - y
        dof = w[group].sum(axis=1) - rel.n_params
        s2 = np.einsum("kn,kn->k", w[group], r * r) / np.maximum(dof, 1)
        info = np.einsum("kn,knp,knq->kpq", w[group], jac, jac)
        cov = s2[:, None, None] * np.linalg.pinv(info, rcond=1e-12, hermitian=True)
        for j, k in enumerate(group):
            out.relations[k], out.theta[k], out.cov[k] = rel, theta[j], cov[j]
            out.sigma[k], out.dof[k] = np.sqrt(s2[j]), dof[j]
    return out


def _nested_curve_barriers(curves: FoldCurves, x, y, splits, e_oof) -> list[np.ndarray]:
    """Per split, each training member's barrier from the split's curve refitted without it,
    fed its out-of-fold energy. All nested refits of one relation are solved together."""
    out: list = [None] * len(splits)
    names = [rel.name for rel in curves.relations]
    for name in dict.fromkeys(names):
        group = [k for k in range(len(splits)) if names[k] == name]
        rel = curves.relations[group[0]]
        nested = _nested_refits(rel, x, y, [splits[k].train for k in group], thetas=[curves.theta[k] for k in group])
        for j, k in enumerate(group):
            out[k] = rel.barrier(np.asarray(e_oof[k], dtype=float)[:, None], nested[j])[:, 0]
    return out


def _fold_fits(X, targets, splits, learner, *, random_state, oof: bool = False, designs: dict | None = None,
               warm=None, anchor=None, fixed=()) -> list[dict]:
    """Per split: the learner fitted on its training members' targets (``targets``: one value
    per member, or a list with each split's training targets) — test predictions (``pred``,
    ``sd``), manifold ``excess``, standardised descriptors (``Z``, ``Zt``) and, with ``oof``, the
    training members' out-of-fold predictions. Ridge on equal-size splits is fitted for all
    splits at once (:class:`..estimators.ridge.FoldDesign`, the same numbers); ``designs``
    keeps the descriptor side of such fits for other targets on the same splits; ``warm`` (a
    fitted DescriptorRegressor) starts the other learners' hyper-parameter searches. With
    ``anchor`` (and ``fixed``) every split fits the anchored stage (:mod:`..estimators.anchored`),
    choosing its candidate inside the split; ``free_pred`` then holds the free learner's test
    predictions and ``anchored`` the test members predicted through the anchor."""
    per_split = [targets[s.train] for s in splits] if isinstance(targets, np.ndarray) else list(targets)
    if anchor is not None:
        return _plain_fold_fits(X, per_split, splits, learner, random_state=random_state, oof=oof, warm=warm,
                                anchor=anchor, fixed=fixed)
    if learner == "auto":
        return _auto_fold_fits(X, per_split, splits, random_state=random_state, oof=oof, designs=designs, warm=warm)
    if learner == "ridge" and len({(s.train.size, s.test.size) for s in splits}) == 1:
        design = _design(X, splits, designs)
        r = design.solve(np.array(per_split))
        return [{"pred": r["pred"][k], "sd": r["sd"][k], "excess": r["excess"][k], "Z": design.Z[k],
                 "Zt": design.Zt[k], "oof": per_split[k] - r["loo"][k], "inner_mse": float(r["mse"][k]),
                 "learner": "ridge"} for k in range(len(splits))]
    return _plain_fold_fits(X, per_split, splits, learner, random_state=random_state, oof=oof, warm=warm)


def _plain_fold_fits(X, per_split, splits, learner, *, random_state, oof, warm, anchor=None, fixed=()) -> list[dict]:
    """:func:`_fold_fits` one split at a time (any learner; the anchored stage)."""
    from ..estimators.learners import predict_state

    out = []
    starts = _gp_block_hypers(X, per_split, splits, random_state=random_state, warm=warm) if learner == "gp" \
        else [warm] * len(splits)
    for s, t, start in zip(splits, per_split, starts):
        Xtr, Xte = rows(X, s.train), rows(X, s.test)
        reg = DescriptorRegressor(learner, random_state, effort="refit", anchor=anchor, fixed=fixed).fit(
            Xtr, t, warm_start=start)
        detail = reg.predict_detail(Xte)
        state = reg.state_
        fit = {"pred": detail["mean"], "sd": detail["std"], "excess": detail["excess"], "Z": reg.standardise(Xtr),
               "Zt": detail["Z"], "capped": int(state.get("capped", state.get("free", {}).get("capped", 0))),
               "inner_mse": inner_mse(state), "learner": reg.chosen_learner,
               "anchored": reg.anchored_rows(Xte)}
        if state["kind"] == "anchored":
            fit["free_pred"] = predict_state(state["free"], detail["Z"])[0]
        if oof:
            fit["oof"] = out_of_fold_energy(Xtr, t, learner, random_state, fitted=reg)
        out.append(fit)
    return out


#: Above this many splits a Gaussian process's hyper-parameters are searched once per block of
#: splits (this many blocks), on the members none of the block's splits holds out; each split
#: then fits its GP at its block's hyper-parameters. No held-out member ever informs the
#: hyper-parameters that predict it, and leave-one-out of 100 members runs 10 searches, not 100.
GP_BLOCKS = 10


def _gp_block_hypers(X, per_split, splits, *, random_state, warm) -> list:
    """Each split's fixed GP hyper-parameters (``{"kind": "gp", ..., "fixed": True}``) from its
    block's search, or the warm start itself for each split when there are few splits."""
    if len(splits) <= GP_BLOCKS:
        return [warm] * len(splits)
    out = [None] * len(splits)
    for block in np.array_split(np.arange(len(splits)), GP_BLOCKS):
        held = np.unique(np.concatenate([splits[k].test for k in block]))
        first = splits[block[0]]
        keep = np.isin(first.train, held, invert=True)      # the block's members none of its splits holds out
        if keep.sum() < max(minimum_members("gp"), first.train.size // 2):
            # Overlapping test sets (nested refits) leave too few: each split searches for itself.
            for k in block:
                out[k] = warm
            continue
        reg = DescriptorRegressor("gp", random_state, effort="refit").fit(rows(X, first.train[keep]),
                                                                          per_split[block[0]][keep], warm_start=warm)
        hyper = {k: reg.state_[k] for k in ("constant", "length_scale", "noise")}
        for k in block:
            out[k] = {"kind": "gp", **hyper, "fixed": True, "capped": int(reg.state_.get("capped", 0))}
    return out


def _auto_fold_fits(X, per_split, splits, *, random_state, oof, designs, warm) -> list[dict]:
    """``auto`` in every split: each candidate learner fitted on the split's training members,
    the one with the lower inner (exact leave-one-out) error predicting the split's test
    members — the choice made inside the split, as :class:`DescriptorRegressor` ("auto") makes it."""
    hyper = None if warm is None else (getattr(warm, "state_", warm) or {}).get("auto", {}).get("gp")
    # The family's size decides the candidates, so every split chooses from what the model did.
    names = auto_candidates(np.shape(X)[0])
    fits = {name: _fold_fits(X, per_split, splits, name, random_state=random_state, oof=oof, designs=designs,
                             warm={"kind": "gp", **hyper} if (name == "gp" and hyper) else None)
            for name in names}
    return [min((fits[name][k] for name in names), key=lambda f: f["inner_mse"]) for k in range(len(splits))]


def _family_fit(X, target, learner: str, random_state: int, *, designs: dict | None, anchor=None, fixed=()):
    """The learner fitted on every member (the splits' warm start), kept in ``designs`` so the
    regimes of one validation, which share X and the targets, fit it once."""
    key = ("family", id(X), learner, random_state, np.asarray(target, dtype=float).tobytes(), anchor, tuple(fixed))
    if designs is not None and key in designs:
        return designs[key]
    reg = DescriptorRegressor(learner, random_state, anchor=anchor, fixed=fixed).fit(X, target)
    if designs is not None:
        designs[key] = reg
    return reg


def _design(X, splits, designs):
    from ..estimators.ridge import FoldDesign

    train, test = np.array([s.train for s in splits]), np.array([s.test for s in splits])
    key = (id(X), train.tobytes(), test.tobytes())
    if designs is None or key not in designs:
        A = X.to_numpy(dtype=float) if hasattr(X, "to_numpy") else np.asarray(X, dtype=float)
        design = FoldDesign(A, train, test)
        if designs is None:
            return design
        designs[key] = design
    return designs[key]


def out_of_fold(X, energy, barrier, splits: list[Split], *, learner: str = "ridge", relation: str = "asymptotic",
                level: float = 0.90, random_state: int = 0, routes=ROUTES, domain: bool = True,
                designs: dict | None = None, anchor=None, fixed=()) -> OutOfFold:
    """Out-of-fold predictions and ``level`` intervals of every route in ``routes``; with
    ``domain``, each held-out member's applicability-domain distance as its split sees it;
    ``designs`` (a dict) shares the ridge folds' descriptor side between calls on the same X;
    ``anchor``/``fixed``: the energy stage and the black box anchored on that column of X (a
    computed reaction energy, :mod:`..estimators.anchored`), both alike."""
    x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
    n = x.size
    has_x = X is not None and np.shape(X)[1] > 0
    routes = [r for r in routes if has_x or r not in DESCRIPTOR_ROUTES]
    out = OutOfFold(n=n, tested=np.zeros(n, dtype=bool), energy_true_outside=np.zeros(n, dtype=bool))
    curves = fold_curves(relation, x, y, splits)
    out.relations = [rel.name for rel in curves.relations]
    for k, s in enumerate(splits):
        out.tested[s.test] = True
        span = (x[s.train].min(), x[s.train].max())
        out.energy_true_outside[s.test] = (x[s.test] < span[0]) | (x[s.test] > span[1])
        if "curve_on_true_energy" in routes:
            out._put("curve_on_true_energy", s.test, curves.predict(k, x[s.test], level=level))
        if "family_mean" in routes:
            yt = y[s.train]
            sd = float(np.std(yt, ddof=1)) * np.sqrt(1.0 + 1.0 / yt.size) if yt.size > 1 else np.nan
            q = t_quantile(level, max(yt.size - 1, 1))
            out._put("family_mean", s.test, (yt.mean(), sd, yt.mean() - q * sd, yt.mean() + q * sd))
    if has_x:
        e_split = _descriptor_routes(out, X, x, y, splits=splits, curves=curves, learner=learner,
                                     random_state=random_state, level=level, routes=routes, domain=domain,
                                     designs={} if designs is None else designs, anchor=anchor, fixed=fixed)
        if any(r in routes for r in STRUCTURE_ROUTES):
            from .structure_routes import structure_routes

            structure_routes(out, X, x, y, splits=splits, curves=curves, e_split=e_split, level=level, routes=routes)
    return out


def _descriptor_routes(out, X, x, y, *, splits, curves, learner, random_state, level, routes, domain, designs,
                       anchor=None, fixed=()) -> list:
    """The descriptor routes of every split into ``out``; returns each split's (predicted
    reaction energies, their σ) of its test members (kcal/mol)."""
    n = x.size
    z = float(special.ndtri(0.5 + level / 2))
    for name in ("energy", "energy_std", "ad_distance"):
        setattr(out, name, np.full(n, np.nan))
    for name in ("ad_out", "energy_pred_outside", "energy_clipped", "off_manifold"):
        setattr(out, name, np.zeros(n, dtype=bool))
    # Learners with a hyper-parameter search start every split's search from the family's own
    # optimum (a warm start, as for the curve): a bounded cost, and no split sees another's members.
    warm_e = warm_d = None
    if learner != "ridge":
        warm_e = _family_fit(X, x, learner, random_state, designs=designs, anchor=anchor, fixed=fixed)
        warm_d = (_family_fit(X, y, learner, random_state, designs=designs, anchor=anchor, fixed=fixed)
                  if "direct" in routes else None)
    a = dict(anchor=anchor, fixed=fixed)
    energy_fits = _fold_fits(X, x, splits, learner, random_state=random_state, oof="hybrid" in routes, designs=designs,
                             warm=warm_e, **a)
    direct_fits = (_fold_fits(X, y, splits, learner, random_state=random_state, designs=designs, warm=warm_d, **a)
                   if "direct" in routes else None)
    if anchor is not None:
        out.energy_free = np.full(n, np.nan)
    e_split = []   # each split's own energies: test sets may overlap (nested jackknife+)
    for k, s in enumerate(splits):
        f = energy_fits[k]
        span = (x[s.train].min(), x[s.train].max())
        e_hat, clipped = clip_energy(f["pred"], *span, exempt=f.get("anchored"))
        if "free_pred" in f:
            out.energy_free[s.test] = clip_energy(f["free_pred"], *span)[0]
        e_split.append(e_hat)
        out.energy[s.test], out.energy_std[s.test] = e_hat, f["sd"]
        out.energy_pred_outside[s.test] = (f["pred"] < span[0]) | (f["pred"] > span[1])
        out.energy_clipped[s.test], out.off_manifold[s.test] = clipped, f["excess"] > GUARD_FLAG
        if domain:
            ad = ApplicabilityDomain().fit(f["Z"], x[s.train])
            out.ad_distance[s.test] = ad.distance(f["Zt"])
            out.ad_out[s.test] = out.ad_distance[s.test] > ad.threshold_
        if "two_stage" in routes:
            out._put("two_stage", s.test, curves.predict(k, e_hat, f["sd"], level))
        if direct_fits is not None:
            d, ds = direct_fits[k]["pred"], direct_fits[k]["sd"]
            out._put("direct", s.test, (d, ds, d - z * ds, d + z * ds))
    if "hybrid" in routes:
        # Each split's correction learns that split's out-of-fold residuals of the chain.
        nested = _nested_curve_barriers(curves, x, y, splits, e_oof=[f["oof"] for f in energy_fits])
        corrections = _fold_fits(X, [y[s.train] - nested[k] for k, s in enumerate(splits)], splits,
                                 correction_learner(learner), random_state=random_state, designs=designs,
                                 warm=None if learner == "auto" else warm_e)
    else:
        corrections = []
    out.learners = {"energy_stage": [f["learner"] for f in energy_fits]}
    if direct_fits is not None:
        out.learners["direct"] = [f["learner"] for f in direct_fits]
    out.optimizer_capped = sum(f.get("capped", 0) for f in [*energy_fits, *(direct_fits or []), *corrections])
    out.fits = len(energy_fits) + len(direct_fits or []) + len(corrections)
    if "hybrid" in routes:
        for k, s in enumerate(splits):
            base = curves.predict(k, e_split[k], energy_fits[k]["sd"], level)[0]
            h, cs = base + corrections[k]["pred"], corrections[k]["sd"]
            out._put("hybrid", s.test, (h, cs, h - z * cs, h + z * cs))
    return [(e_split[k], energy_fits[k]["sd"]) for k in range(len(splits))]
