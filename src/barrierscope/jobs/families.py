"""Several families at once: the joint curve, the evidence for sharing, per-family
parameters with intervals, and validation by member and by family (kcal/mol).

Validation:
- ``loo`` — each member held out in turn, the joint fit refitted without it (warm-started at
  the full fit) and the member predicted from its family's curve; beside it each family's own
  curve (``separate``), one curve for every family (``pooled``) and the family's mean barrier;
- ``leave_family_out`` — each family held out whole, the rest refitted jointly; the held-out
  family gets the shared parameters and, for its own ones, the other families' average.
  A new family's own floor and midpoint are not predictable from the others (they are what
  makes it a different family): this regime measures how far a family strays from the
  typical one, and says so. Needs at least three families.
"""

from __future__ import annotations


import numpy as np

from ..curves.batch import refit_weighted
from ..curves.fit import fit_relation
from ..curves.joint_batch import joint_lm
from ..errors import FitRefused, InputError
from ..curves.intervals import profile_intervals
from ..curves.joint import fit_joint, separate_fits, sharing_test
from ..curves.joint_intervals import derived_with_intervals, joint_profile_intervals
from ..curves.records import FamilyEntry, SeparateFit
from ..relations import get_relation
from ..validation.metrics import judge, metrics, paired_comparison
from .records import FamilyRegime, JointRecord

SHARE_CHOICES = "none, or a comma list of parameter names (floor, midpoint, width for the asymptotic curve)"


def parse_share(text: str | None, relation: str = "asymptotic") -> tuple[str, ...]:
    """``--share``: 'none' or a comma list of the relation's parameter names."""
    names = get_relation(relation).param_names
    if text is None:
        return ("width",) if "width" in names else ()
    items = tuple(t.strip() for t in str(text).split(",") if t.strip())
    if items in ((), ("none",)):
        return ()
    bad = [t for t in items if t not in names]
    if bad:
        raise InputError(f"--share {text}: {', '.join(bad)} is not a parameter of the {relation} relation "
                         f"({', '.join(names)}); choose {SHARE_CHOICES}")
    return tuple(n for n in names if n in items)


def family_labels(df, column: str, source: str) -> tuple[object, list]:
    """(the family column as text, problems of rows without a family) — each family is one
    label of ``column``; an empty cell is a bad row."""
    from ..io.pairs import RowProblem
    from ..io.tables import ROW, require_columns, row_ids

    require_columns(df, [column], source)
    labels = df[column].astype(str).str.strip()
    empty = df[column].isna().to_numpy() | (labels == "").to_numpy()
    ids = row_ids(df, None, source)
    problems = [RowProblem(int(df[ROW].iloc[i]), ids.iloc[i], f"no family in column {column!r}")
                for i in np.flatnonzero(empty)]
    return labels.where(~empty, ""), problems


def one_hot(labels, names):
    """Family indicator columns ``family=<name>`` (1.0 or 0.0): with shared descriptor weights,
    each family gets its own offset in the energy stage and the black box. A DataFrame."""
    import pandas as pd

    labels = np.asarray([str(v) for v in labels], dtype=object)
    return pd.DataFrame({f"family={n}": (labels == n).astype(float) for n in names})


def family_codes(labels) -> tuple[np.ndarray, list[str]]:
    """(code per member, family names in code order: sorted)."""
    labels = np.asarray([str(v) for v in labels], dtype=object)
    names = sorted(set(labels))
    index = {n: k for k, n in enumerate(names)}
    return np.array([index[v] for v in labels], dtype=int), names


def _family_entry(fit, k, prof, sep, *, x, y, fam, level) -> FamilyEntry:
    rel, layout = fit.relation, fit.layout
    sel = fam == k
    centre = float(0.5 * (x[sel].min() + x[sel].max()))
    derived, derived_ci = derived_with_intervals(fit, k, centre, level)
    params = rel.as_dict(fit.theta[k])
    separate = None
    if sep is not None:
        ci = profile_intervals(sep, x[sel], y[sel], level)
        separate = SeparateFit(params=sep.params_dict(), ci95={n: [c.low, c.high] for n, c in ci.items()},
                               ci95_open={n: [c.low_open, c.high_open] for n, c in ci.items()},
                               at_bound=list(sep.at_bound))
    return FamilyEntry(
        n=int(sel.sum()), params=params,
        ci95={n: [prof[layout.index(k, j)].low, prof[layout.index(k, j)].high] for j, n in enumerate(params)},
        ci95_open={n: [prof[layout.index(k, j)].low_open, prof[layout.index(k, j)].high_open]
                   for j, n in enumerate(params)},
        derived=derived, derived_ci95=derived_ci, centre=centre,
        energy_range=[float(x[sel].min()), float(x[sel].max())], separate=separate)


def joint_record(energy, barrier, labels, relation: str = "asymptotic", *, share=("width",), level: float = 0.95,
                 validate: bool = True, energy_pred=None, **context):
    """(JointRecord, JointFit, family codes, family names). The record: ``families`` {name:
    FamilyEntry}, ``shared``, ``sharing_test`` and ``validation``; with ``energy_pred`` (each
    member's leave-one-out predicted reaction energy) the member validation also scores the
    two-stage route through the joint curves; ``context``: the record's other fields (units,
    energy kind, family column, warnings, skipped rows)."""
    x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
    fam, names = family_codes(labels)
    if len(names) < 2:
        raise FitRefused(f"--family: one family only ({names[0] if names else 'none'}); a joint fit needs two or more")
    rel = get_relation(relation)
    separate = separate_fits(rel, x, y, fam, n_families=len(names))
    fit = fit_joint(rel, x, y, fam, n_families=len(names), shared=share, separate=separate)
    prof = joint_profile_intervals(fit, x, y, fam, level=level)
    validation = ({"loo": member_loo(fit, x, y, fam, separate=separate, energy_pred=energy_pred),
                   "leave_family_out": leave_family_out(fit, x, y, fam, names=names)} if validate else {})
    record = JointRecord(
        relation=rel.name, n=int(x.size), shared=list(fit.layout.shared), sharing_test=sharing_test(fit, separate),
        sigma=fit.sigma, at_bound=list(fit.at_bound),
        families={n: _family_entry(fit, k, prof, separate[k], x=x, y=y, fam=fam, level=level) for k, n in enumerate(names)},
        too_small_alone=[names[k] for k, s in enumerate(separate) if s is None], validation=validation, **context)
    return record, fit, fam, names


def _scores(y, preds: dict, base: str = "joint", note: str = "") -> FamilyRegime:
    routes = {r: metrics(y, p) for r, p in preds.items()}
    ok = np.all([np.isfinite(p) for p in preds.values()], axis=0)
    err = {r: p[ok] - y[ok] for r, p in preds.items()}
    mae = {r: float(np.mean(np.abs(e))) if e.size else float("nan") for r, e in err.items()}
    # Judged as the regimes' routes are: clear at 95 % and by the practical margin.
    pairs = {f"{base}_vs_{r}": judge(paired_comparison(err[base], err[r]), mae[base], mae[r])
             for r in preds if r != base and ok.sum() >= 3}
    return FamilyRegime(n_test=int(ok.sum()), routes=routes, pairs=pairs, note=note,
                        joint_beats=[k.split("_vs_")[1] for k, c in pairs.items() if c.beats])


def _rows_without(n: int, held: list[np.ndarray], base=None) -> np.ndarray:
    """Weights (len(held), n): ``base`` (all ones by default) with each row's ``held`` members zeroed."""
    w = np.tile(np.ones(n) if base is None else np.asarray(base, dtype=float), (len(held), 1))
    for r, h in enumerate(held):
        w[r, h] = 0.0
    return w


def member_loo(fit, x, y, fam, *, separate, energy_pred=None) -> FamilyRegime:
    """Leave-one-out by member: joint, separate, pooled and family-mean predictions (and the
    two-stage route through the joint curves, from ``energy_pred``). Every refit is warm-started
    at the full fit; the joint refits of all members are solved together, family blocks and
    all (:func:`..curves.joint_batch.joint_lm`)."""
    n, own, rel, layout = x.size, len(fit.layout.own_idx), fit.relation, fit.layout
    counts = np.bincount(fam, minlength=layout.n_families)
    routes = ("joint", "separate", "pooled", "family_mean") + (("two_stage",) if energy_pred is not None else ())
    preds = {r: np.full(n, np.nan) for r in routes}
    members = [np.array([i]) for i in range(n)]
    lo, hi = fit.bounds
    U, _, _ = joint_lm(rel, layout, x, y, fam, weights=_rows_without(n, members), u0=fit.u, lo=lo, hi=hi)
    theta = np.array([layout.unpack(U[i])[fam[i]] for i in range(n)])           # each member's own family
    ok = counts[fam] - 1 >= own + 1
    preds["joint"][ok] = rel.barrier(x[ok][:, None], theta[ok])[:, 0]
    if energy_pred is not None:
        preds["two_stage"][ok] = rel.barrier(np.asarray(energy_pred, dtype=float)[ok][:, None], theta[ok])[:, 0]
    pooled = fit_relation(rel, x, y)
    pt = refit_weighted(rel, x, y, _rows_without(n, members), theta0=pooled.params, bounds=rel.bounds(x, y))
    preds["pooled"] = rel.barrier(x[:, None], pt)[:, 0]
    for k in range(layout.n_families):
        idx = np.flatnonzero(fam == k)
        if idx.size > 1:
            preds["family_mean"][idx] = (y[idx].sum() - y[idx]) / (idx.size - 1)
        if separate[k] is None or idx.size - 1 < rel.n_params + 1:
            continue
        home = np.zeros(n)
        home[idx] = 1.0
        th = refit_weighted(rel, x, y, _rows_without(n, [np.array([i]) for i in idx], home),
                            theta0=separate[k].params, bounds=rel.bounds(x[idx], y[idx]))
        preds["separate"][idx] = rel.barrier(x[idx][:, None], th)[:, 0]
    return _scores(y, preds)


def leave_family_out(fit, x, y, fam, *, names) -> FamilyRegime:
    """Each family predicted from the others (see the module docstring); the K refits without
    one family each are solved together, warm-started at the full fit."""
    K, rel, layout = fit.layout.n_families, fit.relation, fit.layout
    if K < 3:
        return FamilyRegime(skipped=f"{K} families: holding one out leaves one, so nothing is shared (needs 3 or more)")
    preds = {r: np.full(x.size, np.nan) for r in ("joint", "pooled", "family_mean")}
    held = [np.flatnonzero(fam == k) for k in range(K)]
    lo, hi = fit.bounds
    U, _, _ = joint_lm(rel, layout, x, y, fam, weights=_rows_without(x.size, held), u0=fit.u, lo=lo, hi=hi)
    pooled = fit_relation(rel, x, y)
    pt = refit_weighted(rel, x, y, _rows_without(x.size, held), theta0=pooled.params, bounds=rel.bounds(x, y))
    for k, test in enumerate(held):
        typical = np.delete(layout.unpack(U[k]), k, axis=0).mean(axis=0)   # shared ones are the same in every row
        preds["joint"][test] = rel.barrier(x[test], typical)
        preds["pooled"][test] = rel.barrier(x[test], pt[k])
        preds["family_mean"][test] = np.delete(y, test).mean()
    return _scores(y, preds, note="a held-out family takes the shared parameters and the other families' average for "
                                  "its own; its own floor and midpoint are not predictable from the others: compute a "
                                  "few of its members")
