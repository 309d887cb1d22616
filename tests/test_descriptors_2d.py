"""2D descriptors against handbook values and their own definitions."""

import math

import pandas as pd
import pytest
from rdkit import Chem

from barrierscope.descriptors.featurize import featurize
from barrierscope.descriptors.tiers import DescriptorEngine, parse_tiers
from barrierscope.descriptors.topological import (
    molecule_descriptors,
    substituent_descriptors,
)
from barrierscope.structures.spec import make_spec

# Molar masses from the IUPAC standard atomic weights (conventional values: H 1.008,
# C 12.011, N 14.007, O 15.999, Cl 35.45; IUPAC CIAAW 2021), summed by hand.
IUPAC_MW = {
    "O": 18.015, "c1ccccc1": 78.114, "CCO": 46.069, "Cn1cnc2c1c(=O)n(C)c(=O)n2C": 194.194,
    "CC(=O)Oc1ccccc1C(=O)O": 180.159, "ClC(Cl)Cl": 119.37,
}


@pytest.mark.parametrize("smiles", sorted(IUPAC_MW))
def test_molecular_weight_against_iupac_atomic_weights(smiles):
    mw = molecule_descriptors(Chem.MolFromSmiles(smiles))["mw"]
    assert mw == pytest.approx(IUPAC_MW[smiles], abs=0.01)


def test_substituent_mass_and_bulk():
    d = substituent_descriptors("*C(C)(C)C")  # tert-butyl
    assert d["mw"] == pytest.approx(4 * 12.011 + 9 * 1.008, abs=0.01)
    assert (d["shell1"], d["shell2"], d["shell3"]) == (1.0, 4.0, 4.0)
    assert d["attached_degree"] == 3.0 and d["attached_sp3"] == 1.0
    ph = substituent_descriptors("*c1ccccc1")
    assert ph["attached_aromatic"] == 1.0 and ph["conjugated"] == 1.0 and ph["shell2"] == 3.0


def test_lone_pairs_follow_valence():
    # Amine N and ether O keep lone pairs; nitro N and sulfonyl S do not (common practice).
    assert substituent_descriptors("*N(C)C")["attached_lone_pair"] == 1.0
    assert substituent_descriptors("*OC")["attached_lone_pair"] == 1.0
    assert substituent_descriptors("*[N+](=O)[O-]")["attached_lone_pair"] == 0.0
    assert substituent_descriptors("*S(C)(=O)=O")["attached_lone_pair"] == 0.0


def test_tpsa_of_the_fragment():
    # Ertl et al. 2000 contributions (from memory): ether O 9.23, hydroxyl O 20.23 Å².
    assert substituent_descriptors("*OC")["tpsa"] == pytest.approx(9.23, abs=0.01)
    assert substituent_descriptors("*O")["tpsa"] == pytest.approx(20.23, abs=0.01)


def test_gasteiger_missing_is_reported_not_zero():
    # Gasteiger–Marsili has no parameters for selenium: the value is missing and the row says so.
    df = pd.DataFrame({"R1": ["[*][Se]C", "[*]C"]})
    block = featurize(df, make_spec(substituents="R1"), DescriptorEngine(("2d",)))
    assert math.isnan(block.X.loc[0, "R1_gasteiger_q"])
    assert "gasteiger_q" in block.notes[0] and block.status[0] == "ok"
    assert block.notes[1] == "" and not math.isnan(block.X.loc[1, "R1_gasteiger_q"])


def test_column_names_are_position_underscore_descriptor():
    df = pd.DataFrame({"A": ["[*]C"], "B": ["[*]F"]})
    block = featurize(df, make_spec(substituents="A,B"), DescriptorEngine(("2d", "table")))
    assert "A_mr" in block.X.columns and "B_sigma_p" in block.X.columns
    assert block.X.loc[0, "B_sigma_p"] == pytest.approx(0.06)


def test_tier_names_are_checked():
    assert parse_tiers("2d,table") == ("2d", "table")
    assert parse_tiers("none") == ()
    with pytest.raises(ValueError, match="valid choices: 2d, table, xtb, steric3d, centre, none"):
        parse_tiers("2d,quantum")
