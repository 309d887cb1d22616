"""The structure-dependent curve in the report: what moves the intrinsic barrier, and the
family's curves for a few representative centres.

Energies are kcal/mol inside and shown in the model's unit.
"""

from __future__ import annotations

import numpy as np

from .html import esc, figure, num, table
from .units import to_unit

#: Effects listed in the report (the largest per standard deviation).
TOP_EFFECTS = 12


def member_intrinsic_barriers(structure) -> np.ndarray:
    """Each training member's own intrinsic barrier (kcal/mol): its curve at reaction energy 0."""
    theta = np.asarray(structure.train_theta_, dtype=float)
    return structure.relation_.barrier(np.zeros((theta.shape[0], 1)), theta)[:, 0]


def representative(structure, k: int = 3) -> list[int]:
    """Members whose intrinsic barriers sit at the 10th, 50th and 90th percentiles (indices)."""
    g0 = member_intrinsic_barriers(structure)
    picks = []
    for q in np.linspace(10, 90, k):
        i = int(np.argmin(np.abs(g0 - np.percentile(g0, q))))
        if i not in picks:
            picks.append(i)
    return picks


def draw_structure_curves(ax, model, unit: str | None = None):
    """Members coloured by their own intrinsic barrier, and the curves of the members at the
    10th, 50th and 90th percentile of it (named by id), in ``unit``."""
    from .figures import OKABE_ITO, LINESTYLES, _grid, energy_axis_labels

    unit = unit or model.units
    sc = model.structure
    e = np.asarray(model.training["energy"], dtype=float)
    b = np.asarray(model.training["barrier"], dtype=float)
    ids = model.training["ids"]
    g0 = member_intrinsic_barriers(sc)
    grid = _grid(e)
    theta = np.asarray(sc.train_theta_, dtype=float)
    for n, i in enumerate(representative(sc)):
        curve = sc.relation_.barrier(grid[:, None], np.tile(theta[i], (grid.size, 1)))[:, 0]
        ax.plot(to_unit(grid, unit), to_unit(curve, unit), color=OKABE_ITO[n % 8], ls=LINESTYLES[n % 7], lw=1.8,
                label=f"centre of {ids[i]} (intrinsic {to_unit(g0[i], unit):.3g})")
    points = ax.scatter(to_unit(e, unit), to_unit(b, unit), c=to_unit(g0, unit), cmap="viridis", s=24,
                        edgecolor="black", linewidths=0.3, zorder=5)
    ax.figure.colorbar(points, ax=ax, label=f"member's intrinsic barrier ({unit})")
    xlabel, ylabel = energy_axis_labels(model.energy_kind, unit)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    lo, hi = float(b.min()), float(b.max())
    pad = max(0.12 * (hi - lo), 0.5)
    ax.set_ylim(*to_unit(np.array([lo - pad, hi + pad]), unit))
    ax.set_xlim(*to_unit(np.array([grid[0], grid[-1]]), unit))
    ax.legend(fontsize=7, loc="upper left", frameon=False)
    return ax


def structure_section(model, unit: str, figures_dir=None) -> str:
    """The report's section on the structure curve ('' when the model has none)."""
    from .figures import figure_png

    sc = getattr(model, "structure", None)
    if sc is None or getattr(sc, "train_theta_", None) is None:
        return ""
    effects = sc.effects()
    rows = []
    for e in effects[:TOP_EFFECTS]:
        clear = e["low"] > 0 or e["high"] < 0
        per_sd = f"{to_unit(e['effect'], unit):+.3g} [{to_unit(e['low'], unit):+.3g}, {to_unit(e['high'], unit):+.3g}]"
        per_unit = (f"{to_unit(e['per_unit'], unit):+.3g} [{to_unit(e['per_unit_low'], unit):+.3g}, "
                    f"{to_unit(e['per_unit_high'], unit):+.3g}]")
        rows.append([esc(e["parameter"]), esc(e["descriptor"]), num(e["sd"]), per_unit, per_sd,
                     "yes" if clear else "no"])
    reduced = ("" if sc.components_ is None else
               f" The {len(sc.features_)} descriptors enter through their {len(sc.components_)} leading principal "
               "components; the effects are mapped back onto the descriptors.")
    text = (f"<h2>Where the reaction happens: the structure curve</h2><p>The {esc(sc.relation_.label)} relation "
            f"with its {esc(', '.join(sc.moving_))} linear in the standardised descriptors "
            f"({'the reaction-centre tier' if any('centre' in f for f in sc.features_) else 'every descriptor: no centre tier was computed'}), "
            f"penalised (penalty {sc.penalty_:g}, chosen by approximate leave-one-out), fitted with the curve: the "
            f"barrier still follows the reaction energy through the relation, and Leffler α moves with structure. "
            f"Residual scatter {num(to_unit(sc.sigma_, unit))} {esc(unit)}; approximate leave-one-out RMSE "
            f"{num(to_unit(sc.loo_rmse_, unit))} {esc(unit)}.{reduced} Effects from the fit at the weakest penalty "
            f"(95 % Wald intervals; {esc(unit)} per unit of the descriptor and per standard deviation); "
            f"<i>clear</i>: the interval excludes zero.</p>")
    text += table(["parameter", "descriptor", "SD", f"per unit ({esc(unit)})", f"per SD ({esc(unit)})", "clear"], rows)
    if len(effects) > TOP_EFFECTS:
        text += f"<p class='muted'>{len(effects) - TOP_EFFECTS} smaller effects not shown (the model file holds them).</p>"
    text += figure(figure_png(draw_structure_curves, model, unit, size=(7.0, 4.4)),
                   "Members coloured by their own intrinsic barrier (the structure curve at reaction energy 0); "
                   "curves of three members' centres, at the 10th, 50th and 90th percentile of it.",
                   "structure_curve", figures_dir)
    return text
