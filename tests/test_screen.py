"""Screening: every row accounted for, identical results wherever the work runs."""

import numpy as np
import pandas as pd
import pytest
from families import substituent_family

from barrierscope.io import modelfile
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.tables import read_table
from barrierscope.jobs.executors import DaskExecutor, ProcessExecutor, SerialExecutor
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.jobs.screen import ScreenOptions, run_screen
from barrierscope.structures.spec import make_spec


@pytest.fixture(scope="module")
def model_path(tmp_path_factory):
    folder = tmp_path_factory.mktemp("screen")
    substituent_family(24, seed=3, path=folder / "fam.csv")
    model, _ = fit_family(read_table(folder / "fam.csv"), "fam.csv", make_spec(substituents="R1,R2"),
                          DescriptorEngine(("2d", "table")), opts=FitOptions("dE", "dG", n_shuffles=0))
    path = folder / "model.json"
    modelfile.save(model.as_dict(), path)
    return path


@pytest.fixture(scope="module")
def library(tmp_path_factory):
    from barrierscope.descriptors.hammett import ENTRIES

    rng = np.random.default_rng(9)
    subs = [e.smiles for e in ENTRIES]
    df = pd.DataFrame({"id": [f"L{i}" for i in range(600)],
                       "R1": [subs[k] for k in rng.integers(0, len(subs), 600)],
                       "R2": [subs[k] for k in rng.integers(0, len(subs), 600)]})
    df.loc[3, "R1"] = "c1ccc(("            # unparseable
    df.loc[10, "R2"] = ""                  # empty cell
    df.loc[20, "R1"] = "CC"                # no attachment atom
    df.loc[30, "R2"] = "[*]C[*]"           # two attachment atoms
    path = tmp_path_factory.mktemp("lib") / "lib.csv"
    df.to_csv(path, index=False)
    return path


def test_every_row_once_with_a_status(model_path, library, tmp_path):
    out = tmp_path / "out.csv"
    s = run_screen(model_path, library, out, ScreenOptions(cache_dir=None), chunk_size=128, progress=False)
    res = pd.read_csv(out, keep_default_na=False)
    assert len(res) == 600 and s.rows == 600 and list(res["row"]) == list(range(1, 601))
    bad = res["status"] != "ok"
    assert list(res.index[bad]) == [3, 10, 20, 30]
    assert all(len(m) > 10 for m in res.loc[bad, "status"])
    assert (res.loc[bad, "rank"] == "").all()
    ranks = res.loc[~bad, "rank"].astype(int).to_numpy()
    b = res.loc[~bad, "barrier_kcal_mol"].astype(float).to_numpy()
    low = res.loc[~bad, "barrier_low90_kcal_mol"].astype(float).to_numpy()
    # Ranks follow the barrier (ties only for equal barriers); reaching the floor is its own column.
    order = np.argsort(ranks, kind="stable")
    assert ranks.min() == 1 and (np.diff(b[order]) >= 0).all()
    floor = res.loc[~bad, "reaches_floor"].astype(str).eq("True").to_numpy()
    assert s.at_floor == floor.sum() > 1
    assert (low[floor] <= s.floor + 0.006).all() and (low[~floor] >= s.floor - 0.006).all()  # CSV: 0.01
    assert s.errors == {"unparseable": 1, "empty": 1, "attachment": 2}


def test_identical_wherever_it_runs(model_path, library, tmp_path):
    outputs = {}
    for name, make in (("serial", SerialExecutor), ("processes", lambda: ProcessExecutor(2)),
                       ("dask", lambda: DaskExecutor("local", 2))):
        executor = make()
        try:
            out = tmp_path / f"{name}.csv"
            run_screen(model_path, library, out, ScreenOptions(cache_dir=str(tmp_path / "cache")), executor=executor,
                       chunk_size=100, progress=False)
            outputs[name] = out.read_bytes()
        finally:
            executor.close()
    assert outputs["serial"] == outputs["processes"] == outputs["dask"]


def test_parquet_and_csv_hold_the_same_values(model_path, library, tmp_path):
    a, b = tmp_path / "o.csv", tmp_path / "o.parquet"
    for out in (a, b):
        run_screen(model_path, library, out, ScreenOptions(cache_dir=None), chunk_size=250, progress=False)
    ca, pb = pd.read_csv(a), pd.read_parquet(b)
    assert list(ca.columns) == list(pb.columns) and len(ca) == len(pb)
    num = ["rank", "barrier_kcal_mol", "barrier_low90_kcal_mol", "leffler_alpha", "half_life_s", "ad_distance"]
    # CSV is rounded (energies to 0.01, α to 0.001, times to 4 significant figures); Parquet is not.
    pd.testing.assert_frame_equal(ca[num], pb[num], check_dtype=False, rtol=1e-3, atol=6e-3)
    assert list(ca["status"]) == list(pb["status"])


def test_given_energies_take_the_curve_route(model_path, library, tmp_path):
    df = pd.read_csv(library)
    df["dE_computed"] = np.where(np.arange(len(df)) % 2 == 0, -10.0, np.nan)
    lib = tmp_path / "lib_e.csv"
    df.to_csv(lib, index=False)
    out = tmp_path / "o.csv"
    run_screen(model_path, lib, out, ScreenOptions(cache_dir=None, energy_column="dE_computed"), progress=False)
    res = pd.read_csv(out, keep_default_na=False)
    ok = res["status"] == "ok"
    even = (res.index % 2 == 0) & ok
    assert (res.loc[even, "reaction_energy_source"] == "given").all()
    from barrierscope.io.modelfile import load_model

    # A given energy skips the energy stage: the plain curve, or the structure curve when that
    # is the model's route (its given-energy branch).
    structure = load_model(model_path).primary_route == "structure_curve"
    want = "structure_curve_on_given_energy" if structure else "curve_on_given_energy"
    assert (res.loc[even, "route"] == want).all()
    assert np.allclose(res.loc[even, "reaction_energy_kcal_mol"].astype(float), -10.0)
    assert np.allclose(res.loc[even, "reaction_energy_sd_kcal_mol"].astype(float), 0.0)
    assert (res.loc[(res.index % 2 == 1) & ok, "reaction_energy_source"] == "predicted").all()


def test_no_rates_from_electronic_energies(tmp_path):
    from conftest import ROOT
    from typer.testing import CliRunner

    from barrierscope.cli import app

    runner = CliRunner()
    model = tmp_path / "m.json"
    r = runner.invoke(app, ["fit", str(ROOT / "datasets/examples/curve_family.csv"), "--energy", "dG_r",
                            "--barrier", "dG_act", "--kind", "electronic", "-o", str(model)])
    assert r.exit_code == 0, r.output
    lib = tmp_path / "lib.csv"
    pd.DataFrame({"id": ["a", "b"], "dG_r": [-10.0, 5.0]}).to_csv(lib, index=False)
    out = tmp_path / "o.csv"
    r = runner.invoke(app, ["screen", str(model), str(lib), "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert "only a Gibbs free-energy barrier gives a rate" in r.stderr
    res = pd.read_csv(out)
    assert res["rate_constant_per_s"].isna().all() and res["barrier_kcal_mol"].notna().all()


def test_a_name_column_gives_the_ids_and_notes_are_counted(model_path, library, tmp_path):
    df = pd.read_csv(library).rename(columns={"id": "Name"})
    path = tmp_path / "named.csv"
    df.to_csv(path, index=False)
    out = tmp_path / "out.csv"
    s = run_screen(model_path, path, out, ScreenOptions(cache_dir=None), chunk_size=256, progress=False)
    res = pd.read_csv(out, keep_default_na=False)
    assert res["id"].tolist() == df["Name"].tolist()
    # Every row note is counted by kind in the summary the terminal shows.
    noted = sum(len([p for p in str(t).split("; ") if p]) for t in res["notes"] if t)
    assert sum(s.notes.values()) == noted


@pytest.mark.parametrize("seed", range(20))
def test_rank_is_monotone_in_the_barrier(seed):
    # Property: for any barriers (ties, NaN for failed rows), a lower barrier never gets a larger
    # rank, equal barriers share a rank, and ranks are competition ranks (1, 2, 2, 4).
    from barrierscope.jobs.screen import ranks

    rng = np.random.default_rng(seed)
    b = np.round(rng.normal(20.0, 5.0, 300), int(rng.integers(0, 2)))   # rounding makes ties
    b[rng.random(300) < 0.1] = np.nan
    r = ranks(b)
    ok = np.isfinite(b)
    assert (r[~ok] == -1).all() and r[ok].min() == 1
    bi, ri = b[ok], r[ok]
    lower = bi[:, None] < bi[None, :]
    assert (ri[:, None] < ri[None, :])[lower].all()
    assert (ri[:, None] == ri[None, :])[bi[:, None] == bi[None, :]].all()
    assert all(ri[k] == 1 + int(np.sum(bi < bi[k])) for k in range(bi.size))


def test_the_library_s_own_descriptor_columns_are_read(tmp_path):
    """--extra-descriptors at fit: screen takes each row's own value from the library (it
    used to impute every row with the training median, silently). Invented: the reaction
    energy is 3 × the user's column; a library row's energy must follow its own value."""
    fam = substituent_family(24, seed=5)
    rng = np.random.default_rng(1)
    fam["ux"] = rng.uniform(-4.0, 4.0, len(fam))
    fam["dE"] = 3.0 * fam["ux"] + rng.normal(0, 0.2, len(fam))
    model, _ = fit_family(_numbered(fam), "fam",
                          make_spec(substituents="R1,R2"), DescriptorEngine(("2d",)),
                          opts=FitOptions("dE", "dG", n_shuffles=0, extra_descriptors=["ux"], learner="ridge",
                                          regimes=("loo",)))
    path = tmp_path / "m.json"
    modelfile.save(model.as_dict(), path)
    lib = fam[["R1", "R2"]].head(6).copy()
    lib["ux"] = [-3.0, -2.0, -1.0, 1.0, 2.0, 3.0]
    lib.to_csv(tmp_path / "lib.csv", index=False)
    run_screen(path, tmp_path / "lib.csv", tmp_path / "o.csv", ScreenOptions(cache_dir=None), progress=False)
    res = pd.read_csv(tmp_path / "o.csv").sort_values("row")
    assert np.corrcoef(res["reaction_energy_kcal_mol"], lib["ux"])[0, 1] > 0.95


def _numbered(df):
    from barrierscope.io.tables import ROW

    out = df.copy()
    out[ROW] = np.arange(1, len(out) + 1)
    return out


def test_the_output_keeps_the_library_s_columns_and_describes_itself(model_path, library, tmp_path):
    import hashlib
    import json

    import pyarrow.parquet as pq
    from typer.testing import CliRunner

    from barrierscope import __version__
    from barrierscope.cli import app

    df = pd.read_csv(library).head(40)
    df["supplier_id"] = [f"S{i:04d}" for i in range(len(df))]
    df["status"] = "in stock"                       # a name barrierscope uses itself
    lib = tmp_path / "lib_cols.csv"
    df.to_csv(lib, index=False)
    out = tmp_path / "o.csv"
    run_screen(model_path, lib, out, ScreenOptions(cache_dir=None, temperature=310.0), progress=False)
    res = pd.read_csv(out, keep_default_na=False).sort_values("row")
    cols = list(res.columns)
    assert cols.index("supplier_id") > cols.index("notes") and cols[-1] == "library_status"
    assert list(res["supplier_id"]) == list(df["supplier_id"]) and set(res["library_status"]) == {"in stock"}
    meta = json.loads((tmp_path / "o.csv.meta.json").read_text())
    assert meta["temperature_K"] == 310.0 and meta["units"] == "kcal/mol" and meta["energy_kind"] == "free-energy"
    assert meta["model_sha256"] == hashlib.sha256(model_path.read_bytes()).hexdigest()
    assert meta["barrierscope_version"] == __version__ and meta["rows"] == 40 and meta["created"]
    # Parquet: the same description in the file's own metadata; --keep chooses the columns.
    pq_out = tmp_path / "o.parquet"
    r = CliRunner().invoke(app, ["screen", str(model_path), str(lib), "-o", str(pq_out), "--keep", "supplier_id",
                                 "--quiet", "--cache-dir", str(tmp_path / "c")])
    assert r.exit_code == 0, r.output
    table = pq.read_table(pq_out)
    assert "supplier_id" in table.column_names and "library_status" not in table.column_names
    assert json.loads(table.schema.metadata[b"barrierscope"])["model_sha256"] == meta["model_sha256"]
    assert not (tmp_path / "o.parquet.meta.json").exists()
