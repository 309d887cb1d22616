"""Errors that carry a message meant for the chemist, not a traceback.

Who raises what:

- the science (relations, curves, estimators, validation, structures, descriptors) raises
  ``ValueError`` and its own errors in the terms of its parameters, never naming a
  command-line flag;
- ``io`` raises :class:`DataError` for a file or row the run cannot use, naming the file
  and the row;
- ``jobs`` and ``cli.py`` raise :class:`InputError` for an option that cannot be used (naming
  the flag) and :class:`FitRefused` when the data cannot support the fit asked for.

The command line turns these (every :class:`BarrierscopeError`) into a message and exit
code 2. Anything else is a fault in barrierscope: exit 3, "internal error — please report",
and the traceback written to a file the message names.
"""

from __future__ import annotations


class BarrierscopeError(Exception):
    """Base class: the command line prints the message and exits non-zero."""

    exit_code = 2


class InputError(BarrierscopeError):
    """An option that cannot be used as given (names the flag and the problem); jobs and CLI only."""


class DataError(BarrierscopeError):
    """A file or a row that cannot be used as given (names the file, the row and the problem)."""


class ModelFileError(BarrierscopeError):
    """A model file that is corrupt, edited, truncated or from an unknown schema version."""


class FitRefused(BarrierscopeError):
    """The data cannot support the requested fit; the message says why and what would."""


def describe_row(row: int, ident: str | None = None) -> str:
    """'row 12' or "row 12 (id 'X-7')" — how every per-row message names its row."""
    if ident is None or ident == "" or ident == str(row):
        return f"row {row}"
    return f"row {row} (id {ident!r})"
