"""The report's figures: nothing drawn outside the canvas, and the same picture in every unit.

Checks are geometric (matplotlib's own bounding boxes of every artist after layout) and
dimensional (axis limits in hartree are the kcal/mol limits converted, so padding is set in
kcal/mol and never in the user's unit). Data: an invented family (tests/families.py, labelled
as invented) and the bundled, invented demo.
"""

import numpy as np
import pytest
from families import substituent_family
from matplotlib.figure import Figure

from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.tables import read_table
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.jobs.report import write_report
from barrierscope.structures.spec import make_spec
from barrierscope.units import from_kcal


@pytest.fixture(scope="module")
def fitted(tmp_path_factory):
    folder = tmp_path_factory.mktemp("figures")
    substituent_family(24, seed=5).to_csv(folder / "fam.csv", index=False)
    return fit_family(read_table(folder / "fam.csv"), "fam", make_spec(substituents="R1,R2"),
                      DescriptorEngine(("2d", "table")), opts=FitOptions("dE", "dG", n_shuffles=0, learner="ridge"))


@pytest.fixture(scope="module")
def drawn(fitted, tmp_path_factory):
    """Every figure the report draws, as the Figure objects matplotlib saved."""
    model, record = fitted
    figures = []
    original = Figure.savefig

    def keep(self, *args, **kwargs):
        figures.append(self)
        return original(self, *args, **kwargs)

    Figure.savefig = keep
    try:
        folder = tmp_path_factory.mktemp("report")
        write_report(model, record, folder / "report.html", folder / "figs", source="invented")
    finally:
        Figure.savefig = original
    return figures


def test_the_report_draws_its_figures(drawn):
    assert len(drawn) >= 6


def test_every_artist_lies_inside_its_canvas(drawn):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    for fig in drawn:
        agg = FigureCanvasAgg(fig)
        agg.draw()                       # the layout as saved
        renderer = agg.get_renderer()
        canvas = fig.bbox
        boxes = [ax.get_tightbbox(renderer) for ax in fig.axes]
        boxes += [t.get_window_extent(renderer) for t in fig.texts]
        boxes += [leg.get_window_extent(renderer) for leg in fig.legends]
        for box in boxes:
            if box is None:
                continue
            title = fig.axes[0].get_xlabel() if fig.axes else "figure"
            assert box.x0 >= canvas.x0 - 1 and box.y0 >= canvas.y0 - 1, (title, box, canvas)
            assert box.x1 <= canvas.x1 + 1 and box.y1 <= canvas.y1 + 1, (title, box, canvas)


def test_every_member_is_inside_the_curve_axes(fitted):
    from barrierscope.views.figures import draw_curve

    model, _ = fitted
    ax = Figure().subplots()
    draw_curve(ax, model, "kcal/mol")
    lo, hi = ax.get_ylim()
    b = np.asarray(model.training["barrier"], dtype=float)
    e = np.asarray(model.training["energy"], dtype=float)
    assert lo < b.min() and b.max() < hi
    assert ax.get_xlim()[0] < e.min() and e.max() < ax.get_xlim()[1]


@pytest.mark.parametrize("unit", ["kJ/mol", "eV", "hartree"])
def test_axis_limits_are_the_same_picture_in_every_unit(fitted, unit):
    # Padding set in the user's unit would make a hartree plot mostly empty; set in kcal/mol
    # and converted, the limits are the kcal/mol limits times the conversion factor.
    from barrierscope.views.figures import draw_alpha, draw_curve

    model, _ = fitted
    for draw in (draw_curve, draw_alpha):
        ref, other = Figure().subplots(), Figure().subplots()
        draw(ref, model, "kcal/mol")
        draw(other, model, unit)
        assert np.allclose(other.get_xlim(), from_kcal(np.array(ref.get_xlim()), unit), rtol=1e-9)
        if draw is draw_curve:
            assert np.allclose(other.get_ylim(), from_kcal(np.array(ref.get_ylim()), unit), rtol=1e-9)


def test_legends_name_relations_in_words_and_the_model_first_among_equals(fitted):
    from barrierscope.curves.compare import compare_relations
    from barrierscope.views.figures import draw_curve

    model, _ = fitted
    comparison = compare_relations(np.asarray(model.training["energy"]), np.asarray(model.training["barrier"]))
    ax = Figure().subplots()
    draw_curve(ax, model, "kcal/mol", comparison)
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert not any("_" in t for t in labels), labels          # no code keys (agmon_levine)
    model_line = [ln for ln in ax.get_lines() if ln.get_label().startswith("the model")]
    others = [ln for ln in ax.get_lines() if "LOO RMSE" in ln.get_label() and not ln.get_label().startswith("the model")]
    assert len(model_line) == 1 and others
    assert all(ln.get_linewidth() < model_line[0].get_linewidth() and (ln.get_alpha() or 1) < 1 for ln in others)
