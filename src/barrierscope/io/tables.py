"""One reader for every command: CSV/TSV, Excel, SMILES files, SDF and Parquet, whole or in chunks.

Every data row keeps its 1-based position in the file (column :data:`ROW`), so every later
message can name it. Text cells are read as text (no type guessing); numbers are converted
by :func:`parse_numeric`, which says which row holds what instead of producing NaN.
Problems with the file as a whole raise :class:`~barrierscope.errors.DataError` naming the
file and the problem.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import DataError
from . import readers
from .readers import DEFAULT_CHUNK, READ_ERROR, ROW  # noqa: F401  (ROW: 1-based row; READ_ERROR: reader's problem)

FORMATS = ("csv", "tsv", "xlsx", "smi", "sdf", "parquet")
_SUFFIXES = {
    ".csv": "csv", ".tsv": "tsv", ".tab": "tsv", ".txt": "csv", ".xlsx": "xlsx",
    ".smi": "smi", ".smiles": "smi",
    ".sdf": "sdf", ".sd": "sdf", ".mol": "sdf",
    ".parquet": "parquet", ".pq": "parquet",
}


def detect_format(path: str | os.PathLike) -> str:
    """The format from the file name (``.csv``, ``.tsv``, ``.smi``, ``.sdf``, ``.parquet``…)."""
    p = Path(path)
    suffixes = [s.lower() for s in p.suffixes]
    if suffixes and suffixes[-1] in readers.COMPRESSED:
        suffixes = suffixes[:-1]
    fmt = _SUFFIXES.get(suffixes[-1] if suffixes else "")
    if fmt is None:
        raise DataError(f"{p}: cannot tell the format from the name; use one of "
                         f"{', '.join(sorted(_SUFFIXES))}")
    return fmt


def iter_table(path: str | os.PathLike, chunk_size: int | None = None, fmt: str | None = None) -> Iterator[pd.DataFrame]:
    """Chunks of the file as DataFrames of text cells, each with the :data:`ROW` column."""
    p = Path(path)
    fmt = fmt or detect_format(p)
    if fmt in ("csv", "tsv"):
        return readers.csv_chunks(p, fmt, chunk_size)
    if fmt == "xlsx":
        return readers.xlsx_chunks(p, chunk_size)
    if fmt == "smi":
        return readers.smi_chunks(p, chunk_size)
    if fmt == "sdf":
        return readers.sdf_chunks(p, chunk_size)
    if fmt == "parquet":
        return readers.parquet_chunks(p, chunk_size)
    raise DataError(f"{p}: unknown format {fmt!r}; valid choices: {', '.join(FORMATS)}")


def read_table(path: str | os.PathLike, fmt: str | None = None) -> pd.DataFrame:
    """The whole file as one DataFrame (see :func:`iter_table`)."""
    chunks = list(iter_table(path, chunk_size=DEFAULT_CHUNK, fmt=fmt))
    return chunks[0] if len(chunks) == 1 else pd.concat(chunks, ignore_index=True)


def require_columns(df: pd.DataFrame, columns, source: str | os.PathLike) -> None:
    """Raise naming the missing columns and the available ones."""
    missing = [c for c in columns if c not in df.columns]
    if missing:
        have = [c for c in df.columns if not str(c).startswith("_")]
        hint = ""
        if len(have) == 1 and any(d in str(have[0]) for d in (" ", ";", "|", "\t", ",")):
            hint = (" — the whole header reads as one column, so the file is probably delimited by "
                    "something this reader did not recognise (use commas, tabs, semicolons or '|')")
        guesses = [f"{m!r} → did you mean {g!r}?" for m in missing if (g := closest_column(m, have))]
        if guesses:
            hint += " (" + "; ".join(guesses) + ")"
        raise DataError(f"{source}: missing column(s) {', '.join(map(repr, missing))}; "
                         f"the file has {', '.join(map(repr, have)) or 'no columns'}{hint}")


def _squash(name) -> str:
    return "".join(ch for ch in str(name).lower() if ch.isalnum())


def closest_column(name: str, columns) -> str | None:
    """The column ``name`` was probably meant to be: the same but for case, spaces, underscores
    or hyphens, else the closest spelling (difflib ratio ≥ 0.8), else None."""
    import difflib

    columns = [str(c) for c in columns]
    same = [c for c in columns if _squash(c) == _squash(name)]
    if same:
        return same[0]
    close = difflib.get_close_matches(str(name).lower(), [c.lower() for c in columns], n=1, cutoff=0.8)
    if close:
        return next(c for c in columns if c.lower() == close[0])
    return None


def parse_numeric(values: pd.Series, column: str) -> tuple[np.ndarray, list[tuple[int, str]]]:
    """Numbers from a column of text (or numbers), with one message per bad cell.

    Returns the float values (NaN where bad) and a list of (position, message) for cells
    that are empty, not numbers, NaN or infinite.
    """
    if pd.api.types.is_numeric_dtype(values.dtype):
        out = values.to_numpy(dtype=float, na_value=np.nan)
        text = None
    else:
        text = values.astype(str).str.strip()
        out = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float)
    problems: list[tuple[int, str]] = []
    bad = np.flatnonzero(~np.isfinite(out))
    for pos in bad:
        cell = "" if text is None else text.iloc[pos]
        if text is not None and cell == "":
            msg = f"empty cell in column {column!r}"
        elif np.isnan(out[pos]) and (text is None or cell.lower() in ("nan", "na", "n/a", "null", "none", "-nan")):
            msg = f"column {column!r} holds NaN (a missing value)"
        elif np.isinf(out[pos]):
            msg = f"column {column!r} holds an infinite value"
        elif _DECIMAL_COMMA.match(cell):
            msg = (f"{cell!r} in column {column!r} is not a number: it has a decimal comma (write "
                   f"{cell.replace(',', '.')!r}; a spreadsheet saved with a decimal comma can be saved again with a "
                   f"decimal point, or as .xlsx, which keeps numbers as numbers)")
        else:
            msg = f"{cell!r} in column {column!r} is not a number"
        problems.append((int(pos), msg))
    return out, problems


def is_missing_cell(message: str) -> bool:
    """Is a :func:`parse_numeric` problem a missing value (empty cell or NaN) rather than text
    that is not a number?"""
    return "empty cell" in message or "NaN" in message


#: A number written with a decimal comma ("-12,5", "3,14e2").
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+([eE][+-]?\d+)?$")


def decimal_comma_summary(problems) -> str | None:
    """One line when most bad cells are decimal-comma numbers: the file's convention, not its rows."""
    commas = sum("decimal comma" in str(getattr(p, "message", p)) for p in problems)
    if commas >= 3 and commas >= 0.5 * len(problems):
        return (f"{commas} cells hold numbers with a decimal comma: the file uses a comma as the decimal separator. "
                f"Save it with a decimal point (or as .xlsx) and run again; --skip-bad-rows would leave those rows out")
    return None


#: Columns taken as ids without --id, first found (any case): what chemists' tables call them.
ID_COLUMNS = ("id", "name", "_name", "compound", "compound_id", "mol_id")


def id_column_of(columns) -> str | None:
    """The column :func:`row_ids` uses without --id, or None (then ids are row numbers)."""
    lower = {str(c).lower(): c for c in columns}
    return next((lower[k] for k in ID_COLUMNS if k in lower), None)


def row_ids(df: pd.DataFrame, id_column: str | None, source: str | os.PathLike) -> pd.Series:
    """Identifiers per row: the named column, else the first of :data:`ID_COLUMNS` present
    (``id``, ``name``, ... in any case), else the row number."""
    if id_column:
        require_columns(df, [id_column], source)
        ids = df[id_column].astype(str)
    elif (found := id_column_of(df.columns)) is not None:
        ids = df[found].astype(str)
    else:
        ids = df[ROW].astype(str)
    ids = ids.where(ids.str.strip() != "", df[ROW].astype(str))
    return ids.reset_index(drop=True)


def write_table(df: pd.DataFrame, path: str | os.PathLike) -> None:
    """Write CSV/TSV or Parquet atomically (format from the suffix)."""
    from .atomic import atomic_path

    p = Path(path)
    fmt = detect_format(p)
    with atomic_path(p) as tmp:
        if fmt == "parquet":
            try:
                df.to_parquet(tmp, index=False)
            except ImportError:  # pragma: no cover
                raise DataError("writing Parquet needs pyarrow (pip install pyarrow)") from None
        elif fmt in ("csv", "tsv"):
            df.to_csv(tmp, index=False, sep="\t" if fmt == "tsv" else ",")
        else:
            raise DataError(f"{p}: results can be written as .csv, .tsv or .parquet")

