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
               "structure_curve": (OKABE_ITO[1], "v"), "curve_on_true_energy": (OKABE_ITO[3], "D"),
               "family_mean": (OKABE_ITO[7], "x")}
ROUTE_LABEL = {"two_stage": "two-stage route", "hybrid": "hybrid route", "direct": "black box",
               "structure_curve": "structure curve route", "curve_on_true_energy": "curve on computed energies",
               "family_mean": "family mean"}


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
    """A grid over the members' reaction energies (kcal/mol) with 15 % of the span plus
    1 kcal/mol of padding each side: padding in kcal/mol, so every unit shows the same picture."""
    lo, hi = float(np.min(x)), float(np.max(x))
    pad = 0.15 * (hi - lo + 1.0)
    return np.linspace(lo - pad, hi + pad, 400)


def _limits_kcal(values_kcal, fraction: float = 0.12, minimum: float = 0.5) -> tuple[float, float]:
    """Axis limits (kcal/mol) that hold ``values_kcal`` with ``fraction`` of their span (at least
    ``minimum`` kcal/mol) of room each side; converted to the user's unit only afterwards."""
    v = np.asarray(values_kcal, dtype=float)
    v = v[np.isfinite(v)]
    lo, hi = float(v.min()), float(v.max())
    pad = max(fraction * (hi - lo), minimum)
    return lo - pad, hi + pad


def energy_axis_labels(kind: str, unit: str) -> tuple[str, str]:
    """(x label, y label) of a barrier-against-reaction-energy plot, matching ``kind``."""
    from .labels import energy_labels_tex

    reaction, barrier = energy_labels_tex(kind)
    return f"reaction energy {reaction} ({unit})", f"barrier {barrier} ({unit})"


def draw_curve(ax, model, unit: str | None = None, comparison=None, *, picks=None):
    """Members, the model's relation (bold) with its prediction band, its floor and uphill
    asymptote, the other relations of ``comparison`` (a :class:`~barrierscope.curves.compare.Comparison`)
    drawn light, and suggested picks (kcal/mol records), on ``ax``, in ``unit`` (default: the
    model's). The axes hold every member, pick and the band over the members' range; padding is
    set in kcal/mol before conversion."""
    from ..relations import get_relation

    unit = unit or model.units
    curve = model.curve
    e_kcal = np.asarray(model.training["energy"], dtype=float)
    b_kcal = np.asarray(model.training["barrier"], dtype=float)
    grid_kcal = _grid(e_kcal)
    grid = to_unit(grid_kcal, unit)
    _, low, high = curve.predict_interval(grid_kcal, model.level)
    chosen = curve.relation_.name
    ax.fill_between(grid, to_unit(low, unit), to_unit(high, unit), color=OKABE_ITO[5], alpha=0.3, lw=0,
                    label=f"{model.level:.0%} prediction band")
    fits = {} if comparison is None else {k: s.fit for k, s in comparison.scores.items() if s.fit is not None}
    for name, fit in fits.items():
        if name == chosen:
            continue
        color, ls = relation_style(name)
        ax.plot(grid, to_unit(fit.predict(grid_kcal), unit), color=color, ls=ls, lw=0.9, alpha=0.45,
                label=f"{get_relation(name).label} (LOO RMSE {to_unit(comparison.scores[name].loo_rmse, unit):.2g})")
    color, ls = relation_style(chosen)
    score = "" if comparison is None or chosen not in comparison.scores else \
        f" (LOO RMSE {to_unit(comparison.scores[chosen].loo_rmse, unit):.2g})"
    ax.plot(grid, to_unit(curve.predict(grid_kcal), unit), color=color, ls="-", lw=2.4, zorder=4,
            label=f"the model: {curve.relation_.label}{score}")
    if chosen == "asymptotic":
        d = curve.params_dict()
        ax.axhline(to_unit(d["floor"], unit), color="black", lw=0.8, ls=(0, (2, 2)), label="floor F")
        ax.plot(grid, grid + to_unit(d["floor"] - d["midpoint"], unit), color="black", lw=0.8, ls=(0, (1, 2)),
                label="uphill asymptote (slope 1)")
    ax.scatter(to_unit(e_kcal, unit), to_unit(b_kcal, unit), s=22, color="black", zorder=5, label="members")
    shown = [b_kcal, curve.predict(e_kcal)]
    inside = (grid_kcal >= e_kcal.min()) & (grid_kcal <= e_kcal.max())
    shown += [low[inside], high[inside]]
    if picks:
        pe = np.array([p.energy for p in picks], dtype=float)
        pb = curve.predict(pe)
        ax.scatter(to_unit(pe, unit), to_unit(pb, unit), s=90, marker="*", color=OKABE_ITO[1],
                   edgecolor="black", zorder=6, label="suggested next calculations")
        shown.append(pb)
    xlabel, ylabel = energy_axis_labels(model.energy_kind, unit)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.set_xlim(*to_unit(np.array([grid_kcal[0], grid_kcal[-1]]), unit))
    # The asymptote and the other relations must not set the scale: the members, picks and band do.
    ax.set_ylim(*to_unit(np.array(_limits_kcal(np.concatenate([np.ravel(v) for v in shown]))), unit))
    ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0, frameon=False)
    return ax


def draw_alpha(ax, model, unit: str | None = None):
    """Leffler α = d barrier / d(reaction energy) along the fitted relation, with each member's α."""
    unit = unit or model.units
    curve = model.curve
    e = np.asarray(model.training["energy"], dtype=float)
    grid = _grid(e)
    ax.plot(to_unit(grid, unit), curve.slope(grid), color=OKABE_ITO[0], label=f"α of the model's {curve.relation_.label}")
    ax.scatter(to_unit(e, unit), curve.slope(e), s=20, color="black", zorder=5, label="members")
    ax.axhline(0.5, color="black", lw=0.7, ls=":")
    ax.set_ylim(-0.05, 1.05)
    ax.set_xlabel(energy_axis_labels(model.energy_kind, unit)[0])
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
    from ..units import to_kcal

    allv = np.concatenate([y, *preds.values()])
    lim = tuple(to_unit(np.array(_limits_kcal(to_kcal(allv, unit), fraction=0.05, minimum=1.0)), unit))
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


def residual_png(members: dict, unit: str, kind: str = "free-energy") -> bytes:
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
    ax.set_xlabel(energy_axis_labels(kind, unit)[0])
    ax.set_ylabel(f"residual ({unit})")
    ax.set_title("leave-one-out residuals: predicted − computed barrier", fontsize=9)
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
    ax.set_xlabel("mean distance to the 3 nearest training members (standardised descriptors)")
    ax.set_ylabel("density")
    ax.legend(fontsize=7)
    return png(fig)


def figure_png(draw, *args, size=(6.4, 4.4), **kwargs) -> bytes:
    """A ``draw_*`` function rendered alone as PNG bytes."""
    fig = new_figure(size)
    draw(fig.subplots(), *args, **kwargs)
    return png(fig)


def hammett_png(hammett, barrier_kcal, unit: str) -> bytes:
    """Barrier and log10 k (Eyring, at the record's temperature) against Σσ: the members, the
    line over the Σσ range it holds for and, when the series bends, the two segments and the
    bend; ``hammett`` in kcal/mol (:func:`..jobs.hammett.hammett_record`). No line is drawn
    below a zero barrier, so log k never passes k_BT/h, drawn as the ceiling."""
    from ..kinetics import eyring_rate

    s = np.asarray([np.nan if v is None else v for v in hammett.sigma_sum], dtype=float)
    b = np.asarray(barrier_kcal, dtype=float)
    ok = np.isfinite(s) & np.isfinite(b)
    t = hammett.temperature
    lo_s, hi_s = hammett.rho_range or [float(s[ok].min()), float(s[ok].max())]
    lines = [(np.linspace(lo_s, hi_s, 50), None, "-", OKABE_ITO[4],
              f"Hammett line, Σσ {lo_s:.2g} to {hi_s:.2g}: ρ = {hammett.rho:.2f} "
              f"[{hammett.rho_ci95[0]:.2f}, {hammett.rho_ci95[1]:.2f}]")]
    if hammett.bend:
        a, (c1, c2), s0 = hammett.bend_intercept, hammett.bend_slopes, hammett.bend_at
        grid = np.linspace(float(s[ok].min()), float(s[ok].max()), 200)
        hinge = a + c1 * grid + (c2 - c1) * np.maximum(0.0, grid - s0)
        what = "the curve's floor" if hammett.bend_kind == "floor" else "slope change"
        lines.append((grid, hinge, "--", OKABE_ITO[2], f"two segments, bend at Σσ ≈ {s0:.2f} ({what})"))
    fig = new_figure((9.6, 3.9))
    left, right = fig.subplots(1, 2)
    left.plot(s[ok], to_unit(b[ok], unit), "o", color=OKABE_ITO[0], label="members")
    right.plot(s[ok], np.log10(eyring_rate(b[ok], t)), "o", color=OKABE_ITO[0], label="members")
    ceiling = float(np.log10(eyring_rate(0.0, t)))
    for grid, values, style, colour, label in lines:
        y = hammett.barrier_at_zero_sigma + hammett.barrier_per_sigma * grid if values is None else values
        y = np.where(y >= 0.0, y, np.nan)          # a line below a zero barrier is no barrier at all
        left.plot(grid, to_unit(y, unit), style, color=colour, label=label)
        right.plot(grid, np.log10(eyring_rate(y, t)), style, color=colour, label=label)
    if hammett.bend:
        for ax in (left, right):
            ax.axvline(hammett.bend_at, color=OKABE_ITO[7], lw=0.6, ls=":")
    right.axhline(ceiling, color=OKABE_ITO[7], lw=0.8, ls="-.", label="k_BT/h (zero barrier)")
    left.set_xlabel("Σσ")
    left.set_ylabel(f"barrier ({unit})")
    right.set_xlabel("Σσ")
    right.set_ylabel(f"log10 k (s⁻¹, Eyring, {t:g} K)")
    top = max(ceiling, float(np.nanmax(np.log10(eyring_rate(b[ok], t)))))
    right.set_ylim(top=top + 0.05 * (top - right.get_ylim()[0]))
    left.legend(fontsize=7)
    return png(fig)


def families_png(families: dict, relation: str, shared, energy, *, barrier, fam, names, unit: str,
                 kind: str = "free-energy") -> bytes:
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
    xlabel, ylabel = energy_axis_labels(kind, unit)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.set_title("shared: " + (", ".join(shared) or "none"), fontsize=9)
    ax.legend(fontsize=7, ncol=2)
    return png(fig)
