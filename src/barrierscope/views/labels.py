"""Energy labels that match what the energies are (``--kind``): ΔG for free energies, ΔH for
enthalpies, ΔE for electronic energies; the barrier with ‡, the reaction energy with r."""

from __future__ import annotations

_SYMBOL = {"free-energy": "G", "enthalpy": "H", "electronic": "E"}


def energy_labels(kind: str) -> tuple[str, str]:
    """(reaction energy, barrier) as text: ("ΔG_r", "ΔG‡") for free energies."""
    s = _SYMBOL.get(str(kind), "E")
    return f"Δ{s}_r", f"Δ{s}‡"


def energy_labels_tex(kind: str) -> tuple[str, str]:
    """The same for matplotlib's mathtext: (r"$\\Delta G_\\mathrm{r}$", r"$\\Delta G^\\ddagger$")."""
    s = _SYMBOL.get(str(kind), "E")
    return rf"$\Delta {s}_\mathrm{{r}}$", rf"$\Delta {s}^\ddagger$"


def energy_labels_html(kind: str) -> tuple[str, str]:
    """The same for HTML: ("ΔG<sub>r</sub>", "ΔG<sup>‡</sup>")."""
    s = _SYMBOL.get(str(kind), "E")
    return f"Δ{s}<sub>r</sub>", f"Δ{s}<sup>‡</sup>"
