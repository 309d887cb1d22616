"""The Python API for notebooks: the same jobs as the command line, with DataFrames in and out.

    import barrierscope as bs

    family = bs.fit(bs.read_table("family.csv"), energy="dG_r", barrier="dG_act",
                    molecule="smiles", core="O=Cc1ccc([*:1])c([*:2])c1")
    print(family.verdict)
    family.members()              # leave-one-out predictions and flags, one row per member
    family.regimes()              # MAE and RMSE of every route in every validation regime
    family.plot_curve(ax)         # on a matplotlib Axes you pass
    hits = family.screen(library) # one row per library row, with a status
    family.save("model.json")

Energies come in and go out in the unit the family was fitted in (``units``); inside,
everything is kcal/mol, exactly as for the command line, and the numbers are the same.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd


def read_table(path) -> pd.DataFrame:
    """A table (CSV, TSV, XLSX, SMILES, SDF, Parquet) as the command line reads it: text cells,
    a row-number column ``_row`` that every message refers to."""
    from .io.tables import read_table as _read

    return _read(path)


def _as_table(data) -> tuple[pd.DataFrame, str]:
    if isinstance(data, pd.DataFrame):
        from .io.tables import ROW

        df = data.reset_index(drop=True).copy()
        if ROW not in df.columns:
            df.insert(0, ROW, range(1, len(df) + 1))
        return df, "DataFrame"
    return read_table(data), str(data)


@dataclass
class Family:
    """A fitted, validated family: the model and its validation record (kcal/mol inside)."""

    model: object
    record: object        # a FitRecord (barrierscope.jobs.records), kcal/mol

    @property
    def units(self) -> str:
        return self.model.units

    @property
    def verdict(self) -> str:
        from .views.fit_text import fit_json

        return fit_json(self.record, self.model.tiers)["verdict"]

    def as_json(self) -> dict:
        """What `fit --json` prints."""
        from .views.fit_text import fit_json

        return fit_json(self.record, self.model.tiers)

    def members(self) -> pd.DataFrame:
        """One row per member: leave-one-out predictions of every route, residuals, intervals
        and flags (`fit --members`, full precision), in the family's unit."""
        from .views.members import members_frame

        return members_frame(self.record, self.units, rounded=False)

    def regimes(self) -> pd.DataFrame:
        """MAE, RMSE and interval coverage of every route in every validation regime."""
        from .views.units import in_unit

        rows = []
        for regime, v in in_unit(self.record, self.units)["validation"].items():
            for route, m in (v.get("routes") or {}).items():
                rows.append({"regime": regime, "route": route, "n_test": v["n_test"], "mae": m["mae"],
                             "rmse": m["rmse"], "coverage90": m.get("pi90_coverage"), "winner": v["winner"]})
        return pd.DataFrame(rows)

    def plot_curve(self, ax, relations: bool = True, picks: dict | None = None):
        """Members, the fitted relation with its band, and (``relations``) every other relation,
        drawn on the matplotlib Axes ``ax``; ``picks`` a :meth:`suggest` result."""
        from .curves.compare import compare_relations
        from .views.figures import draw_curve

        comparison = (compare_relations(self.model.training["energy"], self.model.training["barrier"])
                      if relations else None)
        return draw_curve(ax, self.model, self.units, comparison, picks=None if picks is None else picks.picks)

    def screen(self, library, energy: str | None = None, energy_units: str | None = None,
               temperature="298.15K", *, transmission: float = 1.0, id_column: str | None = None,
               cache_dir="default", molecularity: int | None = None, standard_state: str | None = None,
               concentration=None, solvent: str | None = None, keep=None) -> pd.DataFrame:
        """The screen's table for ``library`` (a DataFrame or a path), full precision; the
        same columns `screen` writes, without the rank. A bimolecular step: ``molecularity=2``
        (default: the model's), ``concentration`` of the partner ("0.1M", or mol/L),
        ``solvent`` for the diffusion limit, ``standard_state`` of the barriers."""
        from .jobs.executors import cached_engine
        from .jobs.predict import ScreenOptions, predict_chunk
        from .units import normalize_unit, parse_temperature
        from .jobs.predict import with_library
        from .views.columns import screen_frame

        from .bimolecular import parse_concentration
        from .jobs.predict import kinetics_of

        df, source = _as_table(library)
        kelvin, _ = parse_temperature(temperature)
        opts = ScreenOptions(temperature=kelvin, transmission=transmission, id_column=id_column, cache_dir=cache_dir,
                             energy_column=energy or (None if self.model.has_structures else self.model.energy_column),
                             energy_units=normalize_unit(energy_units) if energy_units else None,
                             molecularity=molecularity, standard_state=standard_state, solvent=solvent,
                             concentration=None if concentration is None else parse_concentration(concentration),
                             keep=None if keep is None else tuple(keep))
        engine = cached_engine(self.model, cache_dir) if self.model.has_structures else None
        pred = predict_chunk(self.model, df, source, opts, engine=engine)
        bimolecular = kinetics_of(self.model, opts)["molecularity"] == 2
        return with_library(screen_frame(pred.frame, self.units, rounded=False, bimolecular=bimolecular), pred.library)

    def suggest(self, candidates, k: int = 5, goal: str = "parameters", energy: str | None = None,
                *, cache_dir="default", **options) -> pd.DataFrame:
        """What to compute next: one row per pick, in pick order, with its ``score`` (the gain
        when it was picked), predictions in the model's unit, flags and ``reason``; the run's
        facts (candidates considered, left out...) in ``DataFrame.attrs["suggest"]`` (as
        `suggest --json` prints them). ``options``: those of the suggest job (``domain``)."""
        from .jobs.suggest import suggest_file
        from .views.suggest_text import suggest_json

        table = _as_table(candidates)[0] if isinstance(candidates, pd.DataFrame) else candidates
        out = suggest_json(suggest_file(None, table, k, goal, energy_column=energy, cache_dir=cache_dir,
                                        model=self.model, **options))
        frame = pd.DataFrame(out["picks"])
        frame.attrs["suggest"] = {key: v for key, v in out.items() if key != "picks"}
        return frame

    def save(self, path) -> None:
        from .io import modelfile

        modelfile.save(self.model.as_dict(), path)

    def report(self, path, figures=None) -> None:
        from .jobs.report import write_report

        write_report(self.model, self.record, path, figures)


def fit(data, energy: str, barrier: str, *, substituents: str | None = None, molecule: str | None = None,
        core: str | None = None, reaction: str | None = None, template: str | None = None,
        multiplicity: str | None = None, centre: str | None = None, tiers: str = "2d,table", cache_dir="default",
        workers: int = 1,
        xtb_level: str = "sp", solvent: str | None = None, **options) -> Family:
    """Fit and validate a family, as `barrierscope fit` does (the same path, the same checks).
    ``data`` is a DataFrame or a path; ``options`` are those of
    :class:`barrierscope.jobs.fit.FitOptions` (learner, relation, units, energy_kind,
    extra_descriptors, computed_energy, id_column, n_shuffles, ...)."""
    from .jobs.fit import EngineOptions, FitOptions, fit_table

    df, source = _as_table(data)
    structure = dict(substituents=substituents, molecule=molecule, core=core, reaction=reaction, template=template,
                     multiplicity=multiplicity, centre=centre)
    model, record = fit_table(df, source, structure, FitOptions(energy_column=energy, barrier_column=barrier, **options),
                              engine_opts=EngineOptions(tiers=tiers, cache_dir=cache_dir, workers=workers, xtb_level=xtb_level,
                                            solvent=solvent))
    return Family(model, record)


def descriptors(data, *, substituents: str | None = None, molecule: str | None = None, core: str | None = None,
                reaction: str | None = None, template: str | None = None, multiplicity: str | None = None,
                centre: str | None = None, tiers: str = "2d,table", id_column: str | None = None,
                cache_dir="default", workers: int = 1, xtb_level: str = "sp", solvent: str | None = None,
                max_atoms: int = 200) -> pd.DataFrame:
    """The descriptor table of ``data`` (a DataFrame or a path), as `barrierscope descriptors`
    writes it: one row per input row with ``row``, ``id``, the structure columns, ``status``,
    ``notes`` and every descriptor (units in the README's descriptor table)."""
    from .errors import InputError
    from .jobs.describe import describe_chunk
    from .jobs.setup import descriptor_engine, structure_spec

    df, source = _as_table(data)
    spec = structure_spec(substituents=substituents, molecule=molecule, core=core, reaction=reaction,
                          template=template, multiplicity=multiplicity, centre=centre)
    if spec.mode == "none":
        raise InputError("say where the structures are: substituents=, molecule= (with or without core=), "
                         "reaction=, or template= with substituents=")
    with descriptor_engine(tiers, cache_dir, workers, None, xtb_level=xtb_level, solvent=solvent) as engine:
        return describe_chunk(df, source, spec, engine, id_column=id_column, max_atoms=max_atoms)


def load(path) -> Family:
    """A family from a model file (its validation record comes with it)."""
    from .io.modelfile import load_model
    from .jobs.report import model_record

    model = load_model(path)
    return Family(model, model_record(model))
