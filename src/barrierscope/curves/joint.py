"""Several families fitted at once, some parameters shared (energies in kcal/mol).

Every family k has its own parameter vector θ_k of one relation; the parameters named in
``shared`` take one value for all families. The joint vector packs the shared values first,
then each family's own ones (:class:`JointLayout`). The fit is bounded least squares on all
members together (``scipy.optimize.least_squares``, trust-region reflective, analytic
Jacobian scattered into the joint columns); one residual variance is pooled over families
(s² = RSS/(n − P)), which is what lets a family with a narrow span borrow the others'
curvature.

The evidence for sharing compares the joint fit with separate fits of every family under the
same pooled-variance Gaussian likelihood: the likelihood-ratio statistic n·ln(RSS_shared/
RSS_separate) against χ² with (K − 1)·|shared| degrees of freedom (S. S. Wilks, Ann. Math.
Stat. 1938, 9, 60), and AICc of both (C. M. Hurvich, C.-L. Tsai, Biometrika 1989, 76, 297;
the variance counted as a parameter). A separate fit that ends on a search bound makes the χ²
reference approximate; the test says so.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import special

from ..relations.base import Relation
from .batch import interior
from .fit import FitError, covariance, fit_relation
from .records import SharingTest
from .stats import aicc, at_bound, predictive_variance


@dataclass(frozen=True)
class JointLayout:
    """Where each family's parameters sit in the joint vector."""

    param_names: tuple[str, ...]
    shared: tuple[str, ...]
    n_families: int

    @property
    def shared_idx(self) -> list[int]:
        return [j for j, n in enumerate(self.param_names) if n in self.shared]

    @property
    def own_idx(self) -> list[int]:
        return [j for j, n in enumerate(self.param_names) if n not in self.shared]

    @property
    def size(self) -> int:
        return len(self.shared_idx) + self.n_families * len(self.own_idx)

    def index(self, k: int, j: int) -> int:
        """Position of parameter j of family k in the joint vector."""
        s, o = self.shared_idx, self.own_idx
        return s.index(j) if j in s else len(s) + k * len(o) + o.index(j)

    def columns(self) -> np.ndarray:
        """(K, p) joint positions of every family's parameters."""
        return np.array([[self.index(k, j) for j in range(len(self.param_names))] for k in range(self.n_families)])

    def unpack(self, u) -> np.ndarray:
        return np.asarray(u, dtype=float)[self.columns()]

    def pack(self, theta) -> np.ndarray:
        """Joint vector from per-family vectors (K, p); shared values: the median over families."""
        theta = np.asarray(theta, dtype=float)
        u = np.empty(self.size)
        for j in self.shared_idx:
            u[self.index(0, j)] = np.median(theta[:, j])
        for k in range(self.n_families):
            for j in self.own_idx:
                u[self.index(k, j)] = theta[k, j]
        return u


def members_by_family(fam, n_families: int):
    """(family code, positions of its members) for every family that has members."""
    fam = np.asarray(fam, dtype=int)
    for k in range(n_families):
        idx = np.flatnonzero(fam == k)
        if idx.size:
            yield k, idx


def residuals_and_jacobian(rel: Relation, layout: JointLayout, x, y, *, fam, u):
    """(residuals (n,), Jacobian (n, P)) of the joint model at u."""
    theta = layout.unpack(u)
    cols = layout.columns()
    r = np.empty(x.size)
    jac = np.zeros((x.size, layout.size))
    for k, idx in members_by_family(fam, layout.n_families):
        r[idx] = rel.barrier(x[idx], theta[k]) - y[idx]
        jac[np.ix_(idx, cols[k])] += rel.jacobian(x[idx], theta[k])   # shared columns add up over families
    return r, jac


@dataclass
class JointFit:
    """Result of a joint fit (kcal/mol)."""

    relation: Relation
    layout: JointLayout
    u: np.ndarray                  # joint parameter vector (P,)
    cov: np.ndarray                # its covariance (P, P)
    rss: float
    n: int
    n_per_family: np.ndarray
    at_bound: tuple[str, ...] = ()
    bounds: tuple = field(default_factory=tuple)

    @property
    def theta(self) -> np.ndarray:
        return self.layout.unpack(self.u)

    @property
    def dof(self) -> int:
        return self.n - self.layout.size

    @property
    def sigma(self) -> float:
        return float(np.sqrt(self.rss / self.dof)) if self.dof > 0 else float("nan")

    def family_cov(self, k: int) -> np.ndarray:
        c = self.layout.columns()[k]
        return self.cov[np.ix_(c, c)]

    def predict(self, energy, fam, return_std: bool = False, energy_std=None):
        """Barriers (kcal/mol) of members of families ``fam`` (codes) at ``energy``; with
        ``return_std`` the predictive σ (parameters, residual scatter, and α·σ_E)."""
        e = np.asarray(energy, dtype=float)
        out, var = np.full(e.size, np.nan), np.full(e.size, np.nan)
        es = np.zeros(e.size) if energy_std is None else np.asarray(energy_std, dtype=float)
        for k, idx in members_by_family(fam, self.layout.n_families):
            th = self.theta[k]
            out[idx] = self.relation.barrier(e[idx], th)
            var[idx] = predictive_variance(self.relation.jacobian(e[idx], th), self.family_cov(k), self.sigma,
                                           self.relation.slope(e[idx], th), energy_std=es[idx])
        return (out, np.sqrt(var)) if return_std else out

    def slope(self, energy, fam) -> np.ndarray:
        """Local Leffler α of each member's family curve at ``energy``."""
        e = np.asarray(energy, dtype=float)
        out = np.full(e.size, np.nan)
        for k, idx in members_by_family(fam, self.layout.n_families):
            out[idx] = self.relation.slope(e[idx], self.theta[k])
        return out

    def floors(self) -> np.ndarray:
        """Each family's barrier far downhill (kcal/mol); NaN for a relation without a floor."""
        far = self.predict(np.full(self.layout.n_families, -1e6), np.arange(self.layout.n_families))
        return np.where(far > -1e5, far, np.nan)

    def as_dict(self) -> dict:
        return {"relation": self.relation.name, "param_names": list(self.layout.param_names),
                "shared": list(self.layout.shared), "n_families": self.layout.n_families, "u": self.u.tolist(),
                "cov": self.cov.tolist(), "rss": self.rss, "n": self.n, "n_per_family": self.n_per_family.tolist(),
                "at_bound": list(self.at_bound),
                "bounds": [np.asarray(b, dtype=float).tolist() for b in self.bounds] if self.bounds else None}

    @classmethod
    def from_dict(cls, d: dict) -> "JointFit":
        from ..relations import get_relation

        layout = JointLayout(tuple(d["param_names"]), tuple(d["shared"]), int(d["n_families"]))
        bounds = tuple(np.asarray(b, dtype=float) for b in d["bounds"]) if d.get("bounds") else ()
        return cls(get_relation(d["relation"]), layout, np.asarray(d["u"], dtype=float),
                   np.asarray(d["cov"], dtype=float), float(d["rss"]), int(d["n"]),
                   np.asarray(d["n_per_family"], dtype=int), tuple(d.get("at_bound", ())), bounds)


def family_bounds(rel: Relation, layout: JointLayout, x, y, *, fam) -> tuple[np.ndarray, np.ndarray]:
    """Joint bounds: each family's own from its members; shared ones the widest over families."""
    lows, highs = zip(*[rel.bounds(x[fam == k], y[fam == k]) for k in range(layout.n_families)])
    lows, highs = np.array(lows), np.array(highs)
    lo, hi = np.empty(layout.size), np.empty(layout.size)
    for j in layout.shared_idx:
        lo[layout.index(0, j)], hi[layout.index(0, j)] = lows[:, j].min(), highs[:, j].max()
    for k in range(layout.n_families):
        for j in layout.own_idx:
            lo[layout.index(k, j)], hi[layout.index(k, j)] = lows[k, j], highs[k, j]
    return lo, hi


def separate_fits(rel: Relation, x, y, fam, *, n_families: int) -> list:
    """Each family fitted alone (None where it has too few members for its own fit)."""
    out = []
    for k in range(n_families):
        sel = fam == k
        try:
            out.append(fit_relation(rel, x[sel], y[sel]) if sel.sum() >= rel.n_params + 1 else None)
        except FitError:
            out.append(None)
    return out


def _solve(rel, layout, x, y, *, fam, start, lo, hi, fixed: dict | None = None):
    """least_squares on the joint vector, optionally with some coordinates held fixed."""
    from scipy import optimize  # loaded when a fit runs, not when a model predicts

    fixed = fixed or {}
    free = np.array([i for i in range(layout.size) if i not in fixed])
    base = np.asarray(start, dtype=float).copy()
    for i, v in fixed.items():
        base[i] = v

    def full(s):
        u = base.copy()
        u[free] = s
        return u

    def fun(s):
        return residuals_and_jacobian(rel, layout, x, y, fam=fam, u=full(s))[0]

    def jac(s):
        return residuals_and_jacobian(rel, layout, x, y, fam=fam, u=full(s))[1][:, free]

    res = optimize.least_squares(fun, interior(base[free], lo[free], hi[free]), jac=jac, bounds=(lo[free], hi[free]),
                                 method="trf", x_scale="jac", xtol=1e-10, ftol=1e-10, gtol=1e-10,
                                 max_nfev=100 * free.size)
    return full(res.x), float(2.0 * res.cost)


def fit_joint(rel: Relation, energy, barrier, fam, *, n_families: int, shared=("width",), separate=None,
              start=None) -> JointFit:
    """Fit the families jointly. ``fam``: family code (0..K−1) per member; ``separate``: the
    families' own fits when the caller has them (starting values); ``start``: a joint vector
    to start from instead (warm starts in validation)."""
    x, y, fam = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float), np.asarray(fam, dtype=int)
    unknown = [s for s in shared if s not in rel.param_names]
    if unknown:
        raise ValueError(f"shared parameter(s) {', '.join(unknown)}: the {rel.label} relation has the parameters "
                         f"{', '.join(rel.param_names)}")
    layout = JointLayout(tuple(rel.param_names), tuple(s for s in rel.param_names if s in shared), n_families)
    counts = np.bincount(fam, minlength=n_families)
    own = len(layout.own_idx)
    if counts.min() < own + 1:
        small = int(np.argmin(counts))
        raise FitError(f"family {small} has {counts[small]} member(s); with {own} parameter(s) of its own it needs at "
                       f"least {own + 1}")
    if x.size <= layout.size:
        raise FitError(f"{x.size} members for {layout.size} joint parameters")
    lo, hi = family_bounds(rel, layout, x, y, fam=fam)
    starts = [np.asarray(start, dtype=float)] if start is not None else _starts(rel, layout, x, y, fam=fam, separate=separate)
    best = min((_solve(rel, layout, x, y, fam=fam, start=s, lo=lo, hi=hi) for s in starts), key=lambda t: t[1])
    u, rss = best
    r, jac = residuals_and_jacobian(rel, layout, x, y, fam=fam, u=u)
    dof = x.size - layout.size
    cov = covariance(jac, float(r @ r) / dof)
    near = at_bound(u, lo, hi)
    bounded = tuple(sorted({rel.param_names[j] for k in range(n_families) for j in range(rel.n_params)
                            if near[layout.index(k, j)]}))
    return JointFit(rel, layout, u, cov, float(r @ r), int(x.size), counts, bounded, (lo, hi))


def _starts(rel, layout, x, y, *, fam, separate) -> list[np.ndarray]:
    """The families' own fits (shared values: their median), and the pooled fit for everyone."""
    pooled = fit_relation(rel, x, y).params
    separate = separate if separate is not None else separate_fits(rel, x, y, fam, n_families=layout.n_families)
    own = np.array([f.params if f is not None else pooled for f in separate])
    return [layout.pack(own), layout.pack(np.tile(pooled, (layout.n_families, 1)))]


def sharing_test(joint: JointFit, separate: list) -> SharingTest:
    """Shared against separate: likelihood ratio, its χ² p, and AICc of both (see the module
    docstring); ``p`` is None when a family is too small for a fit of its own."""
    if any(f is None for f in separate) or not joint.layout.shared:
        return SharingTest(p=None, lr=None, df=0, aicc_shared=aicc(joint.rss, joint.n, joint.layout.size + 1),
                           aicc_separate=None, approximate=False)
    rss_sep = float(sum(f.rss for f in separate))
    k_sep = sum(f.relation.n_params for f in separate)
    df = k_sep - joint.layout.size
    lr = max(joint.n * float(np.log(joint.rss / rss_sep)), 0.0) if rss_sep > 0 else float("inf")
    return SharingTest(p=float(special.chdtrc(df, lr)), lr=lr, df=int(df),
                       aicc_shared=aicc(joint.rss, joint.n, joint.layout.size + 1),
                       aicc_separate=aicc(rss_sep, joint.n, k_sep + 1), approximate=any(f.at_bound for f in separate))
