"""The ``barrierscope`` command line: a thin layer over the library.

Every command turns bad input into a one-paragraph message on stderr and a non-zero exit
(2 for input the run cannot use); ``BARRIERSCOPE_DEBUG=1`` shows tracebacks.
"""

from __future__ import annotations

import functools
import json
import os
from pathlib import Path
from typing import Optional

import typer

from .errors import BarrierscopeError

app = typer.Typer(add_completion=False, no_args_is_help=True, pretty_exceptions_enable=False,
                  help="Barrier estimates for a reaction family, with honest error bars.")


@app.callback()
def _root() -> None:
    """Barrier estimates for a reaction family: structures and reaction energies to barriers,
    rates and half-lives, validated against a black-box baseline."""


def _fail(message: str, code: int = 2) -> None:
    typer.echo(f"error: {message}", err=True)
    raise typer.Exit(code)


def guarded(func):
    """Run a command body; user-facing errors become messages, not tracebacks."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except typer.Exit:
            raise
        except BarrierscopeError as exc:
            _fail(str(exc), exc.exit_code)
        except (ValueError, KeyError) as exc:
            if os.environ.get("BARRIERSCOPE_DEBUG"):
                raise
            _fail(str(exc).strip("'\""))
        except MemoryError:
            _fail("out of memory; try a smaller --chunk-size", 3)
        except KeyboardInterrupt:
            _fail("interrupted", 130)
        except Exception as exc:  # an internal fault: say so plainly
            if os.environ.get("BARRIERSCOPE_DEBUG"):
                raise
            _fail(f"internal error ({type(exc).__name__}: {exc}); rerun with BARRIERSCOPE_DEBUG=1 "
                  f"for a traceback and report it", 3)

    return wrapper


def echo_warnings(warnings, quiet: bool = False) -> None:
    if quiet:
        return
    for w in warnings:
        typer.echo(f"warning: {w}", err=True)


def print_json(obj) -> None:
    """One JSON object on stdout (NaN as null, numpy values as plain numbers)."""
    from .io.modelfile import json_ready

    typer.echo(json.dumps(json_ready(obj), indent=2, allow_nan=False))


XTB_LEVEL_HELP = "GFN2-xTB level for reaction energies: sp (single points on force-field geometries) or opt."
SOLVENT_HELP = "Implicit solvent (ALPB) for GFN2-xTB reaction energies, e.g. water; default none (gas)."
MULT_HELP = "Column of spin multiplicities per species, laid out like the reaction ('2.1>>2')."
UNITS_HELP = "Energy unit of the input columns: kcal/mol, kJ/mol, eV or hartree."
KIND_HELP = "What the energies are: free-energy (gives rates), enthalpy or electronic."


@app.command()
@guarded
def curve(
    data: Path = typer.Argument(..., help="Table with one row per member (CSV, TSV, Parquet, SDF)."),
    energy: str = typer.Option(..., "--energy", help="Column with the reaction energy (product − reactant)."),
    barrier: str = typer.Option(..., "--barrier", help="Column with the barrier (TS − reactant)."),
    units: str = typer.Option("kcal/mol", "--units", help=UNITS_HELP),
    kind: str = typer.Option("free-energy", "--kind", help=KIND_HELP),
    id_column: Optional[str] = typer.Option(None, "--id", help="Column with member ids (default: 'id' if present)."),
    loss: str = typer.Option("linear", "--loss", help="linear (least squares) or soft_l1, huber, cauchy (robust)."),
    intervals: str = typer.Option("profile", "--intervals", help="Parameter intervals: profile, wald or bootstrap."),
    n_bootstrap: int = typer.Option(1000, "--n-bootstrap", help="Resamples for --intervals bootstrap."),
    skip_bad_rows: bool = typer.Option(False, "--skip-bad-rows", help="Leave out (and list) rows with bad values."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of the table."),
):
    """Fit every barrier–reaction-energy relation to a family and compare them."""
    from .io.pairs import load_pairs, require_members
    from .io.tables import read_table
    from .jobs.curve import format_curve_summary, summarize_curves
    from .units import normalize_unit, parse_energy_kind

    unit = normalize_unit(units)
    energy_kind = parse_energy_kind(kind).value
    if intervals not in ("profile", "wald", "bootstrap"):
        raise ValueError(f"unknown interval method {intervals!r}; valid choices: profile, wald, bootstrap")
    df = read_table(data)
    pairs = load_pairs(df, str(data), energy, barrier, unit, id_col=id_column, skip_bad_rows=skip_bad_rows)
    require_members(pairs.n, 4, "comparing the relations with leave-one-out")
    summary = summarize_curves(pairs.energy, pairs.barrier, unit=unit, energy_kind=energy_kind, loss=loss,
                               intervals=intervals, n_bootstrap=n_bootstrap)
    summary["energy_column"], summary["barrier_column"] = energy, barrier
    summary["warnings"] = pairs.warnings
    summary["skipped"] = [{"row": p.row, "id": p.ident, "problem": p.message} for p in pairs.skipped]
    if as_json:
        echo_warnings(pairs.warnings)
        print_json(summary)
    else:
        echo_warnings(pairs.warnings)
        typer.echo(format_curve_summary(summary))


STRUCTURE_HELP = {
    "substituents": "Comma-separated columns of substituent SMILES, one attachment atom each ([*]C#N).",
    "molecule": "Column of whole-molecule SMILES (with --core: molecules to cut at the core).",
    "core": "Core SMILES with numbered attachment points, e.g. 'OC(=O)c1ccc([*:1])cc1'.",
    "reaction": "Column of reaction SMILES 'A.B>>P' (atom maps allowed).",
    "template": "Reaction template 'REACTANTS>>PRODUCTS' with [*:1], [*:2] filled from --substituents.",
}

# Options shared by several commands (typer reads these declarations; they hold no state).
OPT_SUBSTITUENTS = typer.Option(None, "--substituents", help=STRUCTURE_HELP["substituents"])
OPT_MOLECULE = typer.Option(None, "--molecule", help=STRUCTURE_HELP["molecule"])
OPT_CORE = typer.Option(None, "--core", help=STRUCTURE_HELP["core"])
OPT_REACTION = typer.Option(None, "--reaction", help=STRUCTURE_HELP["reaction"])
OPT_TEMPLATE = typer.Option(None, "--template", help=STRUCTURE_HELP["template"])
OPT_TIERS = typer.Option("2d,table", "--tiers", help="Descriptor tiers: 2d, table, xtb, steric3d (or none).")
OPT_CACHE = typer.Option(None, "--cache-dir", help="Descriptor cache folder (default: the user cache).")
OPT_MAX_ATOMS = typer.Option(200, "--max-atoms", help="Largest molecule accepted, in heavy atoms.")
OPT_SCHEDULER = typer.Option(None, "--scheduler", help="'local' (a loopback Dask cluster) or a Dask scheduler address.")
OPT_XTB_LEVEL = typer.Option("sp", "--xtb-level", help=XTB_LEVEL_HELP)
OPT_SOLVENT = typer.Option(None, "--solvent", help=SOLVENT_HELP)
OPT_MULT = typer.Option(None, "--multiplicity", help=MULT_HELP)


def structure_spec(substituents, molecule, core, reaction=None, template=None, multiplicity=None):
    from .structures.core import CoreError
    from .structures.spec import make_spec

    try:
        return make_spec(substituents=substituents, molecule=molecule, core=core, reaction=reaction,
                         template=template, multiplicity=multiplicity)
    except CoreError as exc:
        raise ValueError(str(exc)) from None


def xtb_settings(level: str = "sp", solvent: Optional[str] = None):
    from .semiempirical.species import XtbSettings

    solvent = None if solvent is None or solvent.strip().lower() in ("", "none", "gas") else solvent.strip()
    return XtbSettings(level=level, solvent=solvent)


def make_engine(tiers: str, cache_dir: Optional[Path], workers: int = 1, scheduler: Optional[str] = None,
                xtb_level: str = "sp", solvent: Optional[str] = None):
    from .descriptors.cache import DescriptorCache
    from .descriptors.tiers import DescriptorEngine, parse_tiers

    names = parse_tiers(tiers)
    settings = xtb_settings(xtb_level, solvent)
    cache = DescriptorCache(cache_dir if cache_dir is not None else "default")
    executor = None
    if workers > 1 or scheduler:
        from .jobs.executors import make_executor

        executor = make_executor(workers=workers, scheduler=scheduler)
    return DescriptorEngine(names, cache, executor=executor, xtb_settings=settings)


@app.command()
@guarded
def descriptors(
    data: Path = typer.Argument(..., help="Table of structures (CSV, TSV, SMILES file, SDF, Parquet)."),
    substituents: Optional[str] = OPT_SUBSTITUENTS,
    molecule: Optional[str] = OPT_MOLECULE,
    core: Optional[str] = OPT_CORE,
    reaction: Optional[str] = OPT_REACTION,
    template: Optional[str] = OPT_TEMPLATE,
    tiers: str = OPT_TIERS,
    output: Path = typer.Option(..., "-o", "--output", help="Output table (.csv, .tsv or .parquet)."),
    id_column: Optional[str] = typer.Option(None, "--id", help="Column with row ids (default: 'id' if present)."),
    cache_dir: Optional[Path] = OPT_CACHE,
    max_atoms: int = OPT_MAX_ATOMS,
    workers: int = typer.Option(1, "--workers", help="Local processes for the slow tiers (xtb, steric3d)."),
    scheduler: Optional[str] = OPT_SCHEDULER,
    xtb_level: str = OPT_XTB_LEVEL,
    solvent: Optional[str] = OPT_SOLVENT,
    multiplicity: Optional[str] = OPT_MULT,
    quiet: bool = typer.Option(False, "--quiet", help="No summary on stderr."),
):
    """Compute descriptors: one output row per input row, with a status column."""
    from .io.tables import write_table
    from .jobs.describe import describe_file

    spec = structure_spec(substituents, molecule, core, reaction, template, multiplicity)
    if spec.mode == "none":
        raise ValueError("say where the structures are: --substituents, --molecule (with or without --core), "
                         "--reaction, or --template with --substituents")
    engine = make_engine(tiers, cache_dir, workers, scheduler, xtb_level, solvent)
    table = describe_file(data, spec, engine, id_column=id_column, max_atoms=max_atoms)
    write_table(table, output)
    if not quiet:
        bad = table["status"] != "ok"
        noted = table["notes"] != ""
        typer.echo(f"{len(table)} rows: {int((~bad).sum())} ok, {int(bad.sum())} with errors, "
                   f"{int(noted.sum())} with missing descriptor values; written to {output}", err=True)
        for _, r in table[bad].head(10).iterrows():
            typer.echo(f"  row {r['row']} ({r['id']}): {r['status']}", err=True)
        if bad.sum() > 10:
            typer.echo(f"  ... and {int(bad.sum()) - 10} more (see the status column)", err=True)


@app.command()
@guarded
def fit(
    data: Path = typer.Argument(..., help="Table with one row per computed member."),
    energy: str = typer.Option(..., "--energy", help="Column with the reaction energy (product − reactant)."),
    barrier: str = typer.Option(..., "--barrier", help="Column with the barrier (TS − reactant)."),
    output: Path = typer.Option(..., "-o", "--output", help="Model file to write (JSON)."),
    substituents: Optional[str] = OPT_SUBSTITUENTS,
    molecule: Optional[str] = OPT_MOLECULE,
    core: Optional[str] = OPT_CORE,
    reaction: Optional[str] = OPT_REACTION,
    template: Optional[str] = OPT_TEMPLATE,
    tiers: str = OPT_TIERS,
    learner: str = typer.Option("ridge", "--learner", help="ridge, pls, gp or forest."),
    relation: str = typer.Option("asymptotic", "--relation",
                                 help="asymptotic, linear, marcus, agmon_levine, rehm_weller or auto."),
    units: str = typer.Option("kcal/mol", "--units", help=UNITS_HELP),
    kind: str = typer.Option("free-energy", "--kind", help=KIND_HELP),
    extra_descriptors: Optional[str] = typer.Option(None, "--extra-descriptors",
                                                    help="Comma-separated numeric columns of your own descriptors."),
    id_column: Optional[str] = typer.Option(None, "--id", help="Column with member ids (default: 'id' if present)."),
    shuffles: int = typer.Option(5, "--shuffles", help="y-randomisation refits (0 to skip)."),
    skip_bad_rows: bool = typer.Option(False, "--skip-bad-rows", help="Leave out (and list) rows that cannot be used."),
    cache_dir: Optional[Path] = OPT_CACHE,
    max_atoms: int = OPT_MAX_ATOMS,
    workers: int = typer.Option(1, "--workers", help="Local processes for the slow tiers."),
    scheduler: Optional[str] = OPT_SCHEDULER,
    xtb_level: str = OPT_XTB_LEVEL,
    solvent: Optional[str] = OPT_SOLVENT,
    multiplicity: Optional[str] = OPT_MULT,
    report: Optional[Path] = typer.Option(None, "--report", help="Write a self-contained HTML report here."),
    figures: Optional[Path] = typer.Option(None, "--figures", help="Also write the report's figures as PNG here."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of the table."),
):
    """Fit a family, validate every route leave-one-out, and write the model file."""
    from .io import modelfile
    from .io.tables import read_table
    from .jobs.fit import FitOptions, fit_family, format_fit_summary, summary_in_unit

    spec = structure_spec(substituents, molecule, core, reaction, template, multiplicity)
    extra = [c.strip() for c in extra_descriptors.split(",") if c.strip()] if extra_descriptors else []
    engine = make_engine(tiers, cache_dir, workers, scheduler, xtb_level, solvent) if spec.mode != "none" else None
    if engine is not None and not engine.tiers and not extra:
        raise ValueError("--tiers none leaves no descriptors: add --extra-descriptors, or drop the structure "
                         "options for a curve-only model")
    if engine is None and tiers != "2d,table":
        raise ValueError("--tiers needs a structure input (--substituents, --molecule, --reaction or --template)")
    opts = FitOptions(energy_column=energy, barrier_column=barrier, learner=learner, relation=relation, units=units,
                      energy_kind=kind, extra_descriptors=extra, id_column=id_column, skip_bad_rows=skip_bad_rows,
                      n_shuffles=shuffles, max_atoms=max_atoms)
    df = read_table(data)
    model, summary = fit_family(df, str(data), spec, engine, opts)
    modelfile.save(model.as_dict(), output)
    shown = summary_in_unit(summary, model.units)
    if report is not None or figures is not None:
        from .views.report import write_fit_report

        write_fit_report(model, summary, report, figures, source=str(data))
    if as_json:
        echo_warnings(summary["warnings"])
        print_json(shown)
    else:
        typer.echo(format_fit_summary(shown))
        typer.echo(f"model written to {output}" + (f"; report {report}" if report else ""))


@app.command()
@guarded
def screen(
    model: Path = typer.Argument(..., help="Model file written by `barrierscope fit`."),
    library: Path = typer.Argument(..., help="Library to rank (CSV, TSV, SMILES file, SDF, Parquet)."),
    output: Path = typer.Option(..., "-o", "--output", help="Results (.csv, .tsv or .parquet)."),
    temperature: float = typer.Option(298.15, "--temperature", help="Temperature for rates and half-lives, K."),
    transmission: float = typer.Option(1.0, "--transmission", help="Transmission coefficient κ of the Eyring equation."),
    energy: Optional[str] = typer.Option(None, "--energy", help="Library column of computed reaction energies "
                                                                  "(used instead of predicting them)."),
    energy_units: Optional[str] = typer.Option(None, "--energy-units", help="Unit of --energy (default: the model's)."),
    id_column: Optional[str] = typer.Option(None, "--id", help="Column with row ids (default: 'id' if present)."),
    top: int = typer.Option(0, "--top", help="Print the K lowest-barrier rows in the summary."),
    workers: int = typer.Option(1, "--workers", help="Local worker processes."),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", help="'local' (a loopback Dask cluster) or the "
                                                                        "address of a Dask scheduler."),
    chunk_size: int = typer.Option(20000, "--chunk-size", help="Rows per chunk (a task on the cluster)."),
    cache_dir: Optional[Path] = OPT_CACHE,
    max_atoms: int = OPT_MAX_ATOMS,
    quiet: bool = typer.Option(False, "--quiet", help="No progress bar and no summary."),
):
    """Rank a virtual library: barrier with its 90 % interval, α, rate, half-life, domain flags."""
    from .jobs.executors import make_executor
    from .jobs.screen import ScreenOptions, format_screen_summary, run_screen
    from .units import normalize_unit

    if chunk_size < 1:
        raise ValueError("--chunk-size must be at least 1")
    if temperature <= 0:
        raise ValueError("--temperature must be positive (kelvin)")
    opts = ScreenOptions(temperature=temperature, transmission=transmission, energy_column=energy,
                         energy_units=normalize_unit(energy_units) if energy_units else None, id_column=id_column,
                         cache_dir=str(cache_dir) if cache_dir is not None else "default", max_atoms=max_atoms)
    executor = make_executor(workers=workers, scheduler=scheduler)
    try:
        summary = run_screen(model, library, output, opts, executor=executor, chunk_size=chunk_size, top=top,
                             progress=not quiet)
    finally:
        executor.close()
    if not quiet:
        from .io.modelfile import load_model

        typer.echo(format_screen_summary(summary, load_model(model).units, temperature), err=True)


@app.command()
@guarded
def suggest(
    model: Path = typer.Argument(..., help="Model file written by `barrierscope fit`."),
    candidates: Path = typer.Argument(..., help="Candidate members (same structure columns as the model)."),
    k: int = typer.Option(..., "-k", help="How many members to suggest."),
    goal: str = typer.Option("parameters", "--goal", help="parameters (pin the curve) or predictions "
                                                          "(sharpen the pool's predictions)."),
    energy: Optional[str] = typer.Option(None, "--energy", help="Candidate column of computed reaction energies."),
    energy_units: Optional[str] = typer.Option(None, "--energy-units", help="Unit of --energy (default: the model's)."),
    id_column: Optional[str] = typer.Option(None, "--id", help="Column with candidate ids."),
    cache_dir: Optional[Path] = OPT_CACHE,
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object with the picks."),
):
    """Suggest which candidates to compute next, and why."""
    from .jobs.suggest import format_suggestions, suggest_file
    from .units import normalize_unit

    result = suggest_file(model, candidates, k, goal, energy, normalize_unit(energy_units) if energy_units else None,
                          id_column, str(cache_dir) if cache_dir is not None else "default")
    if as_json:
        print_json(result)
    else:
        typer.echo(format_suggestions(result))


@app.command()
@guarded
def demo(
    out: Path = typer.Option(Path("barrierscope-demo"), "--out", help="Folder for the demo's outputs."),
    cache_dir: Optional[Path] = OPT_CACHE,
):
    """Run the whole job on the bundled demo family (invented data): fit, report, screen, advice."""
    from .jobs.demo import format_demo, run_demo

    result = run_demo(out, str(cache_dir) if cache_dir is not None else "default")
    typer.echo(format_demo(result))


def main() -> None:  # console-script entry point
    app()


if __name__ == "__main__":  # pragma: no cover
    main()
