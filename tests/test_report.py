"""The HTML report: self-contained, escaped, and it renders in a real browser."""

import html
import re
import shutil
import subprocess

import pytest
from families import substituent_family

from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.tables import read_table
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.structures.spec import make_spec
from barrierscope.jobs.report import write_report
from barrierscope.records import replace

NASTY = '<script>alert("x")</script>&"\''


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    df = substituent_family(24, seed=5)
    df.loc[0, "id"] = NASTY  # user text that must not become markup
    df.to_csv(folder / "fam.csv", index=False)
    model, summary = fit_family(read_table(folder / "fam.csv"), str(folder / NASTY), make_spec(substituents="R1,R2"),
                                DescriptorEngine(("2d", "table")), opts=FitOptions("dE", "dG", n_shuffles=1))
    summary = replace(summary, warnings=[*summary.warnings, f"a warning quoting {NASTY}"])
    path = folder / "report.html"
    text = write_report(model, summary, path, folder / "figs", source=NASTY)
    return path, text


def test_references_nothing_outside_itself(report):
    _, text = report
    assert "<script" not in text.lower()
    for attr in re.findall(r'(?:src|href)\s*=\s*["\']([^"\']*)', text, flags=re.I):
        assert attr.startswith("data:") or attr.startswith("#"), attr
    assert "@import" not in text and "url(" not in text


def test_user_strings_are_escaped(report):
    _, text = report
    assert NASTY not in text
    assert html.escape(NASTY) in text


def test_figures_written_as_png(report):
    path, _ = report
    figs = sorted(p.name for p in (path.parent / "figs").glob("*.png"))
    assert {"curve.png", "alpha.png", "parity.png", "residuals.png", "importance.png", "domain.png"} <= set(figs)
    for p in (path.parent / "figs").glob("*.png"):
        assert p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    return None


def test_renders_in_headless_chromium_without_console_errors(report, tmp_path):
    browser = _browser()
    if browser is None:
        pytest.skip("no Chromium on this machine (.ci/run installs Debian's chromium package when it can)")
    path, _ = report
    shot = tmp_path / "shot.png"
    cmd = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}", "--enable-logging=stderr", "--v=0", "--hide-scrollbars",
           "--window-size=1100,1800", f"--screenshot={shot}", path.as_uri()]
    res = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert shot.exists(), res.stderr[-2000:]
    console = [ln for ln in res.stderr.splitlines() if "CONSOLE" in ln or "Uncaught" in ln]
    assert not console, console
    from matplotlib.image import imread

    pixels = imread(shot)
    assert pixels.std() > 0.05  # not a blank page


def test_members_are_drawn_and_the_hammett_plot_is_there(report):
    path, text = report
    assert text.count("<svg") >= 5                       # the members behind the largest errors
    assert "<h2>Hammett plot</h2>" in text and "σp for every position" in text   # substituent mode: σp
    assert (path.parent / "figs" / "hammett.png").exists()


def test_depictions_carry_no_user_text():
    from barrierscope.views.depict import molecule_svg, reaction_svg, structure_svg

    # CXSMILES atom labels are user text: they must not reach the drawing.
    svg = molecule_svg("CC(=O)O |$evil<script>x$;;;|")
    assert svg.startswith("<svg") and "evil" not in svg and "<script" not in svg.lower()
    assert molecule_svg("not a smiles") == "" and reaction_svg("C1CC>>CC") == ""
    assert reaction_svg("C=C.C=CC=C>>C1=CCCCC1").startswith("<svg")
    assert structure_svg({"R1": "[*]C#N", "R2": "[*]OC"}, "substituents").startswith("<svg")
