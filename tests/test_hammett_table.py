"""The table tier against the compilation it was typed from (values typed from memory).

Source: C. Hansch, A. Leo, R. W. Taft, Chem. Rev. 1991, 91, 165 (Table I).
"""

import pytest

from barrierscope.descriptors.hammett import ENTRIES, lookup, table_descriptors
from barrierscope.structures.substituent import substituent_key


def test_at_least_forty_groups_each_with_a_canonical_key():
    keys = {substituent_key(e.smiles) for e in ENTRIES}
    assert len(ENTRIES) >= 40 and len(keys) == len(ENTRIES)


@pytest.mark.parametrize("entry", ENTRIES, ids=[e.name for e in ENTRIES])
def test_field_and_resonance_follow_the_compilations_own_definition(entry):
    # Hansch, Leo & Taft 1991 derive F and R from σm and σp (from memory):
    #   F = 1.297 σm − 0.385 σp + 0.033,   R = σp − F.
    # Every typed entry must satisfy both within rounding (0.035), which catches typing slips.
    f = 1.297 * entry.sigma_m - 0.385 * entry.sigma_p + 0.033
    assert entry.field == pytest.approx(f, abs=0.035)
    assert entry.resonance == pytest.approx(entry.sigma_p - entry.field, abs=0.035)


# McDaniel & Brown, J. Org. Chem. 1958, 23, 420 — an independent compilation of the same
# benzoic-acid constants (values from memory, three decimals as they tabulated them).
MCDANIEL_BROWN = {
    "NO2": (0.710, 0.778), "CN": (0.56, 0.660), "Cl": (0.373, 0.227), "Br": (0.391, 0.232),
    "I": (0.352, 0.18), "F": (0.337, 0.062), "CH3": (-0.069, -0.170), "OCH3": (0.115, -0.268),
    "NH2": (-0.16, -0.66), "OH": (0.121, -0.37), "COCH3": (0.376, 0.502), "CF3": (0.43, 0.54),
    "H": (0.0, 0.0),
}


@pytest.mark.parametrize("name", sorted(MCDANIEL_BROWN))
def test_textbook_groups_agree_with_mcdaniel_and_brown(name):
    entry = next(e for e in ENTRIES if e.name == name)
    sm, sp = MCDANIEL_BROWN[name]
    assert entry.sigma_m == pytest.approx(sm, abs=0.02)
    assert entry.sigma_p == pytest.approx(sp, abs=0.02)


def test_lookup_is_by_structure_not_spelling():
    # The same group written three ways is one key; an untabulated group is missing, not zero.
    for text in ("[*]OC", "[*:1]OC", "CO[*]"):
        assert lookup(substituent_key(text)).name == "OCH3"
    values = table_descriptors(substituent_key("[*]C(F)(F)C(F)(F)C(F)(F)F"))
    assert all(v != v for v in values.values())  # NaN
