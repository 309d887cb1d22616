"""Parameter intervals of a fitted relation.

- :func:`wald_intervals` — θ̂ ± t·SE from the Jacobian covariance (exact for the line);
- :func:`profile_intervals` — profile-likelihood (profile-t) intervals, D. M. Bates,
  D. G. Watts, *Nonlinear Regression Analysis and Its Applications*, Wiley 1988, ch. 6;
- :func:`bootstrap_intervals` — case-resampling percentile intervals (B. Efron,
  R. J. Tibshirani, *An Introduction to the Bootstrap*, Chapman & Hall 1993);
- :func:`correlation_matrix` — from a covariance matrix.

Energies in kcal/mol; dimensionless parameters as they are.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from .batch import interior, refit_weighted
from .fit import RelationFit, check_pairs


def t_quantile(level: float, dof: int) -> float:
    """Two-sided Student-t quantile for a central interval of probability ``level``."""
    if dof <= 0:
        return float("nan")
    return float(special.stdtrit(dof, 0.5 + level / 2.0))


def wald_intervals(fit: RelationFit, level: float = 0.95) -> dict[str, tuple[float, float]]:
    """θ̂ ± t·SE intervals (kcal/mol or dimensionless, as the parameter)."""
    t = t_quantile(level, fit.dof)
    return {name: (float(v - t * s), float(v + t * s))
            for name, v, s in zip(fit.relation.param_names, fit.params, fit.stderr)}


def correlation_matrix(cov: np.ndarray) -> np.ndarray:
    """Correlation matrix from a covariance matrix (NaN where a variance is zero)."""
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, np.inf))
    with np.errstate(divide="ignore", invalid="ignore"):
        corr = cov / np.outer(sd, sd)
    np.fill_diagonal(corr, 1.0)
    return np.clip(corr, -1.0, 1.0)


@dataclass
class ProfileInterval:
    low: float
    high: float
    low_open: bool   # True when the profile never left the interval before the search bound
    high_open: bool

    @property
    def closed(self) -> bool:
        return not (self.low_open or self.high_open)


class _Profile:
    """S(v): the residual sum of squares minimised over the other parameters at θ_j = v."""

    def __init__(self, fit: RelationFit, x, y, j: int, *, lo, hi):
        self.rel, self.x, self.y, self.j = fit.relation, x, y, j
        self.free = [k for k in range(fit.relation.n_params) if k != j]
        self.lo, self.hi = lo[self.free], hi[self.free]

    def _full(self, value, sub):
        theta = np.empty(self.rel.n_params)
        theta[self.j] = value
        theta[self.free] = sub
        return theta

    def rss(self, value: float, theta_start) -> tuple[float, np.ndarray]:
        from scipy import optimize  # loaded when a fit runs, not when a model predicts

        res = optimize.least_squares(
            lambda s: self.rel.barrier(self.x, self._full(value, s)) - self.y,
            interior(np.asarray(theta_start, dtype=float)[self.free], self.lo, self.hi),
            jac=lambda s: self.rel.jacobian(self.x, self._full(value, s))[:, self.free],
            bounds=(self.lo, self.hi), method="trf", x_scale="jac", xtol=1e-10, ftol=1e-10, gtol=1e-10,
            max_nfev=200)
        return float(2.0 * res.cost), self._full(value, res.x)


def profile_end(prof, start, g_cut, u_hat: float, *, edge: float, step: float, direction: float, inv):
    """One end of the interval in the (possibly log) search coordinate: (value, open?).
    ``prof.rss(value, start)`` gives the minimised RSS at the profiled value and the full
    parameter vector there; ``start`` is the full vector at the optimum; ``inv`` maps the
    search coordinate back to the parameter."""
    from scipy import optimize  # loaded when a fit runs, not when a model predicts

    theta_prev, inside_u = np.array(start, dtype=float), u_hat
    found = None
    while True:
        u = inside_u + direction * step
        hit_edge = (u <= edge) if direction < 0 else (u >= edge)
        u = edge if hit_edge else u
        rss, theta_u = prof.rss(float(inv(u)), theta_prev)
        if g_cut(rss) > 0:
            found = (inside_u, u, theta_prev)
            break
        if hit_edge:
            return float(inv(edge)), True
        inside_u, theta_prev = u, theta_u
        step *= 2.0
    a, b, theta_a = found
    cache = {"theta": theta_a}

    def g_of(u):
        rss_u, th = prof.rss(float(inv(u)), cache["theta"])
        cache["theta"] = th
        return g_cut(rss_u)

    try:
        root = optimize.brentq(g_of, a, b, xtol=1e-6 * (1 + abs(b)), rtol=1e-8, maxiter=60)
    except ValueError:  # re-minimising at the inner point wobbled above the cut
        root = a
    return float(inv(root)), False


def profile_cut(rss: float, dof: int, level: float):
    """The profile-t criterion g(S) = (S − Ŝ)/s² − t²_dof (Bates & Watts 1988, §6.1): an
    interval end is where g crosses zero. None when s² = Ŝ/dof is not positive and finite."""
    s2 = rss / dof if dof > 0 else float("nan")
    if not np.isfinite(s2) or s2 <= 0:
        return None
    tcrit2 = t_quantile(level, dof) ** 2
    return lambda s: (s - rss) / s2 - tcrit2


def _same(v):
    return v


def profile_interval(prof, start, g_cut, *, value: float, se: float, lo: float, hi: float,
                     log: bool = False) -> ProfileInterval:
    """Both ends of one parameter's profile interval, searched from its estimate ``value``
    outward in steps starting at its standard error ``se`` (in log space with ``log`` and a
    positive lower bound), up to the search bounds ``lo``, ``hi``."""
    use_log = log and lo > 0
    fwd, inv = (np.log, np.exp) if use_log else (_same, _same)
    u_hat = fwd(value)
    step = se / (value if use_log else 1.0)
    step = float(np.clip(step if np.isfinite(step) and step > 0 else 0.1, 1e-4 * (1 + abs(u_hat)), None))
    step = min(step, 1.0) if use_log else step
    low, low_open = profile_end(prof, start, g_cut, u_hat, edge=fwd(lo), step=step, direction=-1.0, inv=inv)
    high, high_open = profile_end(prof, start, g_cut, u_hat, edge=fwd(hi), step=step, direction=1.0, inv=inv)
    return ProfileInterval(low, high, low_open, high_open)


def profile_intervals(fit: RelationFit, energy, barrier, level: float = 0.95,
                      *, log_scale: tuple[str, ...] = ("width",)) -> dict[str, ProfileInterval]:
    """Profile-t intervals for every parameter of a least-squares fit.

    The interval for θ_j is where τ(v)² = (S(v) − Ŝ)/s² ≤ t²_{n−p}, with S(v) the residual
    sum of squares minimised over the other parameters at θ_j = v and s² = Ŝ/(n − p)
    (Bates & Watts 1988, §6.1). Parameters named in ``log_scale`` are searched in log space.
    An end that reaches the search bound before τ² reaches t² is marked open.
    """
    relation = fit.relation
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    lo, hi = relation.bounds(x, y)
    g_cut = profile_cut(fit.rss, fit.dof, level)
    if g_cut is None:
        return {name: ProfileInterval(float(v), float(v), True, True) for name, v in zip(relation.param_names, fit.params)}
    return {name: profile_interval(_Profile(fit, x, y, j, lo=lo, hi=hi), fit.params, g_cut, value=fit.params[j],
                                   se=fit.stderr[j], lo=lo[j], hi=hi[j], log=name in log_scale)
            for j, name in enumerate(relation.param_names)}


def profile_all(solve, u_hat, se, lo, hi, *, log, g_cut, rss_hat: float, max_rounds: int = 60) -> list[ProfileInterval]:
    """Both ends of every coordinate's profile interval, all searched together.

    ``solve(coords, values, starts)`` re-minimises a batch of problems, coordinate
    ``coords[b]`` held at ``values[b]``, from full vectors ``starts`` (b, P); it returns (RSS
    (b,), solutions (b, P)). Each end steps outward from the estimate (doubling steps that
    start at the standard error, in log space where ``log`` says so) until the profile-t
    criterion ``g_cut`` (zero at the interval's ends; ``g_cut(rss_hat)`` at the estimate) turns
    positive or the search bound is reached (an open end); the
    bracketed root is then refined by the Illinois variant of regula falsi to the tolerance
    the one-at-a-time search used (1e-6 relative). Every round is one batched solve.
    """
    u_hat, se, lo, hi, log = (np.asarray(v) for v in (u_hat, se, lo, hi, log))
    P = u_hat.size
    coord = np.repeat(np.arange(P), 2)
    direction = np.tile([-1.0, 1.0], P)
    use_log = log[coord] & (lo[coord] > 0)
    fwd = lambda v, m: np.where(m, np.log(np.where(m, v, 1.0)), v)          # noqa: E731
    inv = lambda u, m: np.where(m, np.exp(np.where(m, u, 0.0)), u)          # noqa: E731
    centre = fwd(u_hat[coord], use_log)
    edge = fwd(np.where(direction < 0, lo[coord], hi[coord]), use_log)
    step = se[coord] / np.where(use_log, u_hat[coord], 1.0)
    step = np.where(np.isfinite(step) & (step > 0), step, 0.1)
    step = np.maximum(step, 1e-4 * (1 + np.abs(centre)))
    step = np.where(use_log, np.minimum(step, 1.0), step)
    S = coord.size
    inside, g_in = centre.copy(), np.full(S, float(g_cut(rss_hat)))
    start = np.tile(u_hat, (S, 1))
    state = np.zeros(S, dtype=int)                  # 0 stepping, 1 bracketed, 2 open end, 3 done
    a, b, g_a, g_b, value = (np.full(S, np.nan) for _ in range(5))
    for _ in range(max_rounds):
        go = np.flatnonzero(state == 0)
        if go.size == 0:
            break
        u = inside[go] + direction[go] * step[go]
        hit = np.where(direction[go] < 0, u <= edge[go], u >= edge[go])
        u = np.where(hit, edge[go], u)
        rss, sol = solve(coord[go], inv(u, use_log[go]), start[go])
        g = g_cut(rss)
        up = g > 0
        a[go[up]], b[go[up]], g_a[go[up]], g_b[go[up]], state[go[up]] = inside[go[up]], u[up], g_in[go[up]], g[up], 1
        opened = ~up & hit
        value[go[opened]], state[go[opened]] = inv(edge[go[opened]], use_log[go[opened]]), 2
        moving = go[~up & ~hit]
        inside[moving], g_in[moving], start[moving] = u[~up & ~hit], g[~up & ~hit], sol[~up & ~hit]
        step[moving] *= 2.0
    side = np.zeros(S, dtype=int)                   # which end was kept last (Illinois halving)
    for _ in range(max_rounds):
        go = np.flatnonzero(state == 1)
        if go.size == 0:
            break
        c = b[go] - g_b[go] * (b[go] - a[go]) / (g_b[go] - g_a[go])
        c = np.where(np.isfinite(c) & (np.minimum(a[go], b[go]) < c) & (c < np.maximum(a[go], b[go])), c,
                     0.5 * (a[go] + b[go]))
        rss, sol = solve(coord[go], inv(c, use_log[go]), start[go])
        g = g_cut(rss)
        pos = g > 0
        b[go[pos]], g_b[go[pos]] = c[pos], g[pos]
        g_a[go[pos & (side[go] == 1)]] /= 2.0
        a[go[~pos]], g_a[go[~pos]], start[go[~pos]] = c[~pos], g[~pos], sol[~pos]
        g_b[go[~pos & (side[go] == -1)]] /= 2.0
        side[go] = np.where(pos, 1, -1)
        done = (np.abs(b[go] - a[go]) <= 1e-6 * (1 + np.abs(b[go]))) | (np.abs(g) <= 1e-9)
        value[go[done]], state[go[done]] = inv(c[done], use_log[go[done]]), 3
    left = state == 1                               # out of rounds: the inner end of the bracket
    value[left] = inv(a[left], use_log[left])
    lows, highs = value[0::2], value[1::2]
    return [ProfileInterval(float(lows[j]), float(highs[j]), bool(state[2 * j] == 2), bool(state[2 * j + 1] == 2))
            for j in range(P)]


def bootstrap_intervals(fit: RelationFit, energy, barrier, level: float = 0.95, *, n_boot: int = 1000,
                        random_state: int | None = 0) -> dict[str, tuple[float, float]]:
    """Case-resampling percentile intervals; each resample is refitted from θ̂."""
    relation = fit.relation
    x, y = check_pairs(energy, barrier, min_n=relation.n_params + 1)
    rng = np.random.default_rng(random_state)
    counts = rng.multinomial(x.size, np.full(x.size, 1.0 / x.size), size=int(n_boot)).astype(float)
    thetas = refit_weighted(relation, x, y, counts, theta0=fit.params)
    q = [(1 - level) / 2 * 100, (1 + level) / 2 * 100]
    return {name: tuple(float(v) for v in np.percentile(thetas[:, k], q))
            for k, name in enumerate(relation.param_names)}
