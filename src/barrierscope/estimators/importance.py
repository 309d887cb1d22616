"""Permutation importance of a fitted descriptor regressor (L. Breiman, Mach. Learn. 2001,
45, 5, §10): how much the RMSE grows when one descriptor's values are shuffled."""

from __future__ import annotations

import numpy as np


def permutation_importance(regressor, X, y, n_repeats: int = 5, random_state: int = 0) -> np.ndarray:
    """Mean increase in RMSE (y's unit) per column of X (DataFrame), in column order."""
    rng = np.random.default_rng(random_state)
    y = np.asarray(y, dtype=float)
    base = float(np.sqrt(np.mean((regressor.predict(X) - y) ** 2)))
    out = np.zeros(X.shape[1])
    for j, col in enumerate(X.columns):
        total = 0.0
        for _ in range(n_repeats):
            Xp = X.copy()
            Xp[col] = rng.permutation(Xp[col].to_numpy())
            total += float(np.sqrt(np.mean((regressor.predict(Xp) - y) ** 2))) - base
        out[j] = total / n_repeats
    return out
