"""Leave-one-out validation time with the default learner (ridge) for n = 25, 100, 400.

Everything inside the loop (scaling, ridge penalty by closed-form LOO, the curve fit, the
hybrid's out-of-fold correction, the direct baseline). Baseline, measured in the same run:
the same validation with scikit-learn's RidgeCV in place of the closed-form SVD ridge,
which is what a plain implementation would call in each fold.
Target (issue 4): n = 100 in a few seconds, not minutes.
Data: invented families (linear descriptor → energy map, asymptotic curve, noise).

    python benchmarks/bench_loo_validation.py [--sizes 25,100,400]
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import pandas as pd

from barrierscope.relations import get_relation
from barrierscope.validation.loo import loo_predictions


def invented(n: int, p: int = 12, seed: int = 0):
    rng = np.random.default_rng(seed)
    X = rng.normal(size=(n, p))
    energy = X[:, :4] @ np.array([8.0, -5.0, 3.0, 2.0]) - 10.0 + rng.normal(0, 1.0, n)
    barrier = get_relation("asymptotic").barrier(energy, np.array([5.0, -6.0, 5.0])) + rng.normal(0, 0.8, n)
    return pd.DataFrame(X, columns=[f"d{j}" for j in range(p)]), energy, barrier


def sklearn_ridge_loop(X, energy, barrier) -> None:
    from sklearn.linear_model import RidgeCV
    from sklearn.pipeline import make_pipeline
    from sklearn.preprocessing import StandardScaler

    from barrierscope.curves.regressor import CurveRegressor

    n = energy.size
    for i in range(n):
        tr = np.arange(n) != i
        make_pipeline(StandardScaler(), RidgeCV(alphas=np.logspace(-3, 4, 36))).fit(X[tr], energy[tr])
        make_pipeline(StandardScaler(), RidgeCV(alphas=np.logspace(-3, 4, 36))).fit(X[tr], barrier[tr])
        CurveRegressor(intervals="none").fit(energy[tr], barrier[tr])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="25,100,400")
    args = ap.parse_args()
    print(f"{'n':>5} {'full LOO (3 routes + curve) s':>30} {'plain sklearn loop (2 routes) s':>32}")
    for n in (int(s) for s in args.sizes.split(",")):
        X, e, b = invented(n)
        t0 = time.perf_counter()
        loo_predictions(X, e, b)
        ours = time.perf_counter() - t0
        t0 = time.perf_counter()
        sklearn_ridge_loop(X.to_numpy(), e, b)
        base = time.perf_counter() - t0
        print(f"{n:>5} {ours:>30.2f} {base:>32.2f}")
    print("target: n = 100 in a few seconds")


if __name__ == "__main__":
    main()
