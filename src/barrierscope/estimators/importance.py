"""Permutation importance of a fitted descriptor regressor (L. Breiman, Mach. Learn. 2001,
45, 5, §10): how much the RMSE grows when one descriptor's values are shuffled."""

from __future__ import annotations

import numpy as np
import pandas as pd


def permutation_importance(regressor, X, y, n_repeats: int = 5, *, random_state: int = 0) -> np.ndarray:
    """Mean increase in RMSE (y's unit) per column of X (DataFrame), in column order. Every
    shuffled copy is predicted in one call (same numbers as one call per copy)."""
    rng = np.random.default_rng(random_state)
    y = np.asarray(y, dtype=float)
    A = X.to_numpy(dtype=float)
    n, p = A.shape
    base = float(np.sqrt(np.mean((regressor.predict(X) - y) ** 2)))
    copies = np.repeat(A[None], p * n_repeats, axis=0)                  # (p·repeats, n, p)
    for j in range(p):
        for r in range(n_repeats):
            copies[j * n_repeats + r, :, j] = rng.permutation(A[:, j])
    pred = regressor.predict(pd.DataFrame(copies.reshape(-1, p), columns=X.columns)).reshape(p, n_repeats, n)
    rmse = np.sqrt(np.mean((pred - y) ** 2, axis=2))
    return rmse.mean(axis=1) - base
