"""Errors that carry a message meant for the chemist, not a traceback."""

from __future__ import annotations


class BarrierscopeError(Exception):
    """Base class: the command line prints the message and exits non-zero."""

    exit_code = 2


class InputError(BarrierscopeError):
    """A file or an option that cannot be used as given (names the file and the problem)."""


class ModelFileError(BarrierscopeError):
    """A model file that is corrupt, edited, truncated or from an unknown schema version."""


class FitRefused(BarrierscopeError):
    """The data cannot support the requested fit; the message says why and what would."""


def describe_row(row: int, ident: str | None = None) -> str:
    """'row 12' or "row 12 (id 'X-7')" — how every per-row message names its row."""
    if ident is None or ident == "" or ident == str(row):
        return f"row {row}"
    return f"row {row} (id {ident!r})"
