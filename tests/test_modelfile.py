"""Model files: the round trip is exact, and tampering, truncation and unknown versions are refused."""

import json

import numpy as np
import pytest
from families import substituent_family

from barrierscope.io import modelfile
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.errors import ModelFileError
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.structures.spec import make_spec


@pytest.fixture(scope="module")
def fitted(tmp_path_factory):
    df = substituent_family(24, seed=1, path=tmp_path_factory.mktemp("fam") / "fam.csv")
    from barrierscope.io.tables import read_table

    path = tmp_path_factory.getbasetemp() / "fam.csv"
    df.to_csv(path, index=False)
    table = read_table(path)
    spec = make_spec(substituents="R1,R2")
    model, summary = fit_family(table, str(path), spec, DescriptorEngine(("2d", "table")),
                                opts=FitOptions("dE", "dG", n_shuffles=1))
    return model, summary, table


def test_round_trip_predicts_identically(fitted, tmp_path):
    model, _, table = fitted
    from barrierscope.descriptors.featurize import featurize

    X = featurize(table, model.spec, DescriptorEngine(model.tiers)).X[model.features]
    path = tmp_path / "m.json"
    modelfile.save(model.as_dict(), path)
    loaded = modelfile.load_model(path)
    a, b = model.predict(X), loaded.predict(X)
    for key in ("energy", "energy_std", "barrier", "barrier_std", "low", "high", "alpha", "ad_distance"):
        assert np.array_equal(a[key], b[key]), key  # to the last digit
    known = np.linspace(-20, 10, len(X))
    assert np.array_equal(model.predict(X, known)["barrier"], loaded.predict(X, known)["barrier"])


def test_no_pickle_anywhere(fitted, tmp_path):
    path = tmp_path / "m.json"
    modelfile.save(fitted[0].as_dict(), path)
    text = path.read_text()
    json.loads(text)  # plain JSON
    import inspect

    import barrierscope.io.modelfile as mf
    assert "pickle" not in inspect.getsource(mf).replace("Never pickle", "").replace("unpickled", "")


@pytest.mark.parametrize("edit,needle", [
    (lambda d: d["content"]["two_stage"]["curve"]["theta"].__setitem__(0, 99.0), "checksum does not match"),
    (lambda d: d.__setitem__("schema_version", 99), "schema version 99"),
    (lambda d: d.__setitem__("format", "something-else"), "not a barrierscope model"),
    (lambda d: d["content"].pop("two_stage"), "checksum"),
])
def test_edited_files_are_refused(fitted, tmp_path, edit, needle):
    path = tmp_path / "m.json"
    modelfile.save(fitted[0].as_dict(), path)
    d = json.loads(path.read_text())
    edit(d)
    path.write_text(json.dumps(d))
    with pytest.raises(ModelFileError, match=needle):
        modelfile.load_model(path)


def test_truncated_and_garbage_files(fitted, tmp_path):
    path = tmp_path / "m.json"
    modelfile.save(fitted[0].as_dict(), path)
    text = path.read_text()
    path.write_text(text[: len(text) // 2])
    with pytest.raises(ModelFileError, match="not valid JSON"):
        modelfile.load_model(path)
    path.write_bytes(b"\x80\x04\x95 pickle-like bytes")
    with pytest.raises(ModelFileError):
        modelfile.load_model(path)
    path.write_text("")
    with pytest.raises(ModelFileError, match="empty"):
        modelfile.load_model(path)


def test_schema_is_checked_even_with_a_valid_checksum(fitted, tmp_path):
    content = fitted[0].as_dict()
    content["two_stage"]["curve"]["dof"] = "many"
    path = tmp_path / "m.json"
    path.write_text(modelfile.dumps(content))
    with pytest.raises(ModelFileError, match="two_stage.curve.dof should be of type int"):
        modelfile.load_model(path)


def test_summary_contract(fitted):
    s = fitted[1].as_dict()
    assert set(s["energy_stage"]) >= {"mae", "rmse", "r2"}
    for r in ("two_stage", "hybrid", "direct", "curve_on_true_energy"):
        assert set(s["routes"][r]) >= {"mae", "rmse", "r2", "pi90_coverage"}
    for k in ("two_stage_vs_direct", "hybrid_vs_direct"):
        assert set(s["comparison"][k]) >= {"delta_mae", "ci95", "wilcoxon_p"}
    assert "mae_mean" in s["y_randomization"]
    assert s["winner"] in ("two_stage", "hybrid", "direct", "tie", "family_mean")
