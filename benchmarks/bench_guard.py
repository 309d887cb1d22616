"""How wide the energy stage's guard should be: leave-one-out of the ridge energy stage with
the principal-component scores clipped at several margins (no clipping as the baseline).

Families (INVENTED, for this measurement only):
- ``broken pair``: three collinear size descriptors whose small differences carry part of
  the energy (weak penalty, large coefficient along a barely spanned direction), one member
  breaking the collinearity — the mechanism of a blow-up;
- ``benign``: independent descriptors, energy linear in a few of them (honest extrapolation
  along spanned directions must not be clipped away).
With the open cycloaddition set present (``../shared/datasets``), its dipolarophile families
(2d tier, reaction energy from descriptors) are measured as well: real families.

Prints, per margin, the leave-one-out MAE and largest error as ratios to no clipping: the
median over the families and the worst family (below 1: the guard helps).

    python benchmarks/bench_guard.py [--families 40]
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np

from barrierscope.estimators import ridge

MARGINS = (np.inf, 4.0, 2.0, 1.0, 0.5, 0.25)


def broken_pair(seed: int, n: int = 24) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    size, delta = rng.normal(size=n), rng.normal(0, 0.05, n)
    X = np.column_stack([size, size + delta, size + rng.normal(0, 0.05, n), rng.normal(size=(n, 3))])
    energy = -8.0 + 6.0 * X[:, 3] + 2.0 * size + 30.0 * delta + rng.normal(0, 0.5, n)
    X[0, 1] = X[0, 0] - 2.0          # one member: large, yet light
    return X, energy


def benign(seed: int, n: int = 24) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(1000 + seed)
    X = rng.normal(size=(n, 8))
    return X, X[:, :3] @ np.array([8.0, -5.0, 3.0]) - 6.0 + rng.normal(0, 1.0, n)


def cycloaddition_families(limit: int):
    from barrierscope.descriptors.tiers import DescriptorEngine
    from barrierscope.descriptors.featurize import featurize
    from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
    from barrierscope.io.tables import ROW
    from barrierscope.structures.spec import make_spec

    try:
        path = cycloaddition_path(Path(__file__).resolve().parents[1])
    except FileNotFoundError:
        return []
    df = load_cycloaddition(path).drop_duplicates("product")
    out = []
    for _, sub in df.groupby("dipolarophile"):
        if len(sub) < 20 or len(out) >= limit:
            continue
        sub = sub.head(50).reset_index(drop=True)
        sub[ROW] = np.arange(1, len(sub) + 1)
        block = featurize(sub, make_spec(molecule="product"), DescriptorEngine(("2d",)))
        X = block.X.to_numpy(dtype=float)[block.ok]
        out.append((X, sub["G_r"].to_numpy(dtype=float)[block.ok]))
    return out


def loo_errors(X: np.ndarray, y: np.ndarray) -> np.ndarray:
    n = len(y)
    idx = np.arange(n)
    train = np.array([np.delete(idx, i) for i in idx])
    pred = ridge.fit_folds(X, y, train, idx[:, None])["pred"][:, 0]
    return pred - y


def measure(families) -> dict[float, np.ndarray]:
    """Margin → [median MAE ratio, median largest-error ratio, worst MAE ratio, worst
    largest-error ratio] against no clipping, over the families."""
    base = None
    out = {}
    for m in MARGINS:
        ridge.GUARD_MARGIN = m
        errs = [np.abs(loo_errors(X, y)) for X, y in families]
        stats = np.array([[e.mean(), e.max()] for e in errs])
        if base is None:
            base = stats
        r = stats / base
        out[m] = np.concatenate([np.median(r, axis=0), r.max(axis=0)])
    ridge.GUARD_MARGIN = 2.0
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--families", type=int, default=40)
    args = ap.parse_args()
    sets = {"broken pair (invented)": [broken_pair(s) for s in range(args.families)],
            "benign (invented)": [benign(s) for s in range(args.families)]}
    real = cycloaddition_families(args.families)
    if real:
        sets[f"cycloaddition, {len(real)} families (2d)"] = real
    print(f"{'families':<34}" + "".join(f"{'margin ' + ('none' if not np.isfinite(m) else f'{m:g}'):>14}"
                                        for m in MARGINS))
    for name, fams in sets.items():
        res = measure(fams)
        print(name)
        for j, what in enumerate(("MAE, median", "largest error, median", "MAE, worst family",
                                  "largest error, worst family")):
            print(f"{'  ' + what:<34}" + "".join(f"{res[m][j]:>14.3f}" for m in MARGINS))
    print("\nratios to no clipping over the families (below 1: the guard helps; above 1: it clips honest "
          f"extrapolation); the shipped margin is {ridge.GUARD_MARGIN:g}")


if __name__ == "__main__":
    main()
