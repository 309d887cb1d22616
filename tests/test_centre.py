"""The centre tier: which atoms react, and what surrounds them.

Every expected centre below is worked by hand from the reaction's bond changes (common
practice: the atoms whose neighbours, bond orders, hydrogen count, charge or unpaired
electrons differ between reactant and product), for mapped and unmapped reactions of several
types. Feature values are checked against the structures by hand.
"""

import pandas as pd
import pytest

from barrierscope.descriptors.centre import (
    FEATURES,
    centre_legend,
    molecule_centres,
    reaction_centres,
    substituent_centre,
)


def _centres(text):
    """[(element, reactant number)] of the centre atoms, in column order."""
    return [(m.GetAtomWithIdx(i).GetSymbol(), s) for m, i, s in reaction_centres(text)]


@pytest.mark.parametrize("text, expected", [
    # Hydrogen-atom transfer, ethane + methoxyl: the C that loses H and the O that gains it.
    ("CC.[O]C>>[CH2]C.OC", [("C", 1), ("O", 2)]),
    # The same with complete atom maps (used instead of matching).
    ("[CH3:1][CH3:2].[O:3][CH3:4]>>[CH2:1][CH3:2].[OH:3][CH3:4]", [("C", 1), ("O", 2)]),
    # Benzylic transfer: only the methyl carbon of toluene changes (the ring keeps its bonds).
    ("Cc1ccccc1.[O]C(C)(C)C>>[CH2]c1ccccc1.OC(C)(C)C", [("C", 1), ("O", 2)]),
    # SN2, chloride + bromomethane: Cl gains a bond; in reactant 2 Br (heavier first) and C.
    ("[Cl-].CBr>>ClC.[Br-]", [("Cl", 1), ("Br", 2), ("C", 2)]),
    # Addition of HBr to ethene: both carbons (bond order, one gains H, one gains Br) and Br.
    ("C=C.Br>>CCBr", [("C", 1), ("C", 1), ("Br", 2)]),
    # Elimination of HBr from bromoethane: Br leaves, the two carbons gain a π bond.
    ("CCBr>>C=C.Br", [("Br", 1), ("C", 1), ("C", 1)]),
    # Cyanide addition to acetone: carbonyl O (gains charge, loses π bond), carbonyl C, and
    # the cyanide carbon; the methyl carbons and the nitrogen keep their bonds.
    ("CC(C)=O.[C-]#N>>CC(C)([O-])C#N", [("O", 1), ("C", 1), ("C", 2)]),
    # Diels–Alder, butadiene + ethene, atom-mapped (unmapped, the ring can be placed two ways
    # with as few changes): all four diene carbons and both ethene carbons.
    ("[CH2:1]=[CH:2][CH:3]=[CH2:4].[CH2:5]=[CH2:6]>>[CH2:1]1[CH:2]=[CH:3][CH2:4][CH2:5][CH2:6]1",
     [("C", 1)] * 4 + [("C", 2)] * 2),
    # A 1,3-dipolar cycloaddition, diazomethane + ethene (unmapped): the three dipole atoms
    # (the terminal N gains a bond, the central N changes charge and bond orders, the carbon
    # gains a bond) and both ethene carbons.
    ("C=[N+]=[N-].C=C>>C1CC=NN1", [("N", 1), ("N", 1), ("C", 1), ("C", 2), ("C", 2)]),
])
def test_the_reacting_atoms_are_found(text, expected):
    assert _centres(text) == expected


def test_the_legend_names_each_centre():
    text = centre_legend("CC.[O]C>>[CH2]C.OC")
    assert text.startswith("centre1: C of reactant 1") and "centre2: O of reactant 2" in text


def _features(text, k=0):
    mol, idx, _ = reaction_centres(text)[k]
    from barrierscope.descriptors.centre import atom_features

    return atom_features(mol, idx)


def test_first_shell_features_worked_by_hand():
    allyl = _features("C=CC.[O]C>>C=C[CH2].OC")          # propene's CH3: next to a C=C
    assert allyl["conjugated_neighbours"] == 1 and allyl["h_count"] == 3 and allyl["hybridisation"] == 3
    alkoxy = _features("CCO.[O]C>>C[CH]O.OC")             # ethanol's CH2: next to OH
    assert alkoxy["alpha_heteroatoms"] == 1 and alkoxy["pi_donor_neighbours"] == 1 and alkoxy["h_count"] == 2
    acyl = _features("CC(C)=O.[O]C>>[CH2]C(C)=O.OC")      # acetone's CH3: next to C=O
    assert acyl["pi_acceptor_neighbours"] == 1 and acyl["conjugated_neighbours"] == 1
    ring = _features("C1CCCCC1.[O]C>>[CH]1CCCCC1.OC")     # cyclohexane: a six-ring sp3 carbon
    assert ring["in_ring"] == 1 and ring["ring_size"] == 6 and ring["aromatic"] == 0
    oxygen = _features("CC.[O]C>>[CH2]C.OC", k=1)          # the methoxyl O: one radical electron
    assert oxygen["z"] == 8 and oxygen["radical_electrons"] == 1 and oxygen["heavy_degree"] == 1


def test_molecule_centre_by_smarts_or_radical():
    from rdkit import Chem

    mol = Chem.MolFromSmiles("OCC(=O)C")
    (m, i), = molecule_centres(mol, Chem.MolFromSmarts("[CH3]"))
    assert m.GetAtomWithIdx(i).GetDegree() == 1
    (m, i), = molecule_centres(Chem.MolFromSmiles("C[CH]C"))           # the one radical atom
    assert m.GetAtomWithIdx(i).GetNumRadicalElectrons() == 1
    with pytest.raises(ValueError, match="does not match"):
        molecule_centres(mol, Chem.MolFromSmarts("[Cl]"))
    with pytest.raises(ValueError, match="--centre"):
        molecule_centres(mol)


def test_substituent_attachment_atom():
    nme2 = substituent_centre("*N(C)C")
    assert nme2["centre_z"] == 7 and nme2["centre_pi_donor_atom"] == 1 and nme2["centre_heavy_degree"] == 3
    cn = substituent_centre("*C#N")
    assert cn["centre_pi_acceptor_atom"] == 1 and cn["centre_hybridisation"] == 1
    assert set(nme2) == {f"centre_{f}" for f in FEATURES}


def test_tier_in_a_table_with_a_row_error(tmp_path):
    from barrierscope.descriptors.featurize import featurize
    from barrierscope.descriptors.tiers import DescriptorEngine
    from barrierscope.io.tables import read_table
    from barrierscope.structures.spec import make_spec

    path = tmp_path / "m.csv"
    pd.DataFrame({"id": ["a", "b", "c"], "smi": ["CCO", "CC(C)O", "c1ccccc1"]}).to_csv(path, index=False)
    block = featurize(read_table(path), make_spec(molecule="smi", centre="[CX4][OH]"), DescriptorEngine(("centre",)))
    assert list(block.status[:2]) == ["ok", "ok"] and block.error_kind[2] == "centre"
    assert block.X.loc[0, "centre1_z"] == 6 and block.X.loc[0, "centre2_z"] == 8
    assert block.X.loc[1, "centre1_carbon_neighbours"] == 2
    with pytest.raises(ValueError, match="--centre goes with molecule"):
        make_spec(substituents="R1", centre="[C]")
