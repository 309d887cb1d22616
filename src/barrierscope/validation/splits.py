"""How members are held out: the validation regimes.

- ``loo`` — leave-one-out: interpolation, every member predicted from all the others;
- ``downhill`` — the 25 % most exergonic members (lowest reaction energy) held out and
  predicted from the rest: extrapolation to more reactive members;
- ``uphill`` — the 25 % most endergonic members held out: extrapolation the other way;
- ``clusters`` — leave-cluster-out over k-means clusters of the standardised descriptors
  (k = min(5, n // 6)): prediction for new kinds of substituent rather than new values of
  a known kind.

Sizes (our choice, stated in the README): the end splits need n ≥ 12, so that at least 3
members are held out and at least 9 remain to fit a three-parameter curve and an energy
stage; leave-cluster-out needs n ≥ 18, so that there are at least 3 clusters and every fold
keeps about two thirds of the family. A regime that cannot run says why.

Above :data:`LOO_MAX` members, leave-one-out becomes :data:`KFOLD`-fold cross-validation
(shuffled, reproducible), and so do the refits nested inside each split: every member is
still predicted once by models that never saw it, at a cost that grows about linearly with
the family instead of with its cube (measured in ``benchmarks/bench_scale.py``; the tables
and the verdict say which was run).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

REGIMES = ("loo", "downhill", "uphill", "clusters")
#: Most members validated by leave-one-out; above, K-fold cross-validation (see the module docstring).
LOO_MAX = 200
KFOLD = 10
END_FRACTION = 0.25
MIN_FOR_ENDS = 12
MIN_FOR_CLUSTERS = 18
MAX_CLUSTERS = 5


@dataclass(frozen=True)
class Split:
    """Member indices used to fit (``train``) and to test (``test``)."""

    train: np.ndarray
    test: np.ndarray


@dataclass
class Regime:
    name: str
    splits: list[Split] = field(default_factory=list)
    skipped: str = ""                     # why the regime did not run (empty when it did)


def held_out_sets(n: int, random_state: int = 0, single_up_to: int = LOO_MAX, k: int = KFOLD) -> list[np.ndarray]:
    """Index sets each held out once: one member each for n ≤ ``single_up_to``, else ``k``
    shuffled folds (reproducible for a given ``random_state``)."""
    if n <= single_up_to:
        return [np.array([i]) for i in range(n)]
    order = np.random.default_rng(random_state).permutation(n)
    return [np.sort(f) for f in np.array_split(order, k)]


def loo_splits(n: int, random_state: int = 0) -> list[Split]:
    """Leave-one-out splits, or K-fold above :data:`LOO_MAX` members."""
    idx = np.arange(n)
    return [Split(np.setdiff1d(idx, held), held) for held in held_out_sets(n, random_state)]


def loo_scheme(n: int) -> str:
    """How the ``loo`` regime holds members out for a family of n: 'leave-one-out' or 'K-fold'."""
    return "leave-one-out" if n <= LOO_MAX else f"{KFOLD}-fold"


def end_split(energy, side: str, fraction: float = END_FRACTION) -> Split:
    """Hold out the ``fraction`` of members at the ``downhill`` (lowest reaction energy) or
    ``uphill`` (highest) end; ties broken by position so the split is reproducible."""
    e = np.asarray(energy, dtype=float)
    order = np.lexsort((np.arange(e.size), e if side == "downhill" else -e))
    k = max(1, math.ceil(fraction * e.size))
    return Split(np.sort(order[k:]), np.sort(order[:k]))


def cluster_labels(Z: np.ndarray, k: int, random_state: int = 0, restarts: int = 10) -> np.ndarray:
    """k-means labels of the rows of Z (standardised descriptors): Lloyd's iterations
    (S. P. Lloyd, IEEE Trans. Inf. Theory 1982, 28, 129) from k-means++ seeds (D. Arthur,
    S. Vassilvitskii, Proc. SODA 2007, 1027), the lowest within-cluster sum of squares of
    ``restarts`` seeded starts; deterministic for a given ``random_state``."""
    rng = np.random.default_rng(random_state)
    best, best_inertia = None, np.inf
    for _ in range(restarts):
        centres = Z[[rng.integers(len(Z))]]
        while len(centres) < k:
            d2 = np.min(((Z[:, None, :] - centres[None]) ** 2).sum(axis=2), axis=1)
            probs = d2 / d2.sum() if d2.sum() > 0 else np.full(len(Z), 1.0 / len(Z))
            centres = np.vstack([centres, Z[rng.choice(len(Z), p=probs)]])
        for _ in range(300):
            labels = np.argmin(((Z[:, None, :] - centres[None]) ** 2).sum(axis=2), axis=1)
            new = np.array([Z[labels == c].mean(axis=0) if np.any(labels == c) else centres[c] for c in range(k)])
            if np.allclose(new, centres):
                break
            centres = new
        inertia = float(((Z - centres[labels]) ** 2).sum())
        if inertia < best_inertia:
            best, best_inertia = labels, inertia
    return best


def cluster_splits(Z: np.ndarray, random_state: int = 0) -> tuple[list[Split], str]:
    """Leave-cluster-out splits and, when there are none, the reason."""
    n = Z.shape[0]
    if n < MIN_FOR_CLUSTERS:
        return [], f"needs at least {MIN_FOR_CLUSTERS} members ({n} here)"
    if Z.shape[1] == 0:
        return [], "no descriptors to cluster on"
    k = min(MAX_CLUSTERS, n // 6)
    labels = cluster_labels(Z, k, random_state)
    idx = np.arange(n)
    return [Split(idx[labels != c], idx[labels == c]) for c in range(k) if (labels == c).any()], ""


def regimes(energy, Z: np.ndarray | None, random_state: int = 0, which=REGIMES) -> dict[str, Regime]:
    """Every regime in ``which`` for a family with reaction energies ``energy`` (kcal/mol)
    and standardised descriptors ``Z`` (None for a curve-only model)."""
    n = int(np.size(energy))
    out: dict[str, Regime] = {}
    for name in which:
        if name == "loo":
            out[name] = Regime(name, loo_splits(n, random_state))
        elif name in ("downhill", "uphill"):
            out[name] = (Regime(name, [end_split(energy, name)]) if n >= MIN_FOR_ENDS else
                         Regime(name, skipped=f"needs at least {MIN_FOR_ENDS} members ({n} here)"))
        elif name == "clusters":
            if Z is None:
                out[name] = Regime(name, skipped="a curve-only model has no descriptors to cluster on")
            else:
                splits, why = cluster_splits(Z, random_state)
                out[name] = Regime(name, splits, why)
        else:
            raise ValueError(f"unknown validation regime {name!r}; valid choices: {', '.join(REGIMES)}")
    return out
