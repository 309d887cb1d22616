"""What every barrier–reaction-energy relation provides.

A relation maps a reaction energy ``dE`` (kcal/mol) to a barrier ``dE‡`` (kcal/mol)
through a small parameter vector ``theta``. Every method broadcasts: ``energy`` has
shape ``(n,)``; ``theta`` has shape ``(p,)`` (one parameter set) or ``(m, p)`` (m sets,
used to refit many leave-one-out subsets at once). Results then have shape ``(n,)``
or ``(m, n)``; Jacobians add a trailing axis of length ``p``.
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from typing import ClassVar

import numpy as np


def softplus(z):
    """ln(1 + e^z) without overflow for any z.

    Equal to ``numpy.logaddexp(0, z)`` (to 1 ulp) and about twice as fast, which matters
    in the batched leave-one-out refits: max(z, 0) + ln(1 + e^−|z|) never exponentiates
    a positive number.
    """
    z = np.asarray(z, dtype=float)
    return np.maximum(z, 0.0) + np.log1p(np.exp(-np.abs(z)))


def logistic_parts(z):
    """(σ(z), softplus(z), softplus(z) − z·σ(z)) from one exp and one log1p, stable for any z."""
    z = np.asarray(z, dtype=float)
    a = np.abs(z)
    e = np.exp(-a)                 # in (0, 1]: never overflows
    inv = 1.0 / (1.0 + e)
    sig_neg = e * inv              # σ(−|z|)
    sp_neg = np.log1p(e)           # softplus(−|z|)
    sigma = np.where(z >= 0, inv, sig_neg)
    softplus_z = np.where(z >= 0, z + sp_neg, sp_neg)
    return sigma, softplus_z, sp_neg + a * sig_neg


def split_params(theta, count: int):
    """Split ``theta`` of shape (p,) or (m, p) into ``count`` broadcastable pieces."""
    t = np.asarray(theta, dtype=float)
    if t.shape[-1] != count:
        raise ValueError(f"expected {count} parameters, got shape {t.shape}")
    if t.ndim == 1:
        return [t[k] for k in range(count)]
    return [t[..., k, None] for k in range(count)]


def stack_jacobian(columns, shape):
    """Stack per-parameter derivative arrays (each broadcast to ``shape``) on a last axis."""
    out = np.empty(tuple(shape) + (len(columns),))
    for k, c in enumerate(columns):
        out[..., k] = c
    return out


class Relation(ABC):
    """A barrier–reaction-energy relation. Instances are stateless and cheap."""

    #: Key used on the command line and in JSON.
    name: ClassVar[str]
    #: Human-readable name with its published origin.
    label: ClassVar[str]
    #: Parameter names, in the order of ``theta``.
    param_names: ClassVar[tuple[str, ...]]
    #: Parameters without an energy unit (all others are energies, kcal/mol).
    dimensionless: ClassVar[tuple[str, ...]] = ()
    #: The unit class of each quantity :meth:`derived` returns (see :mod:`barrierscope.records`).
    derived_units: ClassVar[dict[str, str]] = {"intrinsic_barrier": "energy"}

    @abstractmethod
    def barrier(self, energy, theta):
        """Barrier in kcal/mol."""

    @abstractmethod
    def slope(self, energy, theta):
        """d barrier / d energy: the local Leffler α (dimensionless)."""

    @abstractmethod
    def jacobian(self, energy, theta):
        """d barrier / d theta, shape energy.shape + (p,) (or (m, n, p))."""

    @abstractmethod
    def bounds(self, energy, barrier) -> tuple[np.ndarray, np.ndarray]:
        """Lower and upper parameter bounds for a fit to these data (kcal/mol)."""

    @abstractmethod
    def starts(self, energy, barrier) -> list[np.ndarray]:
        """Data-driven starting values; the fit tries each and keeps the best."""

    def subset_starts(self, energy, barrier, weights) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Bounds and starts of every subset (row of ``weights``, zero = left out), each from its
        own members only: (lo (m, p), hi (m, p), starts (m, s, p)). Relations may vectorise
        this; by default each subset calls :meth:`bounds` and :meth:`starts`, the shorter
        lists of starts padded by repeating their first."""
        x, y = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
        w = np.atleast_2d(weights)
        lows, highs, starts = [], [], []
        for row in w:
            keep = row > 0
            lo, hi = self.bounds(x[keep], y[keep])
            lows.append(lo)
            highs.append(hi)
            starts.append([np.asarray(s, dtype=float) for s in self.starts(x[keep], y[keep])])
        k = max(len(s) for s in starts)
        return (np.array(lows), np.array(highs),
                np.array([s + [s[0]] * (k - len(s)) for s in starts]))

    def residual_and_jacobian(self, energy, theta, barrier):
        """(barrier(energy; θ) − barrier, Jacobian): one pass where a relation can share work."""
        return self.barrier(energy, theta) - barrier, self.jacobian(energy, theta)

    @property
    def n_params(self) -> int:
        return len(self.param_names)

    def derived(self, theta) -> dict[str, float]:
        """Quantities a chemist reads off the fitted relation (kcal/mol unless stated)."""
        theta = np.asarray(theta, dtype=float)
        return {"intrinsic_barrier": float(self.barrier(np.array([0.0]), theta)[0])}

    def outside_validity(self, energy, theta):
        """Boolean mask of energies where the relation's form has no physical meaning."""
        return np.zeros(np.shape(energy), dtype=bool)

    def as_dict(self, theta) -> dict[str, float]:
        return {k: float(v) for k, v in zip(self.param_names, np.asarray(theta, dtype=float))}

    def __repr__(self) -> str:
        return f"{type(self).__name__}()"


def data_scale(energy, barrier):
    """Spans and centres used to set bounds and starting values (kcal/mol)."""
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    span_x = float(np.ptp(x)) if x.size else 0.0
    span_y = float(np.ptp(y)) if y.size else 0.0
    return x, y, span_x, span_y


def grid_start_g0(relation: Relation, energy, barrier) -> np.ndarray:
    """Best of a log-spaced grid of the single barrier-height parameter (kcal/mol).

    Used as the start for one-parameter relations whose parameter is a barrier at dE = 0.
    """
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    top = max(float(np.max(np.abs(y))) if y.size else 10.0, 1.0)
    grid = np.geomspace(0.05 * top, 5.0 * top, 25)
    theta = grid[:, None]
    rss = np.sum((relation.barrier(x, theta) - y) ** 2, axis=1)
    return np.array([grid[int(np.argmin(rss))]])


class G0Relation(Relation):
    """Base of the one-parameter relations whose parameter ``g0`` is the barrier at dE = 0
    with asymptotes 0 downhill and dE uphill (Agmon–Levine, Rehm–Weller): one place for their
    bounds, starting grid and intrinsic barrier."""

    param_names = ("g0",)

    def bounds(self, energy, barrier):
        x, y, span_x, span_y = data_scale(energy, barrier)
        return np.array([1e-3]), np.array([1e3 * (span_x + span_y + 10.0)])

    def starts(self, energy, barrier):
        return [grid_start_g0(self, energy, barrier)]

    def derived(self, theta):
        return {"intrinsic_barrier": float(np.asarray(theta, dtype=float)[0])}
