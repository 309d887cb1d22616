"""The persistent descriptor cache: reuse, several writers, and no silent loss."""

import multiprocessing as mp
import sqlite3

import pandas as pd

from barrierscope.descriptors.cache import DescriptorCache
from barrierscope.descriptors.featurize import featurize
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.structures.spec import make_spec


def test_each_distinct_substituent_is_computed_once(tmp_path):
    groups = ["[*]C", "[*]OC", "[*]Cl", "[*]F", "[*]C#N"]
    df = pd.DataFrame({"R1": groups * 2000, "R2": list(reversed(groups)) * 2000})
    engine = DescriptorEngine(("2d", "table"), DescriptorCache(tmp_path))
    featurize(df, make_spec(substituents="R1,R2"), engine)
    assert engine.computed == 2 * len(groups)  # five keys, two tiers
    again = DescriptorEngine(("2d", "table"), DescriptorCache(tmp_path))
    block = featurize(df, make_spec(substituents="R1,R2"), again)
    assert again.computed == 0 and (block.status == "ok").all()


def test_wal_mode(tmp_path):
    cache = DescriptorCache(tmp_path)
    cache.put_many("t", "v1", {"a": {"values": {"x": 1.0}}})
    mode = sqlite3.connect(cache.path).execute("PRAGMA journal_mode").fetchone()[0]
    assert mode.lower() == "wal"


def _writer(folder, start, count):
    cache = DescriptorCache(folder, timeout=120)
    for k in range(start, start + count, 10):
        cache.put_many("t", "v1", {f"key{i}": {"values": {"x": float(i)}} for i in range(k, k + 10)})


def test_two_processes_writing_at_once_lose_nothing(tmp_path):
    ctx = mp.get_context("fork")
    procs = [ctx.Process(target=_writer, args=(tmp_path, s, 1000)) for s in (0, 500)]  # overlapping keys
    for p in procs:
        p.start()
    for p in procs:
        p.join(120)
        assert p.exitcode == 0
    cache = DescriptorCache(tmp_path)
    got = cache.get_many("t", "v1", [f"key{i}" for i in range(1500)])
    assert len(got) == 1500 and all(got[f"key{i}"]["values"]["x"] == i for i in range(1500))
    assert cache.integrity_ok()


def test_nan_survives_the_round_trip(tmp_path):
    cache = DescriptorCache(tmp_path)
    cache.put_many("t", "v1", {"a": {"values": {"x": float("nan"), "y": 2.0}}})
    v = cache.get_many("t", "v1", ["a"])["a"]["values"]
    assert v["x"] != v["x"] and v["y"] == 2.0


def test_cache_can_be_turned_off(monkeypatch):
    monkeypatch.setenv("BARRIERSCOPE_CACHE_DIR", "none")
    cache = DescriptorCache()
    cache.put_many("t", "v1", {"a": {"values": {}}})
    assert cache.get_many("t", "v1", ["a"]) == {}
