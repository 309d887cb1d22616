"""The structure-curve routes of every split (:mod:`..curves.structure`), all splits solved at once.

``structure_curve`` (the energy stage, then the curve whose intrinsic barrier moves with the
descriptors) and ``structure_curve_on_true_energy`` (that curve fed the member's own reaction
energy). Each split's curve is fitted on its training members only — its descriptor basis, its
penalty and its parameters — by one stacked solve per relation and penalty grid
(:func:`..curves.structure_solve.solve_path`). Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from ..curves.structure import structure_relation
from ..relations import get_relation

#: Above this many splits the structure curve's penalty is chosen once per block of splits (on
#: members none of the block holds out), each split then fitting at its block's penalty.
STRUCTURE_BLOCKS = 10


def structure_fits(X, x, y, trains: list[np.ndarray], *, names: list[str], thetas: list, grids: list[tuple]):
    """Structure curves of many training sets at once (:func:`..curves.structure_solve.solve_path`,
    one stacked problem per relation and penalty grid): per set a fitted StructureCurve (or
    None when its solve failed) and its basis's view of every member (n, q). ``names``: each
    set's relation; ``thetas``: its start (the plain curve's parameters, or None); ``grids``:
    its penalties. The same numbers as fitting :class:`..curves.structure.StructureCurve` set
    by set (tested)."""
    from ..curves.fit import fit_relation
    from ..curves.structure import MOVING, StructureCurve, basis, project, select
    from ..curves.structure_solve import solve_path

    A, cols = select(X)
    n = x.size
    fits: list = [None] * len(trains)
    views: list = [None] * len(trains)
    groups: dict = {}
    for k, (name, grid) in enumerate(zip(names, grids)):
        groups.setdefault((name, tuple(grid)), []).append(k)
    for (name, grid), ks in groups.items():
        rel = get_relation(name)
        p, moving = rel.n_params, [rel.param_names.index(mv) for mv in MOVING[name]]
        bases = [basis(A[trains[k]], cols, trains[k].size) for k in ks]
        Zs = [project(pre, comps, A) for pre, comps in bases]
        q = max(z.shape[1] for z in Zs)
        Z = np.zeros((len(ks), n, q))
        W = np.zeros((len(ks), n))
        lo, hi = np.empty((len(ks), p)), np.empty((len(ks), p))
        u0 = np.zeros((len(ks), p + len(moving) * q))
        for j, k in enumerate(ks):
            t = trains[k]
            Z[j, :, :Zs[j].shape[1]] = Zs[j]        # columns a set lacks stay zero: they add nothing
            W[j, t] = 1.0
            lo[j], hi[j] = rel.bounds(x[t], y[t])
            start = thetas[k] if thetas[k] is not None else fit_relation(rel, x[t], y[t]).params
            u0[j, :p] = np.clip(np.asarray(start, dtype=float), lo[j], hi[j])
        try:
            sol = solve_path(rel, x, y, W, Z=Z, u0=u0, grid=np.tile(sorted(grid, reverse=True), (len(ks), 1)), lo=lo,
                             hi=hi, moving=moving)
        except np.linalg.LinAlgError:
            continue
        for j, k in enumerate(ks):
            t, qj = trains[k], Zs[j].shape[1]
            keep = list(range(p)) + [p + a * q + c for a in range(len(moving)) for c in range(qj)]

            def one(d):
                return {"u": d["u"][j][keep], "lam": d["lam"][j], "score": d["score"][j], "h": d["h"][j][t],
                        "r": d["r"][j][t], "Ainv": d["Ainv"][j][np.ix_(keep, keep)],
                        "JtJ": d["JtJ"][j][np.ix_(keep, keep)]}

            sc = StructureCurve(name, penalties=grid)
            fits[k] = sc._set(rel, bases[j], {**one(sol), "weak": one(sol["weak"])}, bounds=(lo[j], hi[j]), n=t.size,
                              Z=Zs[j][t])
            views[k] = Zs[j]
    return fits, views


def _structure_penalties(X, x, y, splits, *, curves) -> list:
    """Each split's penalty tuple: all of them (chosen inside the split) for few splits; with
    many, the penalty a block of splits' common training members chose."""
    from ..curves.structure import PENALTIES

    if len(splits) <= STRUCTURE_BLOCKS:
        return [PENALTIES] * len(splits)
    out = [PENALTIES] * len(splits)
    blocks, trains = [], []
    for block in np.array_split(np.arange(len(splits)), STRUCTURE_BLOCKS):
        held = np.unique(np.concatenate([splits[k].test for k in block]))
        train = splits[block[0]].train
        keep = train[np.isin(train, held, invert=True)]
        if keep.size >= max(8, train.size // 2):
            blocks.append(block)
            trains.append(keep)
    fits, _ = structure_fits(X, x, y, trains, names=[structure_relation(curves.relations[b[0]]) for b in blocks],
                             thetas=[curves.theta[b[0]] if structure_relation(curves.relations[b[0]]) ==
                                     curves.relations[b[0]].name else None for b in blocks],
                             grids=[PENALTIES] * len(blocks))
    for block, fit in zip(blocks, fits):
        if fit is not None:
            for k in block:
                out[k] = (fit.penalty_,)
    return out


def structure_routes(out, X, x, y, *, splits, curves, e_split, level, routes) -> None:
    """Per split: the structure curve fitted on the training members (their true reaction
    energies), predicting the test members at their predicted (``structure_curve``) and true
    (``structure_curve_on_true_energy``) reaction energies. A split whose fit fails leaves its
    members without these two predictions (NaN), and says nothing false."""
    names = [structure_relation(rel) for rel in curves.relations]
    thetas = [curves.theta[k] if names[k] == curves.relations[k].name else None for k in range(len(splits))]
    fits, views = structure_fits(X, x, y, [s.train for s in splits], names=names, thetas=thetas,
                                 grids=_structure_penalties(X, x, y, splits, curves=curves))
    for k, s in enumerate(splits):
        sc = fits[k]
        if sc is None:
            continue
        Zt = views[k][s.test]
        q = sc.interval_quantile(level)
        if "structure_curve_on_true_energy" in routes:
            b, sd = sc.predict(None, x[s.test], Z=Zt), sc.predict_std(None, x[s.test], Z=Zt)
            out._put("structure_curve_on_true_energy", s.test, (b, sd, b - q * sd, b + q * sd))
        if "structure_curve" in routes:
            e_hat, e_sd = e_split[k]
            b, sd = sc.predict(None, e_hat, Z=Zt), sc.predict_std(None, e_hat, e_sd, Z=Zt)
            out._put("structure_curve", s.test, (b, sd, b - q * sd, b + q * sd))
