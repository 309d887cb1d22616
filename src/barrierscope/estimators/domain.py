"""Applicability domain: is a member like the training set, and is its energy inside the span?

Two flags (OECD principle 3, a defined domain of applicability; OECD, *Guidance Document on
the Validation of (Q)SAR Models*, 2007):

- descriptor distance: mean Euclidean distance to the k nearest training members in the
  standardised descriptor space of the energy stage, flagged above the ``quantile`` of the
  training members' own leave-one-out distances (a k-nearest-neighbour domain in the
  spirit of S. Zhang, A. Golbraikh, S. Oloff, H. Kohn, A. Tropsha, J. Chem. Inf. Model.
  2006, 46, 1984; the quantile threshold is our choice);
- reaction energy outside the training span [min, max]: the curve is extrapolating.
"""

from __future__ import annotations

import numpy as np


#: Distances held at once (rows × training members): a memory bound of about 32 MB.
_DISTANCE_BLOCK = 4_000_000


def knn_mean_distance(Z: np.ndarray, train: np.ndarray, k: int, *, exclude_self: bool = False) -> np.ndarray:
    """Mean Euclidean distance of each row of Z to its k nearest rows of ``train``; with
    ``exclude_self`` (Z is ``train``), each row's distance to itself does not count.

    ``scipy.spatial.distance.cdist`` subtracts coordinates directly, so distances to points
    close to training members do not lose digits to cancellation. Rows are taken in blocks,
    so memory stays bounded however large Z and the training set are.
    """
    from scipy.spatial.distance import cdist

    Z = np.ascontiguousarray(Z, dtype=float)
    out = np.empty(Z.shape[0])
    kk = min(k, train.shape[0] - (1 if exclude_self else 0))
    chunk = max(1, _DISTANCE_BLOCK // max(1, train.shape[0]))
    for s in range(0, Z.shape[0], chunk):
        d = cdist(Z[s:s + chunk], train)
        if exclude_self:
            rows = np.arange(d.shape[0])
            d[rows, s + rows] = np.inf
        out[s:s + chunk] = np.partition(d, kk - 1, axis=1)[:, :kk].mean(axis=1)
    return out


class ApplicabilityDomain:
    """Fitted on the training members' standardised descriptors and reaction energies."""

    def __init__(self, k: int = 3, quantile: float = 0.95):
        self.k = k
        self.quantile = quantile

    def fit(self, Z: np.ndarray | None, energy: np.ndarray):
        energy = np.asarray(energy, dtype=float)
        self.energy_range_ = (float(np.min(energy)), float(np.max(energy)))
        self.train_ = None if Z is None or np.shape(Z)[1] == 0 else np.ascontiguousarray(Z, dtype=float)
        if self.train_ is not None and self.train_.shape[0] > 1:
            # a member's own distance does not count
            self.train_distances_ = knn_mean_distance(self.train_, self.train_, self.k, exclude_self=True)
            self.threshold_ = float(np.quantile(self.train_distances_, self.quantile))
        else:
            self.train_distances_ = np.zeros(0)
            self.threshold_ = float("inf")
        return self

    def distance(self, Z: np.ndarray) -> np.ndarray:
        if self.train_ is None:
            return np.full(np.shape(Z)[0] if Z is not None else 0, np.nan)
        return knn_mean_distance(Z, self.train_, min(self.k, self.train_.shape[0]))

    def energy_outside(self, energy) -> np.ndarray:
        e = np.asarray(energy, dtype=float)
        lo, hi = self.energy_range_
        return (e < lo) | (e > hi)

    def as_dict(self) -> dict:
        return {"k": self.k, "quantile": self.quantile, "energy_range": list(self.energy_range_),
                "threshold": self.threshold_ if np.isfinite(self.threshold_) else None,
                "train": None if self.train_ is None else self.train_.tolist(),
                "train_distances": self.train_distances_.tolist()}

    @classmethod
    def from_dict(cls, d: dict) -> "ApplicabilityDomain":
        self = cls(k=int(d["k"]), quantile=float(d["quantile"]))
        self.energy_range_ = tuple(d["energy_range"])
        self.train_ = None if d.get("train") is None else np.asarray(d["train"], dtype=float)
        self.threshold_ = float("inf") if d.get("threshold") is None else float(d["threshold"])
        self.train_distances_ = np.asarray(d.get("train_distances", []), dtype=float)
        return self
