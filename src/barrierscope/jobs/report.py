"""Gather what a report shows and write it (atomically): the relations compared on the
training pairs, plus whatever the run produced (a screen, suggestions)."""

from __future__ import annotations

from pathlib import Path

from ..curves.compare import compare_relations
from ..io.atomic import write_text_atomic
from ..views.report import build_report
from ..views.report_extra import picks_section, screen_section
from .records import FitRecord


def model_record(model) -> FitRecord:
    """The fit record a model file carries, with its curve (kcal/mol)."""
    return FitRecord.from_dict({**model.validation, "curve": model.curve.as_dict()})


def write_report(model, record: FitRecord | None = None, path=None, figures_dir=None, *, source: str = "",
                 screen=None, picks=None) -> str:
    """Build the report (``record`` defaults to the model's own) and write it to ``path``."""
    record = model_record(model) if record is None else record
    comparison = compare_relations(model.training["energy"], model.training["barrier"])
    extra = []
    if screen is not None:
        extra.append(screen_section(screen, model.units, model.spec.mode, model.spec.columns))
    if picks is not None:
        extra.append(picks_section(picks, model.spec.mode))
    text = build_report(model, record, comparison, source, screen=screen, picks=picks, figures_dir=Path(figures_dir) if figures_dir else None,
                        extra_sections=extra)
    if path is not None:
        write_text_atomic(path, text)
    return text
