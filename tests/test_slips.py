"""Slips a chemist makes, caught with a message that names the way out: another unit, a
misspelt column, a decimal comma, a temperature in Celsius, rows left out without a word."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from families import substituent_family
from typer.testing import CliRunner

from barrierscope.cli import app
from barrierscope.errors import DataError
from barrierscope.io.tables import closest_column, require_columns
from barrierscope.units import unit_mixup_hint

runner = CliRunner()


def test_kj_per_mol_read_as_kcal_is_caught_by_the_spread_of_reaction_energies():
    # Invented: a family whose barriers (kcal/mol) look plausible even × 4.184, with reaction
    # energies over 35 kcal/mol (a typical substituent family's range).
    rng = np.random.default_rng(0)
    energy = rng.uniform(-20.0, 15.0, 30)
    barrier = 8.0 + 0.4 * (energy + 20.0) + rng.normal(0, 0.5, 30)
    assert unit_mixup_hint(barrier, "kcal/mol", energy) is None
    hint = unit_mixup_hint(barrier * 4.184, "kcal/mol", energy * 4.184)
    assert hint is not None and "kJ/mol" in hint and "spread" in hint


def test_the_open_dataset_s_real_families_raise_no_unit_warning(cycloaddition):
    """The 26 dipolarophile families of the open [3+2] set (T. Stuyver, K. Jorner, C. W. Coley,
    Sci. Data 2023, 10, 66): no warning in kcal/mol, every one caught when × 4.184."""
    df = cycloaddition
    for name, sub in df.groupby("dipolarophile"):
        if len(sub) >= 20:
            assert unit_mixup_hint(sub["G_act"], "kcal/mol", sub["G_r"]) is None, name
            assert unit_mixup_hint(sub["G_act"] * 4.184, "kcal/mol", sub["G_r"] * 4.184) is not None, name
    assert unit_mixup_hint(df["G_act"], "kcal/mol", df["G_r"]) is None     # the whole pooled set


@pytest.mark.parametrize("typed, meant", [("dg_r", "dG_r"), ("DG R", "dG_r"), ("dG_act ", "dG_act"),
                                          ("dG_atc", "dG_act")])
def test_a_misspelt_column_gets_a_suggestion(typed, meant):
    df = pd.DataFrame({"smiles": ["C"], "dG_r": [1.0], "dG_act": [2.0]})
    assert closest_column(typed, df.columns) == meant
    with pytest.raises(DataError, match=f"did you mean '{meant}'"):
        require_columns(df, [typed], "fam.csv")
    assert closest_column("temperature", df.columns) is None


def test_a_decimal_comma_file_is_named_once_with_the_way_out(tmp_path):
    fam = substituent_family(20, seed=1)
    path = tmp_path / "comma.csv"
    text = fam.assign(dE=fam["dE"].map(lambda v: f"{v:.2f}".replace(".", ",")),
                      dG=fam["dG"].map(lambda v: f"{v:.2f}".replace(".", ",")))
    text.to_csv(path, sep=";", index=False)
    args = ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG", "-o",
            str(tmp_path / "m.json"), "--shuffles", "0", "--cache-dir", str(tmp_path / "c")]
    for extra in ([], ["--skip-bad-rows"]):
        r = runner.invoke(app, args + extra)
        assert r.exit_code == 2, r.output
        assert "decimal comma" in r.stderr and "decimal point" in r.stderr
        assert r.stderr.count("\n") < 12          # one explanation, not a line per cell


def test_skipped_rows_are_listed_in_the_text_output(tmp_path):
    fam = substituent_family(24, seed=2).astype({"dG": object})
    fam.loc[3, "dG"] = "n/a?"
    fam.loc[7, "R1"] = "C(C"
    path = tmp_path / "f.csv"
    fam.to_csv(path, index=False)
    r = runner.invoke(app, ["fit", str(path), "--substituents", "R1,R2", "--energy", "dE", "--barrier", "dG", "-o",
                            str(tmp_path / "m.json"), "--shuffles", "0", "--skip-bad-rows", "--learner", "ridge",
                            "--cache-dir", str(tmp_path / "c")])
    assert r.exit_code == 0, r.output
    lines = [x for x in r.stdout.splitlines() if x.startswith("skipped: ")]
    assert len(lines) == 2
    assert "row 4 (m4)" in lines[0] and "not a number" in lines[0]
    assert "row 8 (m8)" in lines[1]


def test_a_temperature_slip_is_blamed_on_the_temperature():
    from barrierscope.jobs.records import ScreenSummary
    from barrierscope.views.screen_text import format_screen

    for t, blamed in ((25.0, True), (298.15, False)):
        summary = ScreenSummary(rows=3, ok=3, temperature=t, implausible_half_lives=3, output="o.csv")
        text = format_screen(summary, "kcal/mol", "free-energy")
        assert ("check --temperature first" in text) == blamed, text


def test_rounding_survives_astronomical_half_lives():
    from barrierscope.views.columns import _sig

    got = _sig(np.array([1.234567e305, 3.3e-320, 12.34567, np.inf]))
    assert got[0] == pytest.approx(1.235e305) and got[2] == 12.35 and np.isinf(got[3])


def test_progress_only_for_a_person_at_a_terminal(monkeypatch, capsys):
    import io

    from barrierscope import progress

    class Tty(io.StringIO):
        def isatty(self):
            return True

    monkeypatch.delenv("BARRIERSCOPE_QUIET", raising=False)
    tty = Tty()
    monkeypatch.setattr("sys.stderr", tty)
    progress.stage("validating: loo")
    assert "validating: loo" in tty.getvalue()
    monkeypatch.setenv("BARRIERSCOPE_QUIET", "1")
    progress.stage("quiet now")
    assert "quiet now" not in tty.getvalue()
    monkeypatch.setattr("sys.stderr", io.StringIO())       # a pipe or a log: nothing
    progress.stage("piped")
    assert "piped" not in capsys.readouterr().err
