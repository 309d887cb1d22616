"""The ``table`` tier: Hammett σm, σp and field/resonance F, R for common substituents.

Source: C. Hansch, A. Leo, R. W. Taft, "A survey of Hammett substituent constants and
resonance and field parameters", Chem. Rev. 1991, 91, 165 (Table I).

TYPED FROM MEMORY: every value below was typed from memory of that compilation, not copied
from it. Each entry carries a confidence: "high" for the textbook groups whose values are
reproduced in every physical-organic text, "medium" otherwise. The compilation derives F and
R from σm and σp (F = 1.297 σm − 0.385 σp + 0.033, R = σp − F, also from memory); the tests
check every entry against that relation, which catches typing slips, and check the textbook
groups against McDaniel and Brown's independent compilation (J. Org. Chem. 1958, 23, 420).
Check a value against the paper before you rely on its second decimal.

A group not in the table is reported as missing for this tier (never guessed).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

VERSION = "table-1"
COLUMNS = ("sigma_m", "sigma_p", "field", "resonance")


@dataclass(frozen=True)
class HammettEntry:
    name: str
    smiles: str
    sigma_m: float
    sigma_p: float
    field: float
    resonance: float
    confidence: str


# name, substituent SMILES, σm, σp, F, R, confidence — typed from memory (see module docstring).
_ROWS = [
    ("H", "[*][H]", 0.00, 0.00, 0.03, 0.00, "high"),
    ("CH3", "[*]C", -0.07, -0.17, 0.01, -0.18, "high"),
    ("C2H5", "[*]CC", -0.07, -0.15, 0.00, -0.15, "high"),
    ("n-C3H7", "[*]CCC", -0.06, -0.13, 0.01, -0.14, "medium"),
    ("i-C3H7", "[*]C(C)C", -0.04, -0.15, 0.04, -0.19, "high"),
    ("t-C4H9", "[*]C(C)(C)C", -0.10, -0.20, -0.02, -0.18, "high"),
    ("cyclopropyl", "[*]C1CC1", -0.07, -0.21, 0.02, -0.23, "medium"),
    ("cyclohexyl", "[*]C1CCCCC1", -0.05, -0.15, 0.03, -0.18, "medium"),
    ("CF3", "[*]C(F)(F)F", 0.43, 0.54, 0.38, 0.16, "high"),
    ("CCl3", "[*]C(Cl)(Cl)Cl", 0.40, 0.46, 0.38, 0.08, "medium"),
    ("CHF2", "[*]C(F)F", 0.29, 0.32, 0.29, 0.03, "medium"),
    ("CH2F", "[*]CF", 0.12, 0.11, 0.15, -0.04, "medium"),
    ("CH2Cl", "[*]CCl", 0.11, 0.12, 0.13, -0.01, "medium"),
    ("CH2OH", "[*]CO", 0.00, 0.00, 0.00, 0.00, "medium"),
    ("CH2CN", "[*]CC#N", 0.16, 0.18, 0.17, 0.01, "medium"),
    ("CH2NH2", "[*]CN", -0.03, -0.11, 0.04, -0.15, "medium"),
    ("C2F5", "[*]C(F)(F)C(F)(F)F", 0.47, 0.52, 0.44, 0.08, "medium"),
    ("CN", "[*]C#N", 0.56, 0.66, 0.51, 0.15, "high"),
    ("NO2", "[*][N+](=O)[O-]", 0.71, 0.78, 0.65, 0.13, "high"),
    ("NO", "[*]N=O", 0.62, 0.91, 0.49, 0.42, "medium"),
    ("F", "[*]F", 0.34, 0.06, 0.45, -0.39, "high"),
    ("Cl", "[*]Cl", 0.37, 0.23, 0.42, -0.19, "high"),
    ("Br", "[*]Br", 0.39, 0.23, 0.45, -0.22, "high"),
    ("I", "[*]I", 0.35, 0.18, 0.42, -0.24, "high"),
    ("OH", "[*]O", 0.12, -0.37, 0.33, -0.70, "high"),
    ("OCH3", "[*]OC", 0.12, -0.27, 0.29, -0.56, "high"),
    ("OC2H5", "[*]OCC", 0.10, -0.24, 0.26, -0.50, "medium"),
    ("OC6H5", "[*]Oc1ccccc1", 0.25, -0.03, 0.37, -0.40, "medium"),
    ("OCF3", "[*]OC(F)(F)F", 0.38, 0.35, 0.39, -0.04, "medium"),
    ("OCHF2", "[*]OC(F)F", 0.31, 0.18, 0.37, -0.19, "medium"),
    ("OCOCH3", "[*]OC(C)=O", 0.39, 0.31, 0.42, -0.11, "medium"),
    ("OSO2CH3", "[*]OS(C)(=O)=O", 0.39, 0.36, 0.40, -0.04, "medium"),
    ("O-", "[*][O-]", -0.47, -0.81, -0.26, -0.55, "medium"),
    ("NH2", "[*]N", -0.16, -0.66, 0.08, -0.74, "high"),
    ("NHCH3", "[*]NC", -0.21, -0.70, 0.03, -0.73, "medium"),
    ("N(CH3)2", "[*]N(C)C", -0.16, -0.83, 0.15, -0.98, "high"),
    ("NHCOCH3", "[*]NC(C)=O", 0.21, 0.00, 0.31, -0.31, "medium"),
    ("N(CH3)3+", "[*][N+](C)(C)C", 0.88, 0.82, 0.86, -0.04, "medium"),
    ("NH3+", "[*][NH3+]", 0.86, 0.60, 0.92, -0.32, "medium"),
    ("N3", "[*]N=[N+]=[N-]", 0.37, 0.08, 0.48, -0.40, "medium"),
    ("N=NC6H5", "[*]N=Nc1ccccc1", 0.32, 0.39, 0.30, 0.09, "medium"),
    ("SH", "[*]S", 0.25, 0.15, 0.30, -0.15, "medium"),
    ("SCH3", "[*]SC", 0.15, 0.00, 0.23, -0.23, "high"),
    ("SCF3", "[*]SC(F)(F)F", 0.40, 0.50, 0.36, 0.14, "medium"),
    ("SCN", "[*]SC#N", 0.51, 0.52, 0.49, 0.03, "medium"),
    ("SOCH3", "[*]S(C)=O", 0.52, 0.49, 0.52, -0.03, "medium"),
    ("SO2CH3", "[*]S(C)(=O)=O", 0.60, 0.72, 0.53, 0.19, "high"),
    ("SO2NH2", "[*]S(N)(=O)=O", 0.53, 0.60, 0.49, 0.11, "medium"),
    ("SO2CF3", "[*]S(=O)(=O)C(F)(F)F", 0.83, 0.96, 0.74, 0.22, "medium"),
    ("SO2C6H5", "[*]S(=O)(=O)c1ccccc1", 0.62, 0.68, 0.58, 0.10, "medium"),
    ("SF5", "[*]S(F)(F)(F)(F)F", 0.61, 0.68, 0.56, 0.12, "medium"),
    ("CHO", "[*]C=O", 0.35, 0.42, 0.33, 0.09, "high"),
    ("COCH3", "[*]C(C)=O", 0.38, 0.50, 0.33, 0.17, "high"),
    ("COCF3", "[*]C(=O)C(F)(F)F", 0.63, 0.80, 0.54, 0.26, "medium"),
    ("COC6H5", "[*]C(=O)c1ccccc1", 0.34, 0.43, 0.31, 0.12, "medium"),
    ("COOH", "[*]C(=O)O", 0.37, 0.45, 0.34, 0.11, "high"),
    ("COOCH3", "[*]C(=O)OC", 0.37, 0.45, 0.34, 0.11, "high"),
    ("COOC2H5", "[*]C(=O)OCC", 0.37, 0.45, 0.34, 0.11, "medium"),
    ("COO-", "[*]C(=O)[O-]", -0.10, 0.00, -0.10, 0.10, "medium"),
    ("CONH2", "[*]C(N)=O", 0.28, 0.36, 0.26, 0.10, "high"),
    ("COCl", "[*]C(=O)Cl", 0.51, 0.61, 0.46, 0.15, "medium"),
    ("C6H5", "[*]c1ccccc1", 0.06, -0.01, 0.12, -0.13, "high"),
    ("CH=CH2", "[*]C=C", 0.06, -0.04, 0.13, -0.17, "medium"),
    ("C≡CH", "[*]C#C", 0.21, 0.23, 0.22, 0.01, "medium"),
    ("Si(CH3)3", "[*][Si](C)(C)C", -0.04, -0.07, 0.01, -0.08, "medium"),
    ("B(OH)2", "[*]B(O)O", -0.01, 0.12, -0.03, 0.15, "medium"),
]

ENTRIES = tuple(HammettEntry(*row) for row in _ROWS)


@lru_cache(maxsize=1)
def table_by_key() -> dict[str, HammettEntry]:
    """Entries by canonical substituent key (see :func:`~barrierscope.structures.substituent.substituent_key`)."""
    from ..structures.substituent import substituent_key

    return {substituent_key(e.smiles): e for e in ENTRIES}


def lookup(key: str) -> HammettEntry | None:
    return table_by_key().get(key)


def table_descriptors(key: str) -> dict[str, float]:
    """σm, σp, F, R of the substituent, or NaN for each when it is not tabulated."""
    e = lookup(key)
    if e is None:
        return {c: float("nan") for c in COLUMNS}
    return {"sigma_m": e.sigma_m, "sigma_p": e.sigma_p, "field": e.field, "resonance": e.resonance}
