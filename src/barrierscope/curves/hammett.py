"""The Hammett plot: barrier and log k against the summed substituent constant Σσ, with ρ.

log10(k/k0) = ρ·Σσ (L. P. Hammett, J. Am. Chem. Soc. 1937, 59, 96). With k from the Eyring
equation at temperature T, log10 k = const − ΔG‡/(RT ln 10), so a straight line of the
barrier against Σσ with slope b (kcal/mol per unit σ) is a Hammett line with

    ρ = −b / (RT ln 10)

and its interval follows from b's. Σσ sums each position's constant: σm for a position meta
to the reaction centre, σp for para (read from the core: :func:`ring_relations`); outside
core mode, or where the core does not say, σp is used for every position and the plot says
so. Ortho positions have no Hammett constant and leave the plot. Energies in kcal/mol.

A Hammett plot of computed barriers bends where the barrier-versus-reaction-energy curve
does: strong acceptors (or donors) push the barrier onto the curve's floor, where it stops
responding to σ. :func:`bend_test` sets the straight line against two straight segments joined
at a break point (the break point chosen by least squares over the Σσ range, at least three
members a side) by AICc (C. M. Hurvich, C.-L. Tsai, Biometrika 1989, 76, 297), with the
F-test beside it; when the segments win by more than :data:`BEND_DAICC`, ρ is quoted from the
steeper segment alone, over its Σσ range. A bend toward lower barriers is named as the
curve's floor, which is not necessarily a change of mechanism or rate-determining step.
"""

from __future__ import annotations

import numpy as np

from ..kinetics import R_KCAL
from .intervals import t_quantile
from .stats import aicc

#: AICc advantage the two segments need over the line (Burnham and Anderson's rule of thumb:
#: below 2 both models have substantial support; K. P. Burnham, D. R. Anderson, *Model
#: Selection and Multimodel Inference*, 2nd ed., Springer 2002, §2.6).
BEND_DAICC = 2.0
#: Fewest members on each side of a break point.
BEND_MIN_SIDE = 3


def ring_relations(core_smiles: str) -> dict[str, str]:
    """Position name (``R<n>``) → ``ortho``, ``meta`` or ``para`` to the reaction centre, for
    positions on the same six-membered aromatic ring as the centre: the one ring atom that
    carries a heavy-atom group other than the positions. Empty when the core is not of that
    kind (no ring, several candidate centres)."""
    from rdkit import Chem

    core = Chem.MolFromSmiles(core_smiles)
    if core is None:
        return {}
    position_of = {a.GetIdx(): f"R{a.GetAtomMapNum()}" for a in core.GetAtoms()
                   if a.GetAtomicNum() == 0 and a.GetAtomMapNum()}
    for ring in core.GetRingInfo().AtomRings():
        if len(ring) != 6 or not all(core.GetAtomWithIdx(i).GetIsAromatic() for i in ring):
            continue
        members = set(ring)
        centres = [i for i in ring if any(n.GetIdx() not in members and n.GetIdx() not in position_of
                                          and n.GetAtomicNum() > 1 for n in core.GetAtomWithIdx(i).GetNeighbors())]
        if len(centres) != 1:
            continue
        out = {}
        for dummy, name in position_of.items():
            anchor = core.GetAtomWithIdx(dummy).GetNeighbors()[0].GetIdx()
            if anchor in members:
                steps = abs(ring.index(anchor) - ring.index(centres[0]))
                out[name] = {1: "ortho", 2: "meta", 3: "para"}[min(steps, 6 - steps)]
        if out:
            return out
    return {}


def sigma_sum(X, positions, relations: dict[str, str]) -> tuple[np.ndarray, dict[str, str]]:
    """(Σσ per member, position → the constant used). ``X``: a DataFrame with the table tier's
    ``<position>_sigma_m``/``_sigma_p`` columns; NaN where a member's group is not tabulated."""
    used, total = {}, np.zeros(len(X))
    for p in positions:
        kind = relations.get(p, "para" if not relations else None)
        if kind not in ("meta", "para"):
            continue
        col = f"{p}_sigma_{'m' if kind == 'meta' else 'p'}"
        if col not in X.columns:
            continue
        used[p] = "σm" if kind == "meta" else "σp"
        total = total + X[col].to_numpy(dtype=float)
    return (total if used else np.full(len(X), np.nan)), used


def hinge_fit(s: np.ndarray, b: np.ndarray, min_side: int = BEND_MIN_SIDE, grid: int = 200) -> dict | None:
    """Two straight segments joined at a break point s0: b = a + c·s + d·max(0, s − s0), least
    squares, s0 on a grid over the Σσ values that leave ``min_side`` members a side. Returns
    ``at`` (s0), ``intercept`` (a), ``slopes`` [left c, right c + d] and ``rss``; None when the
    members cannot leave ``min_side`` a side."""
    order = np.sort(s)
    if order.size < 2 * min_side + 1 or order[min_side - 1] >= order[-min_side]:
        return None
    best = None
    for s0 in np.linspace(order[min_side - 1], order[-min_side], grid):
        if np.sum(s < s0) < min_side or np.sum(s > s0) < min_side:
            continue
        A = np.column_stack([np.ones_like(s), s, np.maximum(0.0, s - s0)])
        coef, *_ = np.linalg.lstsq(A, b, rcond=None)
        rss = float(np.sum((b - A @ coef) ** 2))
        if best is None or rss < best["rss"]:
            best = {"at": float(s0), "intercept": float(coef[0]), "slopes": [float(coef[1]), float(coef[1] + coef[2])],
                    "rss": rss}
    return best


def bend_test(s: np.ndarray, b: np.ndarray) -> dict | None:
    """The line against two segments (:func:`hinge_fit`) on the same members: ``aicc_line``,
    ``aicc_bend`` (k = 3 and 5 with the residual variance), ``f_p`` (the F-test of the two extra
    parameters; optimistic, as the break point is chosen from the data), ``bend`` (AICc lower
    by more than :data:`BEND_DAICC`) and the hinge itself. None with too few members."""
    from scipy import stats as st

    hinge = hinge_fit(s, b)
    if hinge is None:
        return None
    n = s.size
    A = np.column_stack([np.ones_like(s), s])
    coef, *_ = np.linalg.lstsq(A, b, rcond=None)
    rss_line = float(np.sum((b - A @ coef) ** 2))
    a_line, a_bend = aicc(rss_line, n, 3), aicc(hinge["rss"], n, 5)
    f_p = None
    if n > 4 and hinge["rss"] > 0:
        f = ((rss_line - hinge["rss"]) / 2.0) / (hinge["rss"] / (n - 4))
        f_p = float(st.f.sf(f, 2, n - 4))
    bend = bool(np.isfinite(a_line) and np.isfinite(a_bend) and a_line - a_bend > BEND_DAICC)
    return {"bend": bend, "aicc_line": a_line, "aicc_bend": a_bend, "f_p": f_p, "hinge": hinge}


def straight_part(s: np.ndarray, b: np.ndarray, hinge: dict) -> tuple[np.ndarray, str]:
    """(mask of the members on the steeper segment, what the flatter side is): ``floor`` when
    the flatter side holds the lower barriers (the curve's floor), else ``slope change``."""
    left, right = hinge["slopes"]
    steep_left = abs(left) >= abs(right)
    mask = s <= hinge["at"] if steep_left else s >= hinge["at"]
    flat = ~mask
    kind = "floor" if flat.any() and np.mean(b[flat]) < np.mean(b[mask]) else "slope change"
    return mask, kind


def hammett_fit(sigma, barrier, temperature: float = 298.15, level: float = 0.95) -> dict | None:
    """The Hammett line of the barrier (kcal/mol) on Σσ over the members where both are
    finite, tested for a bend (:func:`bend_test`): ``barrier_per_sigma`` (kcal/mol per σ) and
    ``rho`` (log10 k per σ at ``temperature``, K) with their ``level`` t-intervals,
    ``barrier_at_zero_sigma``, ``r2`` and ``n`` — of the steeper segment alone when the
    series bends, with ``rho_range`` the Σσ range they hold for — and the test's findings
    (``bend``, ``bend_kind``, ``bend_at``, ``bend_intercept``, ``bend_slopes``, ``aicc_line``,
    ``aicc_bend``, ``bend_f_p``, ``rho_all``: ρ of one line through every member). None with
    fewer than 4 members or no spread in Σσ."""
    s, b = np.asarray(sigma, dtype=float), np.asarray(barrier, dtype=float)
    ok = np.isfinite(s) & np.isfinite(b)
    s, b = s[ok], b[ok]
    if s.size < 4 or np.ptp(s) < 1e-9:
        return None
    whole = _line(s, b, temperature, level)
    test = bend_test(s, b)
    out = {"bend": False, "rho_all": whole["rho"], "rho_range": [float(s.min()), float(s.max())]}
    if test is not None:
        out.update(aicc_line=test["aicc_line"], aicc_bend=test["aicc_bend"], bend_f_p=test["f_p"])
    if test is None or not test["bend"]:
        return {**whole, **out}
    mask, kind = straight_part(s, b, test["hinge"])
    part = _line(s[mask], b[mask], temperature, level)
    if part is None:
        return {**whole, **out}
    h = test["hinge"]
    return {**part, **out, "bend": True, "bend_kind": kind, "bend_at": h["at"], "bend_intercept": h["intercept"],
            "bend_slopes": h["slopes"], "rho_range": [float(s[mask].min()), float(s[mask].max())]}


def _line(s, b, temperature: float, level: float) -> dict | None:
    """Least-squares line of b on s with t-intervals of its slope and of ρ (see the module)."""
    n = s.size
    if n < 3 or np.ptp(s) < 1e-9:
        return None
    sc = s - s.mean()
    slope = float(sc @ (b - b.mean()) / (sc @ sc))
    intercept = float(b.mean() - slope * s.mean())
    resid = b - intercept - slope * s
    se = float(np.sqrt(resid @ resid / (n - 2) / (sc @ sc)))
    q = t_quantile(level, n - 2)
    to_rho = -1.0 / (R_KCAL * temperature * np.log(10.0))
    ss_tot = float(((b - b.mean()) ** 2).sum())
    rho_ends = sorted([(slope - q * se) * to_rho, (slope + q * se) * to_rho])
    return {"n": n, "barrier_per_sigma": slope, "barrier_per_sigma_ci95": [slope - q * se, slope + q * se],
            "barrier_at_zero_sigma": intercept,
            "rho": slope * to_rho, "rho_ci95": rho_ends, "r2": 1.0 - float(resid @ resid) / ss_tot if ss_tot else None,
            "temperature": temperature}
