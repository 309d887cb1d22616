"""How often jackknife+ intervals hold in each regime, measured honestly (nested).

For every split of a regime the intervals of its held-out members are built from the split's
training members alone, exactly as :class:`..estimators.jackknife.JackknifePlus` would build
them from a family of that size: each training member (or fold, CV+) is held out in turn
from the training set, the route refitted, and the held-out residuals and the refitted
models' predictions of the test members give the interval. Leave-one-out therefore needs
leave-two-out refits, n(n − 1) of them for a jackknife+ family: batched like every other
split (:func:`.routes.out_of_fold`). Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from ..estimators.jackknife import conformal_bounds, folds
from .records import JackknifeCoverage
from .routes import out_of_fold
from .splits import Split


def _inner_splits(splits: list[Split], random_state: int) -> list[tuple[int, np.ndarray, Split]]:
    """(outer split, inner held-out members, inner split) with the inner test = held + outer test."""
    out = []
    for k, s in enumerate(splits):
        for f in folds(s.train.size, random_state):
            held = s.train[f]
            out.append((k, held, Split(np.setdiff1d(s.train, held), np.concatenate([held, s.test]))))
    return out


def _predictions(X, energy, barrier, inner, *, routes, kw) -> dict[str, list]:
    """Each route's predictions for every inner split (aligned with the split's test)."""
    groups: dict = {}
    for j, (_, _, sp) in enumerate(inner):
        groups.setdefault((sp.train.size, sp.test.size), []).append(j)
    preds = {r: [None] * len(inner) for r in routes}
    for js in groups.values():
        oof = out_of_fold(X, energy, barrier, [inner[j][2] for j in js], routes=routes, domain=False, **kw)
        for r in routes:
            for pos, j in enumerate(js):
                preds[r][j] = oof.by_split[r][pos]
    return preds


def jackknife_coverage(X, energy, barrier, splits: list[Split], *, routes, level: float = 0.90,
                       random_state: int = 0, **kw) -> dict[str, JackknifeCoverage]:
    """Per route: {``coverage``: share of the held-out members inside their jackknife+ interval,
    ``width``: the median finite interval width (kcal/mol), ``n_test``}."""
    barrier = np.asarray(barrier, dtype=float)
    inner = _inner_splits(splits, random_state)
    preds = _predictions(X, energy, barrier, inner, routes=tuple(routes), kw=dict(kw, random_state=random_state))
    out = {}
    for r in routes:
        inside, widths = [], []
        for k, s in enumerate(splits):
            mu, resid = [], []
            for j in (j for j in range(len(inner)) if inner[j][0] == k):
                held, p = inner[j][1], preds[r][j]
                resid.append(np.abs(barrier[held] - p[:held.size]))
                mu += [p[held.size:]] * held.size
            lo, hi = conformal_bounds(np.column_stack(mu), np.concatenate(resid), level)
            y = barrier[s.test]
            inside.append((y >= lo) & (y <= hi))
            widths.append(hi - lo)
        inside_all, w = np.concatenate(inside), np.concatenate(widths)
        out[r] = JackknifeCoverage(coverage=float(inside_all.mean()), n_test=int(inside_all.size),
                                   width=float(np.median(w[np.isfinite(w)])) if np.isfinite(w).any() else None)
    return out


def coverage_by_regime(X, energy, barrier, routes, *, opts) -> dict[str, dict]:
    """:func:`jackknife_coverage` in every regime that ran (``opts``: the validation options)."""
    from .run import standardised
    from .splits import regimes

    has_x = X is not None and np.shape(X)[1] > 0
    plan = regimes(np.asarray(energy, dtype=float), standardised(X) if has_x else None, opts.random_state,
                   opts.regimes)
    return {name: jackknife_coverage(X if has_x else None, energy, barrier, regime.splits, routes=routes, level=opts.level,
                                     random_state=opts.random_state, learner=opts.learner, relation=opts.relation,
                                     anchor=opts.anchor if has_x else None, fixed=opts.fixed)
            for name, regime in plan.items() if not regime.skipped}


def off_nominal(coverage: float, n: int, level: float) -> bool:
    """Is an observed coverage outside the binomial 95 % range around the nominal level?
    (n held-out members; common practice: nominal ± 1.96·√(level(1 − level)/n).)"""
    return n >= 10 and abs(coverage - level) > 1.96 * np.sqrt(level * (1.0 - level) / n)
