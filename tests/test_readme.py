"""The README's quick start is what CI runs (issue 2)."""

import re

from conftest import ROOT


def quick_start_commands():
    text = (ROOT / "README.md").read_text()
    block = text.split("## Quick start", 1)[1].split("```bash", 1)[1].split("```", 1)[0]
    return [ln.strip() for ln in block.strip().splitlines() if ln.strip()]


def test_exactly_two_setup_commands():
    cmds = quick_start_commands()
    assert len(cmds) == 2
    assert cmds[0].startswith("pip install . && barrierscope ")
    assert "[test]" in cmds[1] and "pytest" in cmds[1]


def test_ci_runs_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text()
    assert quick_start_commands()[1] in ci.splitlines()


def test_readme_opens_with_the_job():
    text = (ROOT / "README.md").read_text()
    first = " ".join(re.split(r"\n\s*\n", text.split("\n", 1)[1].strip(), maxsplit=1)[0].split())
    assert "reaction family" in first and "barrier" in first


def test_every_option_the_readme_names_exists():
    # A README that names an option the command line does not have sends a chemist astray.
    import typer.main

    from barrierscope.cli import app

    known = set()
    for cmd in typer.main.get_command(app).commands.values():
        for p in cmd.params:
            known.update(o for o in [*p.opts, *p.secondary_opts] if o.startswith("--"))
    text = (ROOT / "README.md").read_text()
    named = {o for line in text.splitlines() if "bench" not in line and "pytest" not in line
             for o in re.findall(r"(?<![\w-])--[a-z][a-z0-9-]*", line)}
    assert named - known - {"--version"} == set(), sorted(named - known)


def test_the_python_example_runs(tmp_path, monkeypatch):
    # The README's first Python block, run as written (paths into this checkout; files land
    # in a temporary folder).
    from matplotlib.figure import Figure

    text = (ROOT / "README.md").read_text()
    code = text.split("## From Python", 1)[1].split("```python", 1)[1].split("```", 1)[0]
    code = code.replace('"datasets/demo/', f'"{ROOT}/datasets/demo/')
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("BARRIERSCOPE_CACHE_DIR", str(tmp_path / "cache"))
    env = {"ax": Figure().subplots()}
    exec(compile(code, "README.md", "exec"), env)
    assert (tmp_path / "model.json").exists() and (tmp_path / "report.html").exists()
    assert len(env["hits"]) == 2500 and env["same"].units == "kcal/mol"


def test_the_scikit_learn_example_runs(tmp_path, monkeypatch):
    # The README's cross_val_score block, run as written on the demo family: with shuffled
    # folds the two-stage route's MAE beats predicting each fold by the others' mean barrier.
    text = (ROOT / "README.md").read_text()
    block = next(b.split("```", 1)[0] for b in text.split("```python")[1:] if "cross_val_score" in b)
    code = block.replace('"datasets/demo/', f'"{ROOT}/datasets/demo/')
    monkeypatch.setenv("BARRIERSCOPE_CACHE_DIR", str(tmp_path / "cache"))
    env: dict = {}
    exec(compile(code, "README.md", "exec"), env)
    import numpy as np

    b = env["barrier"].to_numpy()
    mean_mae = np.mean([np.mean(np.abs(b[te] - b[tr].mean())) for tr, te in env["folds"].split(b)])
    assert len(env["mae"]) == 5 and np.mean(env["mae"]) < 0.7 * mean_mae, (env["mae"], mean_mae)
