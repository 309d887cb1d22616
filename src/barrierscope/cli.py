"""The ``barrierscope`` command line: a thin layer over the library.

Every command turns bad input into a one-paragraph message on stderr and a non-zero exit
(2 for input the run cannot use); ``BARRIERSCOPE_DEBUG=1`` shows tracebacks.
"""

from __future__ import annotations

import functools
import json
import os
import sys
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
    typer.echo(json.dumps(obj, indent=2, allow_nan=False, default=_json_default))


def _json_default(o):
    import numpy as np

    if isinstance(o, (np.floating,)):
        return float(o)
    if isinstance(o, (np.integer,)):
        return int(o)
    if isinstance(o, np.ndarray):
        return o.tolist()
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")


def json_safe(obj):
    """Replace non-finite floats by None so the JSON stays standard."""
    import math

    if isinstance(obj, dict):
        return {k: json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_safe(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


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
    from .curve_summary import format_curve_summary, summarize_curves
    from .io.tables import read_table
    from .training_data import load_pairs, require_members
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
        print_json(json_safe(summary))
    else:
        echo_warnings(pairs.warnings)
        typer.echo(format_curve_summary(summary))


def main() -> None:  # console-script entry point
    app()


if __name__ == "__main__":  # pragma: no cover
    main()
