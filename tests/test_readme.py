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
