"""The ``barrierscope`` command line: a thin layer over the library (jobs compute in kcal/mol,
views show the user's unit and words).

Every command turns bad input (a :class:`~barrierscope.errors.BarrierscopeError`: an option,
a file, a row, a fit the data cannot support) into a one-paragraph message on stderr and
exit 2. Anything else is a fault in barrierscope: exit 3, "internal error — please report",
the traceback written to a file the message names; ``BARRIERSCOPE_DEBUG=1`` shows tracebacks
on screen instead.
"""

from __future__ import annotations

import functools
import json
import os
from pathlib import Path
from typing import Optional

import typer

from .errors import BarrierscopeError, InputError

app = typer.Typer(add_completion=False, no_args_is_help=True, pretty_exceptions_enable=False,
                  help="Barrier estimates for a reaction family, with honest error bars.")


def _version(value: bool) -> None:
    if value:
        from . import __version__

        typer.echo(f"barrierscope {__version__}")
        raise typer.Exit()


@app.callback()
def _root(version: bool = typer.Option(False, "--version", callback=_version, is_eager=True,
                                       help="Print the version and exit.")) -> None:
    """Barrier estimates for a reaction family: structures and reaction energies to barriers,
    rates and half-lives, validated against a black-box baseline."""


def _fail(message: str, code: int = 2) -> None:
    typer.echo(f"error: {message}", err=True)
    raise typer.Exit(code)


def crash_report(exc: BaseException) -> Path:
    """Write the traceback of an internal fault to a file of its own (the message names it)."""
    import tempfile
    import time
    import traceback

    from . import __version__

    path = Path(tempfile.gettempdir()) / f"barrierscope-error-{time.strftime('%Y%m%d-%H%M%S')}-{os.getpid()}.txt"
    text = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    path.write_text(f"barrierscope {__version__}\n{text}", encoding="utf-8")
    return path


class Stopped(BaseException):
    """A stop signal (SIGTERM: a job queue's time limit; SIGHUP: a closed terminal) raised in
    the main thread, so every ``finally`` runs — part files, temporary outputs — as for Ctrl-C."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


def _raise_stopped(signum, frame):
    raise Stopped(signum)


def _stop_signals() -> dict:
    """Install the stop handlers (main thread only); returns the previous ones."""
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return {}
    wanted = [getattr(signal, n) for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n)]
    return {s: signal.signal(s, _raise_stopped) for s in wanted}


def guarded(func):
    """Run a command body: the chemist's problems become messages (exit 2), faults in
    barrierscope an internal-error message with the traceback in a file (exit 3); Ctrl-C,
    SIGTERM and SIGHUP stop it cleanly (exit 128 + the signal's number)."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import signal

        from .progress import restart

        restart()
        previous = _stop_signals()
        try:
            return func(*args, **kwargs)
        except typer.Exit:
            raise
        except BarrierscopeError as exc:
            _fail(str(exc), exc.exit_code)
        except KeyboardInterrupt:
            _fail("interrupted", 130)
        except Stopped as exc:
            _fail(f"stopped by {signal.Signals(exc.signum).name}; no partial output was left", 128 + exc.signum)
        except MemoryError:
            _fail("out of memory; try a smaller --chunk-size", 3)
        except Exception as exc:  # a fault in barrierscope, not in the input
            if os.environ.get("BARRIERSCOPE_DEBUG"):
                raise
            where = crash_report(exc)
            _fail(f"internal error — please report ({type(exc).__name__}: {str(exc)[:300]}); the traceback is in "
                  f"{where} (BARRIERSCOPE_DEBUG=1 prints it here instead)", 3)
        finally:
            for sig, handler in previous.items():
                signal.signal(sig, handler)

    return wrapper


def kinetic_options(molecularity, standard_state, concentration, solvent) -> dict:
    """The bimolecular options of screen and suggest, checked (each error names its option)."""
    from .bimolecular import STANDARD_STATES, parse_concentration, solvent_viscosity
    from .jobs.options import option

    if molecularity is not None and molecularity not in (1, 2):
        raise InputError(f"--molecularity {molecularity}: 1 (a unimolecular step) or 2 (A + B → TS)")
    if standard_state is not None and standard_state.strip() not in STANDARD_STATES:
        raise InputError(f"--standard-state {standard_state!r}: choose one of {', '.join(STANDARD_STATES)}")
    with option("--concentration"):
        c = None if concentration is None else parse_concentration(concentration)
    if solvent is not None:
        with option("--solvent"):
            solvent_viscosity(solvent)
    return {"molecularity": molecularity, "standard_state": None if standard_state is None else standard_state.strip(),
            "concentration": c, "solvent": solvent}


def warn(messages) -> None:
    for m in messages:
        typer.echo(f"warning: {m}", err=True)


def print_json(obj) -> None:
    """One JSON object on stdout (NaN as null, numpy values as plain numbers)."""
    from .io.modelfile import json_ready

    typer.echo(json.dumps(json_ready(obj), indent=2, allow_nan=False))


# Options shared by several commands (typer reads these declarations; they hold no state).
UNITS = typer.Option("kcal/mol", "--units", help="Energy unit of the input columns: kcal/mol, kJ/mol, eV, hartree.")
KIND = typer.Option("free-energy", "--kind", help="What the energies are: free-energy (gives rates), enthalpy or "
                                                  "electronic.")
ID = typer.Option(None, "--id", help="Column with member ids (default: an id or name column, any case, else the row).")
SUBSTITUENTS = typer.Option(None, "--substituents", help="Columns of substituent SMILES, one attachment atom each "
                                                         "([*]C#N), comma-separated.")
MOLECULE = typer.Option(None, "--molecule", help="Column of whole-molecule SMILES (with --core: cut at the core).")
CORE = typer.Option(None, "--core", help="Core SMILES with numbered attachment points, e.g. 'OC(=O)c1ccc([*:1])cc1'.")
REACTION = typer.Option(None, "--reaction", help="Column of reaction SMILES: 1–3 reactants >> 1–3 products.")
TEMPLATE = typer.Option(None, "--template", help="Reaction template 'REACTANTS>>PRODUCTS' with [*:1], [*:2] filled "
                                                 "from --substituents.")
MULT = typer.Option(None, "--multiplicity", help="Column of spin multiplicities laid out like the reaction ('2.1>>2.1').")
CENTRE = typer.Option(None, "--centre", help="With --molecule: SMARTS of the reaction centre for the centre tier "
                                             "(first match per molecule; default: the molecule's one radical atom).")
TIERS = typer.Option("2d,table", "--tiers", help="Descriptor tiers: 2d, table, xtb, steric3d, centre (or none).")
CACHE = typer.Option(None, "--cache-dir", help="Descriptor cache folder (default: the user cache).")
MAX_ATOMS = typer.Option(200, "--max-atoms", help="Largest molecule accepted, in heavy atoms.")
WORKERS = typer.Option(1, "--workers", help="Local worker processes.")
SCHEDULER = typer.Option(None, "--scheduler", help="'local' (a loopback Dask cluster) or a Dask scheduler address.")
XTB_LEVEL = typer.Option("sp", "--xtb-level", help="GFN2-xTB level for reaction energies: sp (single points on "
                                                   "force-field geometries) or opt.")
SOLVENT = typer.Option(None, "--solvent", help="Implicit solvent (ALPB) for GFN2-xTB, e.g. water; default none (gas).")
REPORT = typer.Option(None, "--report", help="Write a self-contained HTML report here.")
TEMPERATURE = typer.Option("298.15K", "--temperature", help="Temperature for rates and half-lives: 298.15K, 25C.")
# `--units` is the one spelling; `--energy-units` is kept, hidden, for scripts written before.
LIB_UNITS = typer.Option(None, "--units", help="Unit of --energy (default: the model's).")
MOLECULARITY = typer.Option(1, "--molecularity", help="1: a unimolecular step; 2: A + B → TS (rates in M⁻¹ s⁻¹).")
STANDARD_STATE = typer.Option("1M", "--standard-state", help="Standard state of the computed barriers: 1M or 1atm "
                                                             "(gas-phase default of most codes; converted for rates).")
FAMILY = typer.Option(None, "--family", help="Column naming each row's family: fit the families jointly.")
SHARE = typer.Option(None, "--share", help="With --family: parameters shared by every family: width (default), "
                                           "none, or a comma list of floor, midpoint, width.")
OLD_UNITS = typer.Option(None, "--energy-units", hidden=True)


@app.command()
@guarded
def curve(data: Path = typer.Argument(..., help="Table with one row per member (CSV, TSV, XLSX, Parquet, SDF)."),
          energy: str = typer.Option(..., "--energy", help="Column with the reaction energy (product − reactant)."),
          barrier: str = typer.Option(..., "--barrier", help="Column with the barrier (TS − reactant)."),
          units: str = UNITS, kind: str = KIND, id_column: Optional[str] = ID,
          loss: str = typer.Option("squared", "--loss", help="squared (least squares), or soft, huber, cauchy "
                                                             "(robust to outliers)."),
          intervals: str = typer.Option("profile", "--intervals", help="Parameter intervals: profile, wald or "
                                                                       "bootstrap."),
          n_bootstrap: int = typer.Option(1000, "--n-bootstrap", help="Resamples for --intervals bootstrap."),
          skip_bad_rows: bool = typer.Option(False, "--skip-bad-rows", help="Leave out (and list) bad rows."),
          family: Optional[str] = FAMILY, share: Optional[str] = SHARE,
          duplicates: str = typer.Option("refuse", "--duplicates",
                                         help="Rows that repeat a member (the same id) with other numbers: refuse, "
                                              "lowest, mean or boltzmann (at --temperature)."),
          temperature: str = typer.Option("298.15K", "--temperature",
                                          help="Temperature of --duplicates boltzmann: 298.15K, 25C."),
          figure: Optional[Path] = typer.Option(None, "--figure", help="With --family: write every family's "
                                                                       "curve to this PNG."),
          as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of the table.")):
    """Fit every barrier–reaction-energy relation to a family and compare them; with --family,
    fit several families jointly with shared parameters."""
    from .jobs.options import temperature as temperature_option

    kelvin, note = temperature_option(temperature)
    warn([note] if note else [])
    repeats = dict(duplicates=duplicates.strip().lower(), temperature=kelvin)
    if family is not None:
        from .jobs.curve import families_file
        from .views.families_text import families_json, format_families

        record = families_file(data, energy, barrier, family, share=share, units=units, kind=kind, id_column=id_column,
                               skip_bad_rows=skip_bad_rows, figure=figure, **repeats)
        warn(record.warnings)
        shown = families_json(record, record.units)
        print_json(shown) if as_json else typer.echo(format_families(shown))
        return
    from .jobs.curve import curve_file
    from .views.curve_text import curve_json, format_curve

    record = curve_file(data, energy, barrier, units, kind=kind, id_column=id_column, loss=loss, intervals=intervals,
                        n_bootstrap=n_bootstrap, skip_bad_rows=skip_bad_rows, **repeats)
    warn(record.warnings)
    shown = curve_json(record, record.units)
    if as_json:
        print_json(shown)
    else:
        typer.echo(format_curve(shown))


@app.command()
@guarded
def descriptors(data: Path = typer.Argument(..., help="Table of structures (CSV, TSV, XLSX, SMILES, SDF, Parquet)."),
                output: Path = typer.Option(..., "-o", "--output", help="Output table (.csv, .tsv or .parquet)."),
                substituents: Optional[str] = SUBSTITUENTS, molecule: Optional[str] = MOLECULE,
                core: Optional[str] = CORE, reaction: Optional[str] = REACTION, template: Optional[str] = TEMPLATE,
                multiplicity: Optional[str] = MULT, centre: Optional[str] = CENTRE, tiers: str = TIERS,
                id_column: Optional[str] = ID, cache_dir: Optional[Path] = CACHE, max_atoms: int = MAX_ATOMS, workers: int = WORKERS,
                scheduler: Optional[str] = SCHEDULER, xtb_level: str = XTB_LEVEL, solvent: Optional[str] = SOLVENT,
                quiet: bool = typer.Option(False, "--quiet", help="No summary on stderr.")):
    """Compute descriptors: one output row per input row, with a status column."""
    from .jobs.describe import run_describe

    structure = dict(substituents=substituents, molecule=molecule, core=core, reaction=reaction, template=template,
                     multiplicity=multiplicity, centre=centre)
    table = run_describe(data, output, structure, tiers, id_column=id_column, cache_dir=cache_dir, max_atoms=max_atoms,
                         workers=workers, scheduler=scheduler, xtb_level=xtb_level, solvent=solvent)
    if not quiet:
        bad = table["status"] != "ok"
        typer.echo(f"{len(table)} rows: {int((~bad).sum())} ok, {int(bad.sum())} with errors, "
                   f"{int((table['notes'] != '').sum())} with missing descriptor values; written to {output}", err=True)
        for _, r in table[bad].head(10).iterrows():
            typer.echo(f"  row {r['row']} ({r['id']}): {r['status']}", err=True)
        if bad.sum() > 10:
            typer.echo(f"  ... and {int(bad.sum()) - 10} more (see the status column)", err=True)


@app.command()
@guarded
def fit(data: Path = typer.Argument(..., help="Table with one row per computed member."),
        energy: str = typer.Option(..., "--energy", help="Column with the reaction energy (product − reactant)."),
        barrier: str = typer.Option(..., "--barrier", help="Column with the barrier (TS − reactant)."),
        output: Path = typer.Option(..., "-o", "--output", help="Model file to write (JSON)."),
        substituents: Optional[str] = SUBSTITUENTS, molecule: Optional[str] = MOLECULE, core: Optional[str] = CORE,
        reaction: Optional[str] = REACTION, template: Optional[str] = TEMPLATE, multiplicity: Optional[str] = MULT,
        centre: Optional[str] = CENTRE, tiers: str = TIERS,
        learner: str = typer.Option("auto", "--learner", help="auto (ridge or a Gaussian process, chosen per family "
                                                              "and inside every validation split), ridge, pls, gp "
                                                              "or forest."),
        relation: str = typer.Option("asymptotic", "--relation", help="A relation (asymptotic, linear, marcus, "
                                                                      "agmon_levine, rehm_weller, blowers_masel) or auto."),
        units: str = UNITS, kind: str = KIND,
        extra_descriptors: Optional[str] = typer.Option(None, "--extra-descriptors",
                                                        help="Comma-separated numeric columns of your own descriptors."),
        computed_energy: Optional[str] = typer.Option(
            None, "--computed-energy", metavar="COL",
            help="Column of cheaply computed reaction energies (in --units; every member needs one): the energy "
                 "stage and the black box are anchored on it (a + b·COL, unpenalised, plus a penalised correction "
                 "when it pays). Default: the xtb tier's reaction energy when computed; 'none' turns anchoring off."),
        id_column: Optional[str] = ID,
        duplicates: str = typer.Option("refuse", "--duplicates",
                                       help="Rows that repeat a structure with other numbers (conformers): refuse, "
                                            "lowest (the lowest barrier), mean, or boltzmann (the Curtin–Hammett "
                                            "effective barrier −RT ln Σ exp(−ΔG‡/RT) at --temperature)."),
        temperature: str = typer.Option("298.15K", "--temperature",
                                        help="Temperature of --duplicates boltzmann: 298.15K, 25C."),
        molecularity: int = MOLECULARITY, standard_state: str = STANDARD_STATE,
        shuffles: int = typer.Option(5, "--shuffles", help="y-randomisation refits (0 to skip)."),
        margin: Optional[float] = typer.Option(None, "--margin", help="Smallest MAE difference (in --units) the "
                                                                     "verdict counts as a win; at least a tenth of the "
                                                                     "better MAE either way. Default 0.5 kcal/mol."),
        skip_bad_rows: bool = typer.Option(False, "--skip-bad-rows", help="Leave out (and list) unusable rows."),
        family: Optional[str] = FAMILY, share: Optional[str] = SHARE,
        prediction_intervals: str = typer.Option("model", "--prediction-intervals",
                                                 help="model (each route's own) or jackknife+ (from the family's "
                                                      "held-out errors; coverage measured in every regime)."),
        cache_dir: Optional[Path] = CACHE, max_atoms: int = MAX_ATOMS, workers: int = WORKERS,
        scheduler: Optional[str] = SCHEDULER, xtb_level: str = XTB_LEVEL, solvent: Optional[str] = SOLVENT,
        members: Optional[Path] = typer.Option(None, "--members", help="Write each member's leave-one-out "
                                                                       "predictions and flags here (CSV/TSV/Parquet)."),
        report: Optional[Path] = REPORT,
        figures: Optional[Path] = typer.Option(None, "--figures", help="Also write the report's figures as PNG here."),
        as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of the table.")):
    """Fit a family, validate every route in every regime, and write the model file."""
    from .jobs.families import parse_share
    from .jobs.fit import EngineOptions, FitOptions, fit_file
    from .views.fit_text import fit_json, format_fit

    from .jobs.options import temperature as temperature_option

    extra = [c.strip() for c in extra_descriptors.split(",") if c.strip()] if extra_descriptors else []
    kelvin, note = temperature_option(temperature)
    warn([note] if note else [])
    opts = FitOptions(energy_column=energy, barrier_column=barrier, learner=learner, relation=relation, units=units,
                      energy_kind=kind, extra_descriptors=extra, id_column=id_column, skip_bad_rows=skip_bad_rows,
                      n_shuffles=shuffles, max_atoms=max_atoms, prediction_intervals=prediction_intervals,
                      family_column=family, share=parse_share(share), margin=margin, computed_energy=computed_energy,
                      duplicates=duplicates.strip().lower(), temperature=kelvin, molecularity=molecularity,
                      standard_state=standard_state.strip())
    structure = dict(substituents=substituents, molecule=molecule, core=core, reaction=reaction, template=template,
                     multiplicity=multiplicity, centre=centre)
    model, record = fit_file(data, output, structure, opts,
                             engine_opts=EngineOptions(tiers=tiers, cache_dir=cache_dir if cache_dir is not None else "default",
                                           workers=workers, scheduler=scheduler, xtb_level=xtb_level,
                                           solvent=solvent), members=members, report=report, figures=figures)
    warn(record.warnings)
    if as_json:
        print_json(fit_json(record, model.tiers))
    else:
        written = [f"model written to {output}"] + [f"{what} {p}" for what, p in (("members", members),
                                                                               ("report", report)) if p]
        typer.echo(format_fit(fit_json(record, model.tiers), model.tiers) + "\n" + "; ".join(written))


@app.command()
@guarded
def screen(model: Path = typer.Argument(..., help="Model file written by `barrierscope fit`."),
           library: Path = typer.Argument(..., help="Library to rank (CSV, TSV, XLSX, SMILES, SDF, Parquet)."),
           output: Path = typer.Option(..., "-o", "--output", help="Results (.csv, .tsv or .parquet)."),
           temperature: str = TEMPERATURE,
           transmission: float = typer.Option(1.0, "--transmission", help="Transmission coefficient κ (Eyring)."),
           energy: Optional[str] = typer.Option(None, "--energy", help="Library column of computed reaction energies "
                                                                       "(used instead of predicting them)."),
           units: Optional[str] = LIB_UNITS, energy_units: Optional[str] = OLD_UNITS, id_column: Optional[str] = ID,
           top: int = typer.Option(0, "--top", help="Print the K lowest-barrier rows (in-domain rows first)."),
           molecularity: Optional[int] = typer.Option(None, "--molecularity",
                                                      help="1 or 2 (A + B → TS); default: the model's."),
           standard_state: Optional[str] = typer.Option(None, "--standard-state",
                                                        help="1M or 1atm, of the model's barriers; default: the "
                                                             "model's."),
           concentration: Optional[str] = typer.Option(None, "--concentration",
                                                       help="The partner's concentration for a bimolecular step "
                                                            "(0.1M, 100mM): pseudo-first-order rates and half-lives."),
           solvent: Optional[str] = typer.Option(None, "--solvent",
                                                 help="Solvent whose viscosity sets the diffusion limit of a "
                                                      "bimolecular step (water, acetonitrile, toluene...); default: "
                                                      "the model's xtb solvent."),
           keep: Optional[str] = typer.Option(None, "--keep", metavar="COLS",
                                              help="The library's columns to carry into the output after "
                                                   "barrierscope's (comma-separated; 'none' for none). Default: "
                                                   "every one."),
           workers: int = WORKERS, scheduler: Optional[str] = SCHEDULER,
           chunk_size: int = typer.Option(20000, "--chunk-size", help="Rows per chunk (a task on the cluster)."),
           cache_dir: Optional[Path] = CACHE, max_atoms: int = MAX_ATOMS, report: Optional[Path] = REPORT,
           quiet: bool = typer.Option(False, "--quiet", help="No progress bar and no summary.")):
    """Rank a virtual library: barrier with its 90 % interval, α, rate, half-life, domain flags."""
    from .jobs.executors import make_executor
    from .jobs.predict import ScreenOptions
    from .jobs.screen import run_screen

    from .jobs.options import at_least, library_unit, positive
    from .jobs.options import temperature as temperature_option
    from .views.screen_text import format_screen

    units = library_unit(units, energy_units)
    at_least("--chunk-size", chunk_size, 1)
    kelvin, note = temperature_option(temperature)
    warn([note] if note else [])
    opts = ScreenOptions(temperature=kelvin,
                         transmission=positive("--transmission", transmission), energy_column=energy,
                         energy_units=units, id_column=id_column,
                         cache_dir=str(cache_dir) if cache_dir is not None else "default", max_atoms=max_atoms,
                         keep=None if keep is None else tuple(c.strip() for c in keep.split(",")
                                                              if c.strip() and keep.strip().lower() != "none"),
                         **kinetic_options(molecularity, standard_state, concentration, solvent))
    executor = make_executor(workers=workers, scheduler=scheduler)
    try:
        summary = run_screen(model, library, output, opts, executor=executor, chunk_size=chunk_size,
                             top=max(top, 10 if report else 0), progress=not quiet)
    finally:
        executor.close()
    if report is not None:
        from .io.modelfile import load_model
        from .jobs.report import write_report

        write_report(load_model(model), path=report, source=str(library), screen=summary)
    if not quiet:
        typer.echo(format_screen(summary, summary.units, summary.energy_kind, top=top) +
                   (f"\nreport written to {report}" if report else ""), err=True)


@app.command()
@guarded
def suggest(model: Path = typer.Argument(..., help="Model file written by `barrierscope fit`."),
            candidates: Path = typer.Argument(..., help="Candidate members (same structure columns as the model)."),
            k: int = typer.Option(..., "-k", help="How many members to suggest."),
            goal: str = typer.Option("parameters", "--goal", help="parameters (pin the curve) or predictions "
                                                                  "(sharpen the pool's predictions)."),
            energy: Optional[str] = typer.Option(None, "--energy", help="Candidate column of computed reaction "
                                                                        "energies."),
            domain: str = typer.Option("prefer", "--domain",
                                       help="prefer (in-domain candidates first, unless an out-of-domain one gains "
                                            "1.5 times as much), only (in-domain candidates only) or any (gain alone)."),
            units: Optional[str] = LIB_UNITS, energy_units: Optional[str] = OLD_UNITS, id_column: Optional[str] = ID,
            cache_dir: Optional[Path] = CACHE,
            report: Optional[Path] = REPORT,
            as_json: bool = typer.Option(False, "--json", help="Print one JSON object with the picks.")):
    """Suggest which candidates to compute next, and why."""
    from .io.modelfile import load_model
    from .jobs.report import write_report
    from .jobs.options import library_unit
    from .jobs.suggest import suggest_file
    from .views.suggest_text import format_suggestions, suggest_json

    units = library_unit(units, energy_units)
    fitted = load_model(model)
    result = suggest_file(model, candidates, k, goal, energy_column=energy, energy_units=units, id_column=id_column,
                          cache_dir=str(cache_dir) if cache_dir is not None else "default", model=fitted,
                          domain=domain)
    if report is not None:
        write_report(fitted, path=report, source=str(candidates), picks=result)
    if as_json:
        print_json(suggest_json(result))
    else:
        typer.echo(format_suggestions(result) + (f"\nreport written to {report}" if report else ""))


@app.command()
@guarded
def demo(out: Path = typer.Option(Path("barrierscope-demo"), "--out", help="Folder for the demo's outputs."),
         cache_dir: Optional[Path] = CACHE):
    """Run the whole job on the bundled demo family (invented data): fit, report, screen, advice."""
    from .jobs.demo import run_demo
    from .views.demo_text import format_demo

    typer.echo(format_demo(run_demo(out, str(cache_dir) if cache_dir is not None else "default")))


def main() -> None:  # console-script entry point
    app()


if __name__ == "__main__":  # pragma: no cover
    main()
