"""Descriptor matrix → learner input: impute, drop constant columns, standardise.

Fitted on training members only (inside every cross-validation fold), stored as plain
numbers. Missing values are imputed with the training median and counted, never silently
zero; a column that is missing for every training member, or constant, is dropped and
named in the report.
"""

from __future__ import annotations

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
        self = cls(columns=list(columns))
        for j, name in enumerate(columns):
            col = X[:, j]
            ok = np.isfinite(col)
            if not ok.any():
                self.dropped[name] = "missing for every training member"
                continue
            med = float(np.median(col[ok]))
            filled = np.where(ok, col, med)
            sd = float(np.std(filled))
            if sd <= 1e-12 * (1.0 + abs(med)):
                self.dropped[name] = "the same for every training member"
                continue
            if (~ok).any():
                self.imputed[name] = int((~ok).sum())
            self.keep.append(j)
            self.median.append(med)
            self.mean.append(float(np.mean(filled)))
            self.scale.append(sd)
        return self

    @property
    def kept_columns(self) -> list[str]:
        return [self.columns[j] for j in self.keep]

    def transform(self, X: np.ndarray) -> np.ndarray:
        X = np.asarray(X, dtype=float)
        if X.shape[1] != len(self.columns):
            raise ValueError(f"expected {len(self.columns)} descriptor columns, got {X.shape[1]}")
        Z = X[:, self.keep] if self.keep else np.zeros((X.shape[0], 0))
        med = np.asarray(self.median)
        Z = np.where(np.isfinite(Z), Z, med)
        return (Z - np.asarray(self.mean)) / np.asarray(self.scale)

    def missing_mask(self, X: np.ndarray) -> np.ndarray:
        """Rows × kept columns that were missing before imputation."""
        X = np.asarray(X, dtype=float)
        return ~np.isfinite(X[:, self.keep]) if self.keep else np.zeros((X.shape[0], 0), dtype=bool)

    def as_dict(self) -> dict:
        return {"columns": self.columns, "keep": self.keep, "median": self.median, "mean": self.mean,
                "scale": self.scale, "dropped": self.dropped, "imputed": self.imputed}

    @classmethod
    def from_dict(cls, d: dict) -> "Preprocessor":
        return cls(columns=list(d["columns"]), keep=[int(k) for k in d["keep"]], median=list(d["median"]),
                   mean=list(d["mean"]), scale=list(d["scale"]), dropped=dict(d.get("dropped", {})),
                   imputed={k: int(v) for k, v in d.get("imputed", {}).items()})
