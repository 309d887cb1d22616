"""The Hammett plot: barrier and log k against the summed substituent constant Σσ, with ρ.

log10(k/k0) = ρ·Σσ (L. P. Hammett, J. Am. Chem. Soc. 1937, 59, 96). With k from the Eyring
equation at temperature T, log10 k = const − ΔG‡/(RT ln 10), so a straight line of the
barrier against Σσ with slope b (kcal/mol per unit σ) is a Hammett line with

    ρ = −b / (RT ln 10)

and its interval follows from b's. Σσ sums each position's constant: σm for a position meta
to the reaction centre, σp for para (read from the core: :func:`ring_relations`); outside
core mode, or where the core does not say, σp is used for every position and the plot says
so. Ortho positions have no Hammett constant and leave the plot. Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from ..kinetics import R_KCAL
from .intervals import t_quantile


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


def hammett_fit(sigma, barrier, temperature: float = 298.15, level: float = 0.95) -> dict | None:
    """Least-squares line of the barrier (kcal/mol) on Σσ over the members where both are
    finite: ``barrier_per_sigma`` (the slope, kcal/mol per σ) and ``rho`` (log10 k per σ at
    ``temperature``, K) with their ``level`` t-intervals, ``barrier_at_zero_sigma``, ``r2``, ``n``. None with fewer than 4 members
    or no spread in Σσ."""
    s, b = np.asarray(sigma, dtype=float), np.asarray(barrier, dtype=float)
    ok = np.isfinite(s) & np.isfinite(b)
    s, b = s[ok], b[ok]
    n = s.size
    if n < 4 or np.ptp(s) < 1e-9:
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
