"""Time of the full relation comparison (five relations, exact leave-one-out) at n = 30, 300, 3000.

Baseline, measured in the same run: the same exact leave-one-out done the plain way, one
``scipy.optimize.least_squares`` refit per left-out member (warm-started, like ours).
Target (issue 2): the comparison at n = 300 takes well under a second.
Data: an invented asymptotic family (floor 5, midpoint −8, width 6 kcal/mol, noise 1.5).

    python benchmarks/bench_curve_comparison.py [--sizes 30,300,3000] [--repeats 3]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from barrierscope.curves.compare import compare_relations
from barrierscope.curves.fit import fit_relation
from barrierscope.relations import RELATIONS, get_relation


def invented(n: int, seed: int = 0):
    rng = np.random.default_rng(seed)
    x = rng.uniform(-40, 25, n)
    y = get_relation("asymptotic").barrier(x, np.array([5.0, -8.0, 6.0])) + rng.normal(0, 1.5, n)
    return x, y


def plain_loo(x, y) -> None:
    for name in RELATIONS:
        rel = get_relation(name)
        full = fit_relation(rel, x, y)
        for i in range(x.size):
            keep = np.arange(x.size) != i
            fit_relation(rel, x[keep], y[keep], x0=full.params)


def best_of(func, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        func()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="30,300,3000")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--baseline-max", type=int, default=300, help="largest n for the plain baseline")
    args = ap.parse_args()
    print(f"{'n':>6} {'comparison s':>13} {'plain LOO s':>12} {'speed-up':>9}")
    for n in (int(s) for s in args.sizes.split(",")):
        x, y = invented(n)
        ours = best_of(lambda: compare_relations(x, y), args.repeats)
        if n <= args.baseline_max:
            base = best_of(lambda: plain_loo(x, y), 1)
            print(f"{n:>6} {ours:>13.3f} {base:>12.3f} {base / ours:>8.1f}x")
        else:
            print(f"{n:>6} {ours:>13.3f} {'(skipped)':>12} {'':>9}")
    print("target: n = 300 well under 1 s")


if __name__ == "__main__":
    main()
