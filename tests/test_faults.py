"""Faults: a run killed at any moment leaves no partial file under the final name and can be
rerun; a Dask worker killed mid-screen does not lose rows."""

import os
import signal
import subprocess
import sys
import time

import numpy as np
import pandas as pd
import pytest
from families import substituent_family

CLI = [sys.executable, "-m", "barrierscope.cli"]


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    folder = tmp_path_factory.mktemp("faults")
    fam = folder / "fam.csv"
    substituent_family(24, seed=11, path=fam)
    model = folder / "model.json"
    env = {**os.environ, "BARRIERSCOPE_CACHE_DIR": str(folder / "cache")}
    subprocess.run([*CLI, "fit", str(fam), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG",
                    "-o", str(model), "--shuffles", "0"], check=True, env=env, capture_output=True)
    from barrierscope.descriptors.hammett import ENTRIES

    rng = np.random.default_rng(1)
    subs = [e.smiles for e in ENTRIES]
    n = 60000
    lib = folder / "lib.csv"
    pd.DataFrame({"id": np.arange(n), "R1": [subs[k] for k in rng.integers(0, len(subs), n)],
                  "R2": [subs[k] for k in rng.integers(0, len(subs), n)]}).to_csv(lib, index=False)
    return folder, fam, model, lib, env


def _kill_after(cmd, delay, env) -> bool:
    """Run ``cmd``, SIGKILL it after ``delay`` s; True when the kill hit a running process."""
    proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(delay)
    if proc.poll() is None:
        os.kill(proc.pid, signal.SIGKILL)
    return proc.wait() == -signal.SIGKILL


@pytest.mark.slow
def test_sigkill_during_screen_leaves_no_partial_output(setup):
    folder, _, model, lib, env = setup
    out = folder / "screen.csv"
    cmd = [*CLI, "screen", str(model), str(lib), "-o", str(out), "--chunk-size", "2000", "--quiet"]
    killed = 0
    for delay in (0.3, 1.0, 1.8, 2.6):
        if out.exists():
            out.unlink()
        killed += _kill_after(cmd, delay, env)
        # Whatever the moment of the kill, the final name holds nothing or the complete result
        # (the rename may have happened just before the kill, while the summary was printing).
        if out.exists():
            assert len(pd.read_csv(out)) == 60000, f"partial output after SIGKILL at {delay} s"
    assert killed >= 2, "the screen finished before most kills: the test would not test anything"
    subprocess.run(cmd, check=True, env=env)
    res = pd.read_csv(out)
    assert len(res) == 60000 and list(res["row"]) == list(range(1, 60001))
    assert not list(folder.glob(".screen.csv.parts.*")), "stale part folders of killed runs are cleaned up"


@pytest.mark.slow
def test_sigkill_during_fit_leaves_no_model_file(setup):
    folder, fam, _, _, env = setup
    out = folder / "killed.json"
    cmd = [*CLI, "fit", str(fam), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG", "-o", str(out),
           "--learner", "ridge", "--shuffles", "400"]  # ridge: auto caps its y-randomisation at 2 shuffles
    assert _kill_after(cmd, 2.5, env), "the fit finished before the kill: the test would not test anything"
    assert not out.exists(), "a killed fit left a model file under the final name"
    subprocess.run(cmd[:-2] + ["--shuffles", "0"], check=True, env=env, capture_output=True)
    from barrierscope.io.modelfile import load_model

    assert load_model(out).training["n"] == 24


@pytest.mark.slow
def test_dask_worker_killed_mid_screen_loses_no_rows(setup):
    import threading

    from barrierscope.jobs.executors import DaskExecutor
    from barrierscope.jobs.screen import ScreenOptions, run_screen

    folder, _, model, lib, env = setup
    out = folder / "dask.csv"
    executor = DaskExecutor("local", 2)
    try:
        pids = list(executor.client.run(os.getpid).values())
        result = {}

        def run():
            result["summary"] = run_screen(model, lib, out, ScreenOptions(cache_dir=env["BARRIERSCOPE_CACHE_DIR"]),
                                           executor=executor, chunk_size=1000, progress=False)

        t = threading.Thread(target=run)
        t.start()
        time.sleep(1.0)
        assert t.is_alive(), "the screen finished before the worker was killed: nothing was tested"
        os.kill(pids[0], signal.SIGKILL)  # the nanny restarts it; its tasks run again elsewhere
        t.join(300)
        assert not t.is_alive()
    finally:
        executor.close()
    res = pd.read_csv(out)
    assert result["summary"].rows == 60000 and len(res) == 60000
    assert list(res["row"]) == list(range(1, 60001))


def test_a_fault_in_barrierscope_exits_3_with_the_traceback_in_a_file(tmp_path, monkeypatch):
    """A programming error is not the chemist's bad input: exit 3 (not 2), 'internal error —
    please report', and the traceback in the file the message names. A ValueError raised
    outside the checking of an option is such a fault too."""
    import re

    from typer.testing import CliRunner

    import barrierscope.jobs.curve as curve_job
    from barrierscope.cli import app

    path = tmp_path / "pairs.csv"
    path.write_text("dE,dG\n" + "\n".join(f"{e},{10 + 0.5 * e}" for e in range(-6, 6)) + "\n")
    monkeypatch.setenv("TMPDIR", str(tmp_path))
    monkeypatch.delenv("BARRIERSCOPE_DEBUG", raising=False)
    import tempfile

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))

    def broken(*args, **kwargs):
        raise ValueError("an index off by one")       # a bug, dressed as a ValueError

    monkeypatch.setattr(curve_job, "compare_curves", broken)
    result = CliRunner().invoke(app, ["curve", str(path), "--energy", "dE", "--barrier", "dG"])
    assert result.exit_code == 3
    assert "internal error — please report" in result.output
    where = re.search(r"the traceback is in (\S+)", result.output).group(1)
    text = open(where, encoding="utf-8").read()
    assert "an index off by one" in text and "Traceback" in text and "compare_curves" not in result.output.split("(")[0]
    # The same command with a bad option is the chemist's to fix: exit 2, no traceback file.
    bad = CliRunner().invoke(app, ["curve", str(path), "--energy", "dE", "--barrier", "dG", "--loss", "quartic"])
    assert bad.exit_code == 2 and "--loss" in bad.output and "internal error" not in bad.output


def _signal_after(cmd, delay, env, sig) -> tuple[bool, int]:
    """Run ``cmd``, send ``sig`` after ``delay`` s; (whether it hit a running process, exit code)."""
    proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(delay)
    hit = proc.poll() is None
    if hit:
        os.kill(proc.pid, sig)
    return hit, proc.wait()


@pytest.mark.slow
@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGHUP])
def test_sigterm_and_sighup_during_screen_leave_no_part_files(setup, sig):
    """A job queue's time limit (SIGTERM) or a closed terminal (SIGHUP) mid-screen: the run
    stops with 128 + the signal's number, and leaves neither part folders nor a partial output."""
    folder, _, model, lib, env = setup
    out = folder / f"stopped-{int(sig)}.csv"
    cmd = [*CLI, "screen", str(model), str(lib), "-o", str(out), "--chunk-size", "2000", "--quiet", "--workers", "2"]
    stopped = 0
    for delay in (1.0, 2.0):
        hit, code = _signal_after(cmd, delay, env, sig)
        if hit and code == 128 + int(sig):
            stopped += 1
        assert not list(folder.glob(f".{out.name}.parts.*")), f"part folders left after {sig.name} at {delay} s"
        assert not [p for p in folder.glob(f".{out.name}.*") if p.suffix == ".part" or ".parts." in p.name], \
            f"temporary files left after {sig.name} at {delay} s"
        if out.exists():
            assert len(pd.read_csv(out)) == 60000, f"partial output after {sig.name} at {delay} s"
            out.unlink()
    assert stopped >= 1, "the screen finished before every signal: the test would not test anything"
