"""Descriptor matrix → learner input: impute, drop constant columns, standardise.

Fitted on training members only (inside every validation fold), stored as plain numbers.
Missing values are imputed with the training median and counted, never silently zero; a
column that is missing for every training member, or constant, is dropped and named.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np


@dataclass
class Preprocessor:
    columns: list[str]
    keep: list[int] = field(default_factory=list)
    median: list[float] = field(default_factory=list)
    mean: list[float] = field(default_factory=list)
    scale: list[float] = field(default_factory=list)
    dropped: dict[str, str] = field(default_factory=dict)
    imputed: dict[str, int] = field(default_factory=dict)

    @classmethod
    def fit(cls, X: np.ndarray, columns: list[str]) -> "Preprocessor":
        X = np.asarray(X, dtype=float)
        ok = np.isfinite(X)
        if ok.all():
            med = np.median(X, axis=0)
        else:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)  # all-missing columns: handled below
                med = np.nanmedian(np.where(ok, X, np.nan), axis=0)
        filled = np.where(ok, X, med)
        sd = filled.std(axis=0) if X.shape[0] else np.zeros(X.shape[1])
        missing_all = ~ok.any(axis=0)
        constant = ~missing_all & (sd <= 1e-12 * (1.0 + np.abs(np.nan_to_num(med))))
        self = cls(columns=list(columns))
        self.dropped = {columns[j]: "missing for every training member" for j in np.flatnonzero(missing_all)}
        self.dropped.update({columns[j]: "the same for every training member" for j in np.flatnonzero(constant)})
        keep = np.flatnonzero(~missing_all & ~constant)
        n_missing = (~ok).sum(axis=0)
        self.imputed = {columns[j]: int(n_missing[j]) for j in keep if n_missing[j]}
        self.keep = keep.tolist()
        self.median = med[keep].tolist()
        self.mean = filled[:, keep].mean(axis=0).tolist() if X.shape[0] else []
        self.scale = sd[keep].tolist()
        return self

    @property
    def kept_columns(self) -> list[str]:
        return [self.columns[j] for j in self.keep]

    def transform(self, X: np.ndarray) -> np.ndarray:
        X = np.asarray(X, dtype=float)
        if X.ndim != 2 or X.shape[1] != len(self.columns):
            raise ValueError(f"expected {len(self.columns)} descriptor columns, got shape {X.shape}")
        Z = X[:, self.keep]
        Z = np.where(np.isfinite(Z), Z, np.asarray(self.median))
        return (Z - np.asarray(self.mean)) / np.asarray(self.scale)

    def missing_mask(self, X: np.ndarray) -> np.ndarray:
        """Rows × kept columns that were missing before imputation."""
        return ~np.isfinite(np.asarray(X, dtype=float)[:, self.keep])

    def as_dict(self) -> dict:
        return {"columns": self.columns, "keep": self.keep, "median": self.median, "mean": self.mean,
                "scale": self.scale, "dropped": self.dropped, "imputed": self.imputed}

    @classmethod
    def from_dict(cls, d: dict) -> "Preprocessor":
        return cls(columns=list(d["columns"]), keep=[int(k) for k in d["keep"]], median=list(d["median"]),
                   mean=list(d["mean"]), scale=list(d["scale"]), dropped=dict(d.get("dropped", {})),
                   imputed={k: int(v) for k, v in d.get("imputed", {}).items()})
