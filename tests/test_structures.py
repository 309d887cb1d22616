"""Structure input: substituents, cores, whole molecules, and the per-row errors."""

import numpy as np
import pandas as pd
import pytest

from barrierscope.descriptors.featurize import featurize, resolve_structures
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.structures.checks import StructureError
from barrierscope.structures.core import CoreDecomposer, CoreError
from barrierscope.structures.molecule import molecule_key
from barrierscope.structures.spec import InputSpec, make_spec
from barrierscope.structures.substituent import HYDROGEN_KEY, substituent_key


@pytest.mark.parametrize("text,key", [
    ("[*]C#N", "*C#N"), ("[*:1]OC", "*OC"), ("CO[*]", "*OC"), ("[*][H]", HYDROGEN_KEY),
    ("H", HYDROGEN_KEY), ("[1*]Cl", "*Cl"),
])
def test_substituent_keys(text, key):
    assert substituent_key(text) == key


@pytest.mark.parametrize("text,kind", [
    ("C1CC", "unparseable"), ("[*]c1ccccc", "unparseable"), ("CC", "attachment"), ("[*]C[*]", "attachment"),
    ("", "empty"), ("[*]", "attachment"), ("[*][U](F)(F)(F)(F)F", "unsupported_element"),
    ("[*]C(C)(C)(C)C", "unparseable"),
])
def test_substituent_errors(text, kind):
    with pytest.raises(StructureError) as info:
        substituent_key(text)
    assert info.value.kind == kind and str(info.value)


PARA_CORE = "OC(=O)c1ccc([*:1])cc1"


@pytest.mark.parametrize("smiles,expected", [
    ("OC(=O)c1ccc(C)cc1", ("*C",)),
    ("OC(=O)c1ccccc1", (HYDROGEN_KEY,)),
    ("O=C(O)c1ccc(OC)cc1", ("*OC",)),
    ("O=C(O)c1ccc(CC(C)C)cc1", ("*CC(C)C",)),    # isobutyl and sec-butyl must not be confused
    ("O=C(O)c1ccc(C(C)CC)cc1", ("*C(C)CC",)),
])
def test_core_decomposition(smiles, expected):
    assert CoreDecomposer(PARA_CORE).decompose_smiles(smiles) == expected


@pytest.mark.parametrize("smiles,kind", [
    ("CC(=O)c1ccccc1", "core_unmatched"),
    ("OC(=O)c1ccc(C)c(C)c1", "core_unlabelled"),
    # Two places reading as different substituents (the amide linker reads differently from each end).
    ("OC(=O)c1ccc(cc1)C(=O)Nc1ccc(C(=O)O)cc1", "core_ambiguous"),
])
def test_core_row_errors(smiles, kind):
    with pytest.raises(StructureError) as info:
        CoreDecomposer(PARA_CORE).decompose_smiles(smiles)
    assert info.value.kind == kind


def test_bridged_substituent_is_an_error():
    core = CoreDecomposer("[*:1]c1ccccc1[*:2]")
    with pytest.raises(StructureError) as info:
        core.decompose_smiles("C1CCc2ccccc2C1")  # tetralin: one ring across both positions
    assert info.value.kind == "core_bridged"


def test_symmetric_core_is_deterministic_whatever_the_spelling():
    core = CoreDecomposer("[*:1]c1ccc([*:2])cc1")
    spellings = ["Cc1ccc([N+](=O)[O-])cc1", "[O-][N+](=O)c1ccc(C)cc1", "c1([N+](=O)[O-])ccc(C)cc1"]
    results = {core.decompose_smiles(s) for s in spellings}
    assert results == {("*C", "*[N+](=O)[O-]")}


@pytest.mark.parametrize("core", ["c1ccccc1", "[*]c1ccccc1", "[*:1]c1ccc([*:1])cc1", "C1CC"])
def test_bad_cores_are_option_errors(core):
    with pytest.raises(CoreError):
        CoreDecomposer(core)


def test_core_mode_and_substituent_mode_give_identical_descriptors():
    groups = ["[*]C", "[*]OC", "[*]Cl", "[*][N+](=O)[O-]", "[*]C(F)(F)F", "[*][H]", "[*]c1ccccc1",
              "[*]N(C)C", "[*]C(C)=O", "[*]CC(C)C", "[*]S(C)(=O)=O"]
    engine = DescriptorEngine(("2d", "table"))
    subs = pd.DataFrame({"R1": groups})
    a = featurize(subs, make_spec(substituents="R1"), engine)
    from rdkit import Chem

    core = "OC(=O)c1ccc([*:1])cc1"
    mols = []
    for g in groups:
        sub = Chem.MolFromSmiles(g)
        for atom in sub.GetAtoms():
            if atom.GetAtomicNum() == 0:
                atom.SetAtomMapNum(1)
        mols.append(Chem.MolToSmiles(Chem.RemoveHs(Chem.molzip(Chem.MolFromSmiles(core), sub))))
    b = featurize(pd.DataFrame({"smiles": mols}), make_spec(molecule="smiles", core=core), engine)
    assert (a.status == "ok").all() and (b.status == "ok").all()
    assert np.array_equal(a.X.to_numpy(), b.X.to_numpy(), equal_nan=True)
    assert list(a.X.columns) == list(b.X.columns)


def test_every_row_keeps_a_status():
    df = pd.DataFrame({"R1": ["[*]C", "nonsense((", "", "[*]OC", "CC"], "R2": ["[*]F"] * 5})
    block = featurize(df, make_spec(substituents="R1,R2"), DescriptorEngine(("2d",)))
    assert len(block.status) == 5
    assert block.status[0] == "ok" and block.status[3] == "ok"
    assert all(s.startswith("R1: ") for s in block.status[[1, 2, 4]])
    assert np.isnan(block.X.iloc[1].to_numpy()).all()


def test_molecule_mode_and_size_limit():
    assert molecule_key("OCC") == "CCO"
    with pytest.raises(StructureError, match="above the limit"):
        molecule_key("C" * 30, max_heavy_atoms=20)
    with pytest.raises(StructureError, match="attachment"):
        molecule_key("[*]CC")


def test_spec_combinations_are_checked():
    # The science says it in its parameters' terms; the command line names the flags.
    with pytest.raises(ValueError, match="a core needs molecule"):
        make_spec(core=PARA_CORE)
    with pytest.raises(ValueError, match="not substituents and molecule"):
        make_spec(substituents="R1", molecule="m")
    from barrierscope.errors import InputError
    from barrierscope.jobs.setup import structure_spec

    with pytest.raises(InputError, match=r"structure options \(--substituents.*a core needs molecule"):
        structure_spec(core=PARA_CORE)
    spec = make_spec(molecule="m", core="[*:2]c1ccc([*:1])cc1")
    assert spec.positions == ("R1", "R2")
    assert InputSpec.from_dict(spec.as_dict()) == spec


def test_resolution_parses_each_distinct_cell_once(monkeypatch):
    import barrierscope.structures.substituent as sub

    sub.substituent_key.cache_clear()
    calls = []
    original = sub.substituent_key.__wrapped__

    def counting(text):
        calls.append(text)
        return original(text)

    monkeypatch.setattr(sub, "substituent_key", counting)
    df = pd.DataFrame({"R1": ["[*]C", "[*]OC"] * 500})
    res = resolve_structures(df, make_spec(substituents="R1"))
    assert len(calls) == 2 and res.keys["R1"][999] == "*OC"


@pytest.mark.parametrize("smiles", [
    "N#CSc1cc(C(=O)O)cc(OC)c1C(C)C",          # substituent written before the core
    "CC(C)c1c(SC#N)cc(C(=O)O)cc1OC",          # isopropyl first, the rest as branches
    "O=C(O)c1cc(OC)c(C(C)C)c(SC#N)c1",        # core first
    "[H]OC(=O)c1cc(OC)c(C(C)C)c(SC#N)c1",     # explicit hydrogen: the text reader steps aside
    "COc1cc(C(=O)O)cc(SC#N)c1C(C)C",
])
def test_text_reading_and_graph_cutting_agree(smiles):
    from rdkit import Chem

    core = "OC(=O)c1cc([*:1])c([*:2])c([*:3])c1"
    by_text = CoreDecomposer(core).decompose_smiles(smiles)
    by_graph = CoreDecomposer(core).decompose(Chem.MolFromSmiles(smiles))
    assert by_text == by_graph == ("*OC", "*C(C)C", "*SC#N")


def test_a_core_found_twice_that_reads_the_same_is_accepted():
    # 4,4'-biphenyldicarboxylic acid: the benzoic-acid core is found at either ring, and both
    # read as R1 = 4-carboxyphenyl, so the molecule is not ambiguous.
    d = CoreDecomposer("OC(=O)c1ccc([*:1])cc1")
    assert d.decompose_smiles("OC(=O)c1ccc(-c2ccc(C(=O)O)cc2)cc1") == ("*c1ccc(C(=O)O)cc1",)


def test_rdkit_logging_is_blocked_per_call_and_left_as_it_was():
    # barrierscope reports bad structures per row; RDKit's own log settings outside its calls
    # are the user's (a notebook's), so they must come back exactly as they were.
    from rdkit import rdBase

    from barrierscope.structures.resolve import resolve_structures

    before = rdBase.LogStatus()
    with pytest.raises(StructureError):
        molecule_key("C1CC(")
    import pandas as pd

    resolve_structures(pd.DataFrame({"_row": [1, 2], "m": ["C1CC(", "CCO"]}), make_spec(molecule="m"))
    assert rdBase.LogStatus() == before and "rdApp.error:enabled" in before


def test_core_mode_reads_library_molecules_fast_and_the_same_as_the_full_path():
    # Molecules that are the core as written with valid substituents are read without sanitising
    # them whole; everything else goes the full way. Both must give the same keys and the same
    # errors (the cases below: invented edge cases, each hand-checked).
    from barrierscope.structures.core import CoreDecomposer

    core = "n1cc([*:1])c([*:2])c([*:3])c1"
    d = CoreDecomposer(core)
    cases = {
        # R2 is para to the ring N (here the C2F5 group); R1 and R3 are the two meta positions, which the
        # core's symmetry lets swap: the smaller reading wins.
        "Cc1cncc(Oc2ccccc2)c1C(F)(F)C(F)(F)F": ("*C", "*C(F)(F)C(F)(F)F", "*Oc1ccccc1"),
        "n1cc(C)c(Cl)c(c2ccccc2)c1": ("*C", "*Cl", "*c1ccccc1"),
        "n1cc(C)c(N(=O)=O)c(C)c1": ("*C", "*[N+](=O)[O-]", "*C"),       # nitro normalised either way
        "N1=CC(C)=C(C)C(C)=C1": ("*C", "*C", "*C"),                     # Kekulé input: the full path
        "n1cc([C@H](F)Cl)c(C)c(C)c1": ("*C", "*C", "*[C@H](F)Cl"),      # stereo kept; meta positions swap
    }
    for smiles, keys in cases.items():
        assert d.decompose_smiles(smiles) == keys, smiles
    assert d._as_assembled("n1cc(C)c(C)c(C)c1", 200) is not None          # the fast path was taken
    assert d._as_assembled("N1=CC(C)=C(C)C(C)=C1", 200) is None           # (Kekulé: not the core as written)
    for smiles, kind in {"[nH]1cc(C)c(C)c(C)c1": "unparseable",            # cannot be kekulised
                         "n1cc(c2ccccc2)c(c2cccc2)c(C)c1": "unparseable",  # a five-ring written aromatic
                         "n1cc(C)c(=O)c(C)c1": "unparseable",
                         "n1cc(C)c2c(c1)CCCC2": "core_bridged",
                         "n1cc(C)c(C)c(C)c1.O": "multiple_components"}.items():
        with pytest.raises(StructureError) as err:
            d.decompose_smiles(smiles)
        assert err.value.kind == kind, smiles
