"""y-randomisation: refit on shuffled targets; a real model must do clearly worse.

Each shuffle permutes the (reaction energy, barrier) pairs against the descriptors and runs
the same leave-one-out as the real model (OECD, *Guidance Document on the Validation of
(Q)SAR Models*, 2007, §5). The best constant predictor is reported beside it: chance and
the family mean are what any route has to beat. Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from .records import YRandomization
from .routes import out_of_fold
from .splits import loo_splits


def constant_predictor_loo_mae(y) -> float:
    """LOO MAE of the better constant predictor — the mean or the median of the other members
    (the median is the constant that minimises absolute error)."""
    y = np.asarray(y, dtype=float)
    n = y.size
    loo_mean = (y.sum() - y) / (n - 1)
    srt = np.sort(y)
    # Median of the others: drop one occurrence of y_i from the sorted values.
    loo_median = np.array([np.median(np.delete(srt, np.searchsorted(srt, v))) for v in y])
    return float(min(np.mean(np.abs(y - loo_mean)), np.mean(np.abs(y - loo_median))))


def y_randomization(X, energy, barrier, learner: str, *, relation: str, n_shuffles: int = 5,
                    random_state: int = 0, designs: dict | None = None, anchor=None, fixed=()) -> YRandomization:
    """Leave-one-out MAE of the two-stage and direct routes refitted on shuffled pairs."""
    rng = np.random.default_rng(random_state)
    energy = np.asarray(energy, dtype=float)
    barrier = np.asarray(barrier, dtype=float)
    splits = loo_splits(energy.size, random_state)
    maes: dict[str, list[float]] = {"two_stage": [], "direct": []}
    for _ in range(n_shuffles):
        perm = rng.permutation(energy.size)
        res = out_of_fold(X, energy[perm], barrier[perm], splits, learner=learner, relation=relation,
                          random_state=random_state, routes=("two_stage", "direct"), domain=False,
                          designs=designs, anchor=anchor, fixed=fixed)
        for r in maes:
            if r in res.pred:
                maes[r].append(float(np.mean(np.abs(res.pred[r] - barrier[perm]))))

    def stat(values, f):
        return float(f(values)) if values else float("nan")

    return YRandomization(n_shuffles=int(n_shuffles), mae_mean=stat(maes["two_stage"], np.mean),
                          mae_std=stat(maes["two_stage"], np.std), direct_mae_mean=stat(maes["direct"], np.mean),
                          mean_predictor_mae=constant_predictor_loo_mae(barrier))
