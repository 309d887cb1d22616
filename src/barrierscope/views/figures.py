"""Figures (matplotlib): ``draw_*`` functions draw on an Axes the caller passes (the report,
a notebook); ``*_png`` wrap them for the report.

Colours are the Okabe–Ito palette (M. Okabe, K. Ito, *Color Universal Design*, 2008; B. Wong,
Nat. Methods 2011, 8, 441), which colour-blind readers can tell apart; every series also has
its own marker or line style, so the figures still read in grey. Relations get their style
from their place in the registry, so a new relation is drawn without edits here.
"""

from __future__ import annotations

import io

import numpy as np

from ..relations import EXTRA_RELATIONS, RELATIONS
from .units import to_unit

OKABE_ITO = ("#0072B2", "#E69F00", "#009E73", "#CC79A7", "#D55E00", "#56B4E9", "#F0E442", "#000000")
LINESTYLES = ("-", "--", ":", "-.", (0, (5, 1, 1, 1)), (0, (3, 1, 1, 1, 1, 1)), (0, (1, 1)))
ROUTE_STYLE = {"two_stage": (OKABE_ITO[0], "o"), "hybrid": (OKABE_ITO[2], "s"), "direct": (OKABE_ITO[4], "^"),
               "curve_on_true_energy": (OKABE_ITO[3], "D"), "family_mean": (OKABE_ITO[7], "x")}
ROUTE_LABEL = {"two_stage": "two-stage", "hybrid": "hybrid", "direct": "direct (black box)",
               "curve_on_true_energy": "curve on true dE", "family_mean": "family mean"}


def relation_style(name: str) -> tuple[str, object]:
    """(colour, line style) of a relation, from its position in the registry (asymptotic in blue)."""
    names = ["asymptotic"] + [n for n in [*RELATIONS, *EXTRA_RELATIONS] if n != "asymptotic"]
    k = names.index(name) if name in names else len(names)
    return OKABE_ITO[k % len(OKABE_ITO)], LINESTYLES[k % len(LINESTYLES)]


def new_figure(figsize):
    """A matplotlib Figure outside pyplot: no window, whatever backend the user has chosen."""
    from matplotlib.figure import Figure

    # The constrained layout fits labels in one pass (a tight bounding box renders twice).
    return Figure(figsize=figsize, layout="constrained")


def png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100)
    return buf.getvalue()


def _grid(x):
    lo, hi = float(np.min(x)), float(np.max(x))
    pad = 0.15 * (hi - lo + 1.0)
    return np.linspace(lo - pad, hi + pad, 400)


def draw_curve(ax, model, unit: str | None = None, comparison=None, *, picks=None):
    """Members, the fitted relation with its prediction band, its floor and uphill asymptote,
    every relation of ``comparison`` (a :class:`~barrierscope.curves.compare.Comparison`) and
    suggested picks (kcal/mol records), on ``ax``, in ``unit`` (default: the model's)."""
    unit = unit or model.units
    curve = model.curve
    e_kcal = np.asarray(model.training["energy"], dtype=float)
    x, y = to_unit(e_kcal, unit), to_unit(model.training["barrier"], unit)
    grid_kcal = _grid(e_kcal)
    grid = to_unit(grid_kcal, unit)
    _, low, high = curve.predict_interval(grid_kcal, model.level)
    ax.fill_between(grid, to_unit(low, unit), to_unit(high, unit), color=OKABE_ITO[5], alpha=0.3,
                    label=f"{curve.relation_.name}, {model.level:.0%} prediction band")
    fits = {} if comparison is None else {k: s.fit for k, s in comparison.scores.items() if s.fit is not None}
    fits.setdefault(curve.relation_.name, None)
    for name, fit in fits.items():
        color, ls = relation_style(name)
        yhat = curve.predict(grid_kcal) if fit is None else fit.predict(grid_kcal)
        ax.plot(grid, to_unit(yhat, unit), color=color, ls=ls, lw=1.6 if name == curve.relation_.name else 1.0,
                label=name + ("" if comparison is None or fit is None else
                              f" (LOO RMSE {to_unit(comparison.scores[name].loo_rmse, unit):.2g})"))
    if curve.relation_.name == "asymptotic":
        d = curve.params_dict()
        ax.axhline(to_unit(d["floor"], unit), color="black", lw=0.8, ls=(0, (2, 2)), label="floor F")
        ax.plot(grid, grid + to_unit(d["floor"] - d["midpoint"], unit), color="black", lw=0.8, ls=(0, (1, 2)),
                label="uphill asymptote dE + U")
    ax.scatter(x, y, s=22, color="black", zorder=5, label="members")
    if picks:
        pe = np.array([p.energy for p in picks], dtype=float)
        ax.scatter(to_unit(pe, unit), to_unit(curve.predict(pe), unit), s=90, marker="*", color=OKABE_ITO[1],
                   edgecolor="black", zorder=6, label="suggested next")
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel(f"barrier dE‡ ({unit})")
    span = float(np.ptp(y)) + 1.0
    ax.set_ylim(float(np.min(y)) - 0.25 * span, float(np.max(y)) + 0.25 * span)  # the asymptote must not set the scale
    ax.legend(fontsize=7, loc="upper left")
    return ax


def draw_alpha(ax, model, unit: str | None = None):
    """Leffler α = d barrier / d dE along the fitted relation, with each member's α."""
    unit = unit or model.units
    curve = model.curve
    e = np.asarray(model.training["energy"], dtype=float)
    grid = _grid(e)
    ax.plot(to_unit(grid, unit), curve.slope(grid), color=OKABE_ITO[0], label=f"α of the {curve.relation_.name} relation")
    ax.scatter(to_unit(e, unit), curve.slope(e), s=20, color="black", zorder=5, label="members")
    ax.axhline(0.5, color="black", lw=0.7, ls=":")
    ax.set_ylim(-0.05, 1.05)
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel("Leffler α (dimensionless)")
    ax.legend(fontsize=7)
    return ax


def parity_png(members: dict, routes: dict, unit: str) -> bytes:
    """Leave-one-out predictions against the computed barriers, one panel per route (``members``
    and ``routes`` already in ``unit``)."""
    y = np.asarray(members["barrier"], dtype=float)
    names = [r for r in ROUTE_STYLE if r in members["pred"] and r != "family_mean"]
    fig = new_figure((3.0 * len(names), 3.1))
    axes = fig.subplots(1, len(names), sharex=True, sharey=True, squeeze=False)
    preds = {r: np.asarray(members["pred"][r], dtype=float) for r in names}
    allv = np.concatenate([y, *preds.values()])
    lim = (float(np.nanmin(allv)) - 1, float(np.nanmax(allv)) + 1)
    for ax, r in zip(axes[0], names):
        color, marker = ROUTE_STYLE[r]
        ax.plot(lim, lim, color="black", lw=0.8)
        ax.scatter(y, preds[r], s=18, color=color, marker=marker)
        ax.set_title(f"{ROUTE_LABEL[r]}\nMAE {routes[r]['mae']:.2g}, Q² {routes[r]['r2']:.2f}", fontsize=8)
        ax.set_xlim(lim)
        ax.set_ylim(lim)
        ax.set_xlabel(f"computed barrier ({unit})")
    axes[0][0].set_ylabel(f"LOO prediction ({unit})")
    return png(fig)


def residual_png(members: dict, unit: str) -> bytes:
    """LOO residuals (predicted − computed) against the reaction energy (``members`` in ``unit``)."""
    x, y = np.asarray(members["energy"], dtype=float), np.asarray(members["barrier"], dtype=float)
    fig = new_figure((6.4, 3.2))
    ax = fig.subplots()
    for r in ("two_stage", "direct", "curve_on_true_energy"):
        if r in members["pred"]:
            color, marker = ROUTE_STYLE[r]
            ax.scatter(x, np.asarray(members["pred"][r], dtype=float) - y, s=18, color=color, marker=marker,
                       label=ROUTE_LABEL[r])
    ax.axhline(0.0, color="black", lw=0.8)
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel(f"LOO residual ({unit})")
    ax.legend(fontsize=7)
    return png(fig)


def importance_png(names, importance, unit: str, top: int = 15) -> bytes:
    """Permutation importance of the energy stage's descriptors (increase in RMSE, in ``unit``)."""
    order = np.argsort(importance)[::-1][:top][::-1]
    fig = new_figure((6.4, 0.28 * len(order) + 0.9))
    ax = fig.subplots()
    ax.barh([names[i] for i in order], [importance[i] for i in order], color=OKABE_ITO[0], edgecolor="black",
            hatch="//")
    ax.set_xlabel(f"increase in energy-stage RMSE when shuffled ({unit})")
    return png(fig)


def domain_png(train_distances, threshold: float, library_distances=None) -> bytes:
    """Distances to the k nearest training members (standardised descriptor space)."""
    fig = new_figure((6.4, 3.0))
    ax = fig.subplots()
    if library_distances is not None and len(library_distances):
        d = np.asarray(library_distances, dtype=float)
        ax.hist(d[np.isfinite(d)], bins=30, color=OKABE_ITO[1], alpha=0.6, density=True, label="screened library",
                hatch="\\\\", edgecolor="black", lw=0.3)
    ax.hist(train_distances, bins=min(30, max(5, len(train_distances) // 2)), color=OKABE_ITO[0], alpha=0.7,
            density=True, label="training members (leave-one-out)", edgecolor="black", lw=0.3)
    if np.isfinite(threshold):
        ax.axvline(threshold, color="black", ls="--", label="domain threshold")
    ax.set_xlabel("mean distance to the 3 nearest training members (standardised descriptors, dimensionless)")
    ax.set_ylabel("density")
    ax.legend(fontsize=7)
    return png(fig)


def figure_png(draw, *args, size=(6.4, 4.4), **kwargs) -> bytes:
    """A ``draw_*`` function rendered alone as PNG bytes."""
    fig = new_figure(size)
    draw(fig.subplots(), *args, **kwargs)
    return png(fig)


def hammett_png(hammett, barrier_kcal, unit: str) -> bytes:
    """Barrier and log10 k (Eyring, at the record's temperature) against Σσ, each with the
    fitted line; ``hammett`` in kcal/mol (:func:`..jobs.hammett.hammett_record`)."""
    from ..kinetics import eyring_rate

    s = np.asarray([np.nan if v is None else v for v in hammett.sigma_sum], dtype=float)
    b = np.asarray(barrier_kcal, dtype=float)
    ok = np.isfinite(s) & np.isfinite(b)
    grid = np.linspace(s[ok].min() - 0.1, s[ok].max() + 0.1, 50)
    line = hammett.barrier_at_zero_sigma + hammett.barrier_per_sigma * grid
    t = hammett.temperature
    fig = new_figure((8.8, 3.6))
    left, right = fig.subplots(1, 2)
    left.plot(s[ok], to_unit(b[ok], unit), "o", color=OKABE_ITO[0], label="members")
    left.plot(grid, to_unit(line, unit), "-", color=OKABE_ITO[4], label="least-squares line")
    left.set_xlabel("Σσ")
    left.set_ylabel(f"barrier ({unit})")
    right.plot(s[ok], np.log10(eyring_rate(b[ok], t)), "o", color=OKABE_ITO[0], label="members")
    lo, hi = hammett.rho_ci95
    right.plot(grid, np.log10(eyring_rate(line, t)), "-", color=OKABE_ITO[4],
               label=f"ρ = {hammett.rho:.2f} [{lo:.2f}, {hi:.2f}]")
    right.set_xlabel("Σσ")
    right.set_ylabel(f"log10 k (s⁻¹, Eyring, {t:g} K)")
    for ax in (left, right):
        ax.legend(fontsize=7)
    return png(fig)


def families_png(families: dict, relation: str, shared, energy, *, barrier, fam, names, unit: str) -> bytes:
    """Every family's members and its jointly fitted curve, one colour and marker each;
    ``families`` {name: FamilyEntry} (kcal/mol) of ``relation``, with ``shared`` parameters."""
    from ..relations import get_relation

    rel = get_relation(relation)
    x, y, fam = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float), np.asarray(fam)
    fig = new_figure((6.8, 4.6))
    ax = fig.subplots()
    markers = ("o", "s", "^", "D", "v", "P", "X", "<", ">", "*")
    for k, name in enumerate(names):
        colour, style = OKABE_ITO[k % len(OKABE_ITO)], LINESTYLES[k % len(LINESTYLES)]
        sel = fam == k
        f = families[name]
        theta = np.array(list(f.params.values()))
        grid = np.linspace(x[sel].min() - 3.0, x[sel].max() + 3.0, 200)
        ax.plot(to_unit(x[sel], unit), to_unit(y[sel], unit), markers[k % len(markers)], color=colour, ms=4,
                label=f"{name} (n = {f.n})")
        ax.plot(to_unit(grid, unit), to_unit(rel.barrier(grid, theta), unit), color=colour, ls=style, lw=1.4)
    ax.set_xlabel(f"reaction energy ({unit})")
    ax.set_ylabel(f"barrier ({unit})")
    ax.set_title("shared: " + (", ".join(shared) or "none"), fontsize=9)
    ax.legend(fontsize=7, ncol=2)
    return png(fig)
