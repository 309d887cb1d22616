"""One reader for every command: CSV/TSV, SMILES files, SDF and Parquet, whole or in chunks.

Every data row keeps its 1-based position in the file (column :data:`ROW`), so every later
message can name it. Text cells are read as text (no type guessing); numbers are converted
by :func:`parse_numeric`, which says which row holds what instead of producing NaN.
Problems with the file as a whole raise :class:`~barrierscope.errors.InputError` naming the
file and the problem.
"""

from __future__ import annotations

import codecs
import csv
import os
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError

#: 1-based data-row number within the input file.
ROW = "_row"
#: A reader-level problem with a row (e.g. an SDF record that is not a molecule).
READ_ERROR = "_read_error"

FORMATS = ("csv", "tsv", "smi", "sdf", "parquet")
_SUFFIXES = {
    ".csv": "csv", ".tsv": "tsv", ".tab": "tsv", ".txt": "csv",
    ".smi": "smi", ".smiles": "smi", ".ism": "smi",
    ".sdf": "sdf", ".sd": "sdf", ".mol": "sdf",
    ".parquet": "parquet", ".pq": "parquet",
}
_COMPRESSED = (".gz", ".bz2", ".xz", ".zip", ".zst")
_DELIMITERS = (",", "\t", ";", "|")
DEFAULT_CHUNK = 50_000


def detect_format(path: str | os.PathLike) -> str:
    """The format from the file name (``.csv``, ``.tsv``, ``.smi``, ``.sdf``, ``.parquet``…)."""
    p = Path(path)
    suffixes = [s.lower() for s in p.suffixes]
    if suffixes and suffixes[-1] in _COMPRESSED:
        suffixes = suffixes[:-1]
    fmt = _SUFFIXES.get(suffixes[-1] if suffixes else "")
    if fmt is None:
        raise InputError(f"{p}: cannot tell the format from the name; use one of "
                         f"{', '.join(sorted(_SUFFIXES))}")
    return fmt


def _check_file(path: Path) -> bytes:
    """Existence, emptiness and binary-garbage checks; returns the first bytes."""
    if not path.exists():
        raise InputError(f"{path}: no such file")
    if path.is_dir():
        raise InputError(f"{path}: is a folder, not a file")
    if path.stat().st_size == 0:
        raise InputError(f"{path}: the file is empty")
    with open(path, "rb") as fh:
        return fh.read(65536)


def _is_compressed(path: Path) -> bool:
    return path.suffix.lower() in _COMPRESSED


def _decode_head(path: Path, head: bytes) -> str:
    if b"\x00" in head:
        raise InputError(f"{path}: looks like a binary file (it contains NUL bytes), not text")
    dec = codecs.getincrementaldecoder("utf-8-sig")()
    try:
        return dec.decode(head, final=False)
    except UnicodeDecodeError as exc:
        raise InputError(f"{path}: is not UTF-8 text (byte 0x{head[exc.start]:02x} at offset {exc.start}); "
                         f"save it as UTF-8 (spreadsheets: 'CSV UTF-8') and try again") from None


def _sniff_delimiter(lines: list[str], default: str) -> str:
    """The delimiter that splits the header into the most fields, consistently with the next lines."""
    if not lines:
        return default
    best, best_count = default, 0
    for d in _DELIMITERS:
        counts = [len(next(csv.reader([ln], delimiter=d))) for ln in lines[:5] if ln.strip()]
        if not counts:
            continue
        if counts[0] > best_count and all(c == counts[0] for c in counts[1:]):
            best, best_count = d, counts[0]
    if best_count <= 1:
        return default
    return best


def _header_names(path: Path, line: str, delimiter: str) -> list[str]:
    names = next(csv.reader([line], delimiter=delimiter))
    names = [n.strip() for n in names]
    seen: dict[str, int] = {}
    dups = []
    for n in names:
        if n and n in seen:
            dups.append(n)
        seen[n] = seen.get(n, 0) + 1
    if dups:
        raise InputError(f"{path}: duplicate column name(s) {', '.join(repr(d) for d in sorted(set(dups)))}; "
                         f"every column needs its own name")
    return [n if n else f"column_{k + 1}" for k, n in enumerate(names)]


def _csv_chunks(path: Path, fmt: str, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    head = _check_file(path)
    if _is_compressed(path):
        text_head = ""
    else:
        text_head = _decode_head(path, head)
        if not text_head.strip():
            raise InputError(f"{path}: the file holds only white space")
    lines = text_head.splitlines()
    default = "\t" if fmt == "tsv" else ","
    delimiter = _sniff_delimiter(lines, default) if fmt == "csv" and lines else default
    names = _header_names(path, lines[0], delimiter) if lines else None
    try:
        reader = pd.read_csv(path, sep=delimiter, dtype=str, keep_default_na=False, na_filter=False,
                             encoding="utf-8-sig", chunksize=chunk_size or DEFAULT_CHUNK, engine="c",
                             header=0, names=names, skip_blank_lines=True)
        start = 1
        any_rows = False
        for chunk in reader:
            chunk = chunk.reset_index(drop=True)
            chunk.insert(0, ROW, np.arange(start, start + len(chunk), dtype=np.int64))
            start += len(chunk)
            any_rows = any_rows or len(chunk) > 0
            if len(chunk):
                yield chunk
        if not any_rows:
            raise InputError(f"{path}: has a header but no data rows")
    except pd.errors.EmptyDataError:
        raise InputError(f"{path}: has no header or data") from None
    except pd.errors.ParserError as exc:
        raise InputError(f"{path}: rows do not line up with the header ({_parser_message(exc)}); "
                         f"check for stray delimiters or unbalanced quotes") from None
    except UnicodeDecodeError as exc:
        raise InputError(f"{path}: is not UTF-8 text (a byte 0x{exc.object[exc.start]:02x} further into "
                         f"the file); save it as UTF-8 and try again") from None


def _parser_message(exc: Exception) -> str:
    text = str(exc).strip().splitlines()[-1] if str(exc).strip() else type(exc).__name__
    return text.replace("Error tokenizing data. C error: ", "")


def _smi_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    head = _check_file(path)
    _decode_head(path, head)
    size = chunk_size or DEFAULT_CHUNK
    columns = ["smiles", "id"]
    rows: list[list[str]] = []
    row_numbers: list[int] = []
    number = 0
    first = True
    any_rows = False
    try:
        with open(path, encoding="utf-8-sig") as fh:
            for line in fh:
                text = line.strip()
                if not text or text.startswith("#"):
                    continue
                parts = text.split(None, 1)
                if first:
                    first = False
                    if parts[0].lower() in ("smiles", "smi", "structure"):
                        columns = [parts[0]] + ([parts[1].split()[0]] if len(parts) > 1 else ["id"])
                        continue
                number += 1
                rows.append([parts[0], parts[1].strip() if len(parts) > 1 else ""])
                row_numbers.append(number)
                if len(rows) >= size:
                    any_rows = True
                    yield _frame(columns, rows, row_numbers)
                    rows, row_numbers = [], []
    except UnicodeDecodeError as exc:
        raise InputError(f"{path}: is not UTF-8 text (byte 0x{exc.object[exc.start]:02x} further into the file)") from None
    if rows:
        any_rows = True
        yield _frame(columns, rows, row_numbers)
    if not any_rows:
        raise InputError(f"{path}: holds no SMILES lines")


def _frame(columns, rows, row_numbers) -> pd.DataFrame:
    df = pd.DataFrame(rows, columns=columns, dtype=str)
    df.insert(0, ROW, np.asarray(row_numbers, dtype=np.int64))
    return df


def _sdf_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    from rdkit import Chem, RDLogger

    head = _check_file(path)
    _decode_head(path, head)
    size = chunk_size or DEFAULT_CHUNK
    records: list[dict] = []
    number = 0
    any_rows = False
    RDLogger.DisableLog("rdApp.*")
    try:
        with open(path, "rb") as fh:
            supplier = Chem.ForwardSDMolSupplier(fh, sanitize=True, removeHs=True)
            while True:
                try:
                    mol = next(supplier)
                except StopIteration:
                    break
                except Exception as exc:  # RDKit raises on some malformed blocks
                    mol, err = None, str(exc)
                else:
                    err = ""
                number += 1
                rec: dict = {ROW: number}
                if mol is None:
                    rec.update({"smiles": "", "id": "", READ_ERROR: err or "SDF record is not a valid molecule"})
                else:
                    rec["smiles"] = Chem.MolToSmiles(mol)
                    rec["id"] = mol.GetProp("_Name") if mol.HasProp("_Name") else ""
                    for key in mol.GetPropNames():
                        rec[key] = mol.GetProp(key)
                    rec[READ_ERROR] = ""
                records.append(rec)
                if len(records) >= size:
                    any_rows = True
                    yield _records_frame(records)
                    records = []
    finally:
        RDLogger.EnableLog("rdApp.*")
    if records:
        any_rows = True
        yield _records_frame(records)
    if not any_rows:
        raise InputError(f"{path}: holds no SDF records")


def _records_frame(records: list[dict]) -> pd.DataFrame:
    df = pd.DataFrame.from_records(records)
    cols = [ROW] + [c for c in df.columns if c != ROW]
    df = df[cols]
    for c in cols[1:]:
        df[c] = df[c].fillna("").astype(str)
    return df


def _parquet_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    head = _check_file(path)
    if not head.startswith(b"PAR1"):
        raise InputError(f"{path}: is not a Parquet file (no PAR1 signature)")
    try:
        import pyarrow.parquet as pq
    except ImportError:  # pragma: no cover - depends on the install
        raise InputError("reading Parquet needs pyarrow (pip install pyarrow)") from None
    try:
        pf = pq.ParquetFile(path)
    except Exception as exc:
        raise InputError(f"{path}: cannot be read as Parquet ({exc})") from None
    names = pf.schema_arrow.names
    dups = sorted({n for n in names if names.count(n) > 1})
    if dups:
        raise InputError(f"{path}: duplicate column name(s) {', '.join(map(repr, dups))}")
    start = 1
    any_rows = False
    for batch in pf.iter_batches(batch_size=chunk_size or DEFAULT_CHUNK):
        df = batch.to_pandas()
        df.insert(0, ROW, np.arange(start, start + len(df), dtype=np.int64))
        start += len(df)
        if len(df):
            any_rows = True
            yield df
    if not any_rows:
        raise InputError(f"{path}: has columns but no data rows")


def iter_table(path: str | os.PathLike, chunk_size: int | None = None, fmt: str | None = None) -> Iterator[pd.DataFrame]:
    """Chunks of the file as DataFrames of text cells, each with the :data:`ROW` column."""
    p = Path(path)
    fmt = fmt or detect_format(p)
    if fmt in ("csv", "tsv"):
        return _csv_chunks(p, fmt, chunk_size)
    if fmt == "smi":
        return _smi_chunks(p, chunk_size)
    if fmt == "sdf":
        return _sdf_chunks(p, chunk_size)
    if fmt == "parquet":
        return _parquet_chunks(p, chunk_size)
    raise InputError(f"{p}: unknown format {fmt!r}; valid choices: {', '.join(FORMATS)}")


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
        raise InputError(f"{source}: missing column(s) {', '.join(map(repr, missing))}; "
                         f"the file has {', '.join(map(repr, have)) or 'no columns'}{hint}")


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
        else:
            msg = f"{cell!r} in column {column!r} is not a number"
        problems.append((int(pos), msg))
    return out, problems


def row_ids(df: pd.DataFrame, id_column: str | None, source: str | os.PathLike) -> pd.Series:
    """Identifiers per row: the named column, else an ``id`` column, else the row number."""
    if id_column:
        require_columns(df, [id_column], source)
        ids = df[id_column].astype(str)
    elif "id" in df.columns:
        ids = df["id"].astype(str)
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
                raise InputError("writing Parquet needs pyarrow (pip install pyarrow)") from None
        elif fmt in ("csv", "tsv"):
            df.to_csv(tmp, index=False, sep="\t" if fmt == "tsv" else ",")
        else:
            raise InputError(f"{p}: results can be written as .csv, .tsv or .parquet")

