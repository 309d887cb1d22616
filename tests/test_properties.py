"""Property-based tests (hypothesis): arbitrary text and bytes never crash the readers or the
structure handling, and every row always comes out with a status."""

import os
import tempfile

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from barrierscope.descriptors.featurize import featurize
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.errors import DataError, ModelFileError
from barrierscope.io.tables import iter_table
from barrierscope.structures.spec import make_spec

ENGINE = DescriptorEngine(("2d", "table"))
SETTINGS = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])

# Text that looks like SMILES some of the time: SMILES characters mixed with anything.
smiles_alphabet = st.sampled_from(list("CNOSPFIBrcl[]()=#*:+-@/\\%0123456789.Hn sK>"))
smiles_like = st.one_of(st.text(smiles_alphabet, max_size=40), st.text(max_size=30))


@SETTINGS
@given(data=st.binary(max_size=2000), suffix=st.sampled_from([".csv", ".tsv", ".smi", ".sdf", ".parquet"]))
def test_arbitrary_bytes_never_crash_the_readers(data, suffix):
    fd, path = tempfile.mkstemp(suffix=suffix)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        try:
            chunks = list(iter_table(path, chunk_size=50))
        except DataError as exc:
            assert str(exc)
            return
        total = sum(len(c) for c in chunks)
        assert total >= 1
        for c in chunks:
            assert "_row" in c.columns
    finally:
        os.unlink(path)


@SETTINGS
@given(cells=st.lists(smiles_like, min_size=1, max_size=8))
def test_arbitrary_substituent_and_molecule_cells_get_a_status(cells):
    df = pd.DataFrame({"R1": cells, "mol": cells})
    for spec in (make_spec(substituents="R1"), make_spec(molecule="mol")):
        block = featurize(df, spec, ENGINE)
        assert len(block.status) == len(cells)
        assert all(isinstance(s, str) and s for s in block.status)


@SETTINGS
@given(cells=st.lists(st.one_of(smiles_like, st.builds(lambda a, b: f"CC(=O)c1ccc({a})c({b})c1", smiles_like,
                                                       smiles_like)), min_size=1, max_size=6))
def test_arbitrary_molecules_in_core_mode_get_a_status(cells):
    block = featurize(pd.DataFrame({"m": cells}), make_spec(molecule="m", core="CC(=O)c1ccc([*:1])c([*:2])c1"), ENGINE)
    assert len(block.status) == len(cells)


@SETTINGS
@given(cells=st.lists(st.one_of(smiles_like, st.builds(lambda a, b, c: f"{a}.{b}>>{c}", smiles_like, smiles_like,
                                                       smiles_like)), min_size=1, max_size=6))
def test_arbitrary_reactions_get_a_status(cells):
    block = featurize(pd.DataFrame({"r": cells}), make_spec(reaction="r"), DescriptorEngine(("2d",)))
    assert len(block.status) == len(cells)


@SETTINGS
@given(text=st.one_of(st.text(max_size=300),
                      st.builds(lambda s: '{"format": "barrierscope-model", "schema_version": 1, ' + s, st.text(max_size=80))))
def test_arbitrary_model_text_is_refused_cleanly(text):
    from barrierscope.io.modelfile import loads

    with pytest.raises(ModelFileError):
        loads(text)
