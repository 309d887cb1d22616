"""The report's figures (matplotlib, Agg backend), as PNG bytes.

Colours are the Okabe–Ito palette (M. Okabe, K. Ito, *Color Universal Design*, 2008; B. Wong,
Nat. Methods 2011, 8, 441), which colour-blind readers can tell apart; every series also has
its own marker or line style, so the figures still read in grey.
"""

from __future__ import annotations

import io

import numpy as np

OKABE_ITO = {"black": "#000000", "orange": "#E69F00", "sky": "#56B4E9", "green": "#009E73",
             "yellow": "#F0E442", "blue": "#0072B2", "vermillion": "#D55E00", "purple": "#CC79A7"}
RELATION_STYLE = {
    "asymptotic": (OKABE_ITO["blue"], "-"), "linear": (OKABE_ITO["orange"], "--"),
    "marcus": (OKABE_ITO["green"], ":"), "agmon_levine": (OKABE_ITO["purple"], "-."),
    "rehm_weller": (OKABE_ITO["vermillion"], (0, (5, 1, 1, 1))),
}
ROUTE_STYLE = {"two_stage": (OKABE_ITO["blue"], "o"), "hybrid": (OKABE_ITO["green"], "s"),
               "direct": (OKABE_ITO["vermillion"], "^"), "curve_on_true_energy": (OKABE_ITO["purple"], "D")}
ROUTE_LABEL = {"two_stage": "two-stage", "hybrid": "hybrid", "direct": "direct (black box)",
               "curve_on_true_energy": "curve on true dE"}


def _plt():
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    plt.rcParams.update({"font.size": 9, "axes.grid": True, "grid.alpha": 0.3, "figure.dpi": 110})
    return plt


def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", bbox_inches="tight")
    _plt().close(fig)
    return buf.getvalue()


def curve_figure(model, comparison, unit: str, factor: float, picks=None) -> bytes:
    """Barrier against reaction energy: members, every relation, the 90 % band, asymptotes."""
    plt = _plt()
    curve = model.curve
    x = np.asarray(model.training["energy"]) / factor
    y = np.asarray(model.training["barrier"]) / factor
    lo, hi = float(np.min(x)), float(np.max(x))
    pad = 0.15 * (hi - lo + 1.0)
    grid = np.linspace(lo - pad, hi + pad, 400)
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    mean, low, high = curve.predict_interval(grid * factor, model.level)
    ax.fill_between(grid, low / factor, high / factor, color=OKABE_ITO["sky"], alpha=0.3,
                    label=f"asymptotic curve, {model.level:.0%} prediction band")
    for name, score in comparison.scores.items():
        if score.fit is None:
            continue
        color, ls = RELATION_STYLE.get(name, (OKABE_ITO["black"], "-"))
        ax.plot(grid, score.fit.predict(grid * factor) / factor, color=color, ls=ls, lw=1.6 if name == "asymptotic" else 1.1,
                label=f"{name} (LOO RMSE {score.loo_rmse / factor:.2g})")
    if curve.relation_.name == "asymptotic":
        d = curve.params_dict()
        u = d["floor"] - d["midpoint"]
        ax.axhline(d["floor"] / factor, color=OKABE_ITO["black"], lw=0.8, ls=(0, (2, 2)), label="floor F")
        ax.plot(grid, grid + u / factor, color=OKABE_ITO["black"], lw=0.8, ls=(0, (1, 2)), label="uphill asymptote dE + U")
    ax.scatter(x, y, s=22, color=OKABE_ITO["black"], zorder=5, label="members")
    if picks:
        px = np.array([p["energy"] for p in picks]) / factor
        ax.scatter(px, curve.predict(px * factor) / factor, s=90, marker="*", color=OKABE_ITO["orange"],
                   edgecolor="black", zorder=6, label="suggested next")
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel(f"barrier dE‡ ({unit})")
    span = float(np.max(y) - np.min(y)) + 1.0
    ax.set_ylim(float(np.min(y)) - 0.25 * span, float(np.max(y)) + 0.25 * span)  # the asymptote must not set the scale
    ax.legend(fontsize=7, loc="upper left")
    return _png(fig)


def alpha_figure(model, unit: str, factor: float) -> bytes:
    """Leffler α = d barrier / d dE along the fitted relation, with each member's α."""
    plt = _plt()
    curve = model.curve
    x = np.asarray(model.training["energy"]) / factor
    lo, hi = float(np.min(x)), float(np.max(x))
    pad = 0.15 * (hi - lo + 1.0)
    grid = np.linspace(lo - pad, hi + pad, 400)
    fig, ax = plt.subplots(figsize=(6.4, 3.2))
    ax.plot(grid, curve.slope(grid * factor), color=OKABE_ITO["blue"], label=f"α of the {curve.relation_.name} relation")
    ax.scatter(x, curve.slope(x * factor), s=20, color=OKABE_ITO["black"], zorder=5, label="members")
    ax.axhline(0.5, color=OKABE_ITO["black"], lw=0.7, ls=":")
    ax.set_ylim(-0.05, 1.05)
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel("Leffler α (dimensionless)")
    ax.legend(fontsize=7)
    return _png(fig)


def parity_figure(summary: dict, unit: str, factor: float) -> bytes:
    """Leave-one-out predictions against the computed barriers, one panel per route, shared axes."""
    plt = _plt()
    loo = summary["loo"]
    y = np.asarray(loo["barrier"]) / factor
    routes = [r for r in ("two_stage", "hybrid", "direct", "curve_on_true_energy") if r in loo["pred"]]
    fig, axes = plt.subplots(1, len(routes), figsize=(3.0 * len(routes), 3.1), sharex=True, sharey=True, squeeze=False)
    preds = {r: np.asarray(loo["pred"][r]) / factor for r in routes}
    allv = np.concatenate([y, *preds.values()])
    lim = (float(np.nanmin(allv)) - 1, float(np.nanmax(allv)) + 1)
    for ax, r in zip(axes[0], routes):
        color, marker = ROUTE_STYLE[r]
        ax.plot(lim, lim, color="black", lw=0.8)
        ax.scatter(y, preds[r], s=18, color=color, marker=marker)
        m = summary["routes"][r]
        ax.set_title(f"{ROUTE_LABEL[r]}\nMAE {m['mae'] / factor:.2g}, Q² {m['r2']:.2f}", fontsize=8)
        ax.set_xlim(lim)
        ax.set_ylim(lim)
        ax.set_xlabel(f"computed barrier ({unit})")
    axes[0][0].set_ylabel(f"LOO prediction ({unit})")
    return _png(fig)


def residual_figure(summary: dict, unit: str, factor: float) -> bytes:
    """LOO residuals (predicted − computed) against the reaction energy."""
    plt = _plt()
    loo = summary["loo"]
    x = np.asarray(loo["energy"]) / factor
    y = np.asarray(loo["barrier"]) / factor
    fig, ax = plt.subplots(figsize=(6.4, 3.2))
    for r in ("two_stage", "direct", "curve_on_true_energy"):
        if r not in loo["pred"]:
            continue
        color, marker = ROUTE_STYLE[r]
        ax.scatter(x, np.asarray(loo["pred"][r]) / factor - y, s=18, color=color, marker=marker, label=ROUTE_LABEL[r])
    ax.axhline(0.0, color="black", lw=0.8)
    ax.set_xlabel(f"reaction energy dE ({unit})")
    ax.set_ylabel(f"LOO residual ({unit})")
    ax.legend(fontsize=7)
    return _png(fig)


def importance_figure(names, importance, unit: str, top: int = 15) -> bytes:
    """Permutation importance of the energy stage's descriptors (increase in RMSE)."""
    plt = _plt()
    order = np.argsort(importance)[::-1][:top][::-1]
    fig, ax = plt.subplots(figsize=(6.4, 0.28 * len(order) + 0.9))
    ax.barh([names[i] for i in order], [importance[i] for i in order], color=OKABE_ITO["blue"],
            edgecolor="black", hatch="//")
    ax.set_xlabel(f"increase in energy-stage RMSE when shuffled ({unit})")
    return _png(fig)


def domain_figure(train_distances, threshold: float, library_distances=None) -> bytes:
    """Distances to the k nearest training members (standardised descriptor space)."""
    plt = _plt()
    fig, ax = plt.subplots(figsize=(6.4, 3.0))
    bins = 30
    if library_distances is not None and len(library_distances):
        d = np.asarray(library_distances)
        d = d[np.isfinite(d)]
        ax.hist(d, bins=bins, color=OKABE_ITO["orange"], alpha=0.6, density=True, label="screened library",
                hatch="\\\\", edgecolor="black", lw=0.3)
    ax.hist(train_distances, bins=min(bins, max(5, len(train_distances) // 2)), color=OKABE_ITO["blue"], alpha=0.7,
            density=True, label="training members (leave-one-out)", edgecolor="black", lw=0.3)
    if np.isfinite(threshold):
        ax.axvline(threshold, color="black", ls="--", label="domain threshold")
    ax.set_xlabel("mean distance to the 3 nearest training members (standardised descriptors, dimensionless)")
    ax.set_ylabel("density")
    ax.legend(fontsize=7)
    return _png(fig)
