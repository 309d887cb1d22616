"""The file formats, one reader each: CSV/TSV (delimiter sniffed), SMILES files, SDF,
Parquet and Excel workbooks. Every reader yields DataFrames of text cells with the 1-based row
number in :data:`.tables.ROW` and raises :class:`~barrierscope.errors.DataError` naming the
file and the problem (empty, binary, not UTF-8, ragged, duplicate columns...).
"""

from __future__ import annotations

import codecs
import csv
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import DataError

ROW = "_row"
READ_ERROR = "_read_error"
COMPRESSED = (".gz", ".bz2", ".xz", ".zip", ".zst")
DELIMITERS = (",", "\t", ";", "|")
DEFAULT_CHUNK = 50_000


def _check_file(path: Path) -> bytes:
    """Existence, emptiness and binary-garbage checks; returns the first bytes."""
    if not path.exists():
        raise DataError(f"{path}: no such file")
    if path.is_dir():
        raise DataError(f"{path}: is a folder, not a file")
    if path.stat().st_size == 0:
        raise DataError(f"{path}: the file is empty")
    with open(path, "rb") as fh:
        return fh.read(65536)


def _is_compressed(path: Path) -> bool:
    return path.suffix.lower() in COMPRESSED


def _decode_head(path: Path, head: bytes) -> str:
    if b"\x00" in head:
        raise DataError(f"{path}: looks like a binary file (it contains NUL bytes), not text")
    dec = codecs.getincrementaldecoder("utf-8-sig")()
    try:
        return dec.decode(head, final=False)
    except UnicodeDecodeError as exc:
        raise DataError(f"{path}: is not UTF-8 text (byte 0x{head[exc.start]:02x} at offset {exc.start}); "
                         f"save it as UTF-8 (spreadsheets: 'CSV UTF-8') and try again") from None


def _sniff_delimiter(lines: list[str], default: str) -> str:
    """The delimiter that splits the header into the most fields, consistently with the next lines."""
    if not lines:
        return default
    best, best_count = default, 0
    for d in DELIMITERS:
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
        raise DataError(f"{path}: duplicate column name(s) {', '.join(repr(d) for d in sorted(set(dups)))}; "
                         f"every column needs its own name")
    return [n if n else f"column_{k + 1}" for k, n in enumerate(names)]


def csv_chunks(path: Path, fmt: str, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    head = _check_file(path)
    if _is_compressed(path):
        text_head = ""
    else:
        text_head = _decode_head(path, head)
        if not text_head.strip():
            raise DataError(f"{path}: the file holds only white space")
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
            raise DataError(f"{path}: has a header but no data rows")
    except pd.errors.EmptyDataError:
        raise DataError(f"{path}: has no header or data") from None
    except pd.errors.ParserError as exc:
        raise DataError(f"{path}: rows do not line up with the header ({_parser_message(exc)}); "
                         f"check for stray delimiters or unbalanced quotes") from None
    except UnicodeDecodeError as exc:
        raise DataError(f"{path}: is not UTF-8 text (a byte 0x{exc.object[exc.start]:02x} further into "
                         f"the file); save it as UTF-8 and try again") from None


def _parser_message(exc: Exception) -> str:
    text = str(exc).strip().splitlines()[-1] if str(exc).strip() else type(exc).__name__
    return text.replace("Error tokenizing data. C error: ", "")


def smi_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
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
        raise DataError(f"{path}: is not UTF-8 text (byte 0x{exc.object[exc.start]:02x} further into the file)") from None
    if rows:
        any_rows = True
        yield _frame(columns, rows, row_numbers)
    if not any_rows:
        raise DataError(f"{path}: holds no SMILES lines")


def _frame(columns, rows, row_numbers) -> pd.DataFrame:
    df = pd.DataFrame(rows, columns=columns, dtype=str)
    df.insert(0, ROW, np.asarray(row_numbers, dtype=np.int64))
    return df


def sdf_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    from rdkit import Chem

    from ..structures.checks import quiet_rdkit

    head = _check_file(path)
    _decode_head(path, head)
    size = chunk_size or DEFAULT_CHUNK
    records: list[dict] = []
    number = 0
    any_rows = False
    # RDKit's chatter is blocked record by record: this generator pauses between chunks.
    with open(path, "rb") as fh:
        supplier = Chem.ForwardSDMolSupplier(fh, sanitize=True, removeHs=True)
        while True:
            try:
                with quiet_rdkit():
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
    if records:
        any_rows = True
        yield _records_frame(records)
    if not any_rows:
        raise DataError(f"{path}: holds no SDF records")


def _records_frame(records: list[dict]) -> pd.DataFrame:
    df = pd.DataFrame.from_records(records)
    cols = [ROW] + [c for c in df.columns if c != ROW]
    df = df[cols]
    for c in cols[1:]:
        df[c] = df[c].fillna("").astype(str)
    return df


def parquet_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    head = _check_file(path)
    if not head.startswith(b"PAR1"):
        raise DataError(f"{path}: is not a Parquet file (no PAR1 signature)")
    try:
        import pyarrow.parquet as pq
    except ImportError:  # pragma: no cover - depends on the install
        raise DataError("reading Parquet needs pyarrow (pip install pyarrow)") from None
    try:
        pf = pq.ParquetFile(path)
    except Exception as exc:
        raise DataError(f"{path}: cannot be read as Parquet ({exc})") from None
    names = pf.schema_arrow.names
    dups = sorted({n for n in names if names.count(n) > 1})
    if dups:
        raise DataError(f"{path}: duplicate column name(s) {', '.join(map(repr, dups))}")
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
        raise DataError(f"{path}: has columns but no data rows")



def xlsx_chunks(path: Path, chunk_size: int | None) -> Iterator[pd.DataFrame]:
    """The first worksheet of an Excel workbook, read like a CSV file (text cells; openpyxl)."""
    head = _check_file(path)
    if not head.startswith(b"PK"):
        raise DataError(f"{path}: is not an Excel workbook (.xlsx is a zip archive)")
    try:
        df = pd.read_excel(path, sheet_name=0, dtype=str, engine="openpyxl", keep_default_na=False)
    except ImportError:  # pragma: no cover - openpyxl is a dependency
        raise DataError("reading .xlsx needs openpyxl (pip install openpyxl)") from None
    except Exception as exc:
        raise DataError(f"{path}: cannot be read as an Excel workbook ({exc})") from None
    names = [str(c).strip() for c in df.columns]
    dups = sorted({n for n in names if names.count(n) > 1})
    if dups:
        raise DataError(f"{path}: duplicate column name(s) {', '.join(map(repr, dups))}")
    df.columns = [n if n and not n.startswith("Unnamed:") else f"column_{k + 1}" for k, n in enumerate(names)]
    df = df.fillna("").astype(str)
    df = df[(df != "").any(axis=1)].reset_index(drop=True)
    if df.empty:
        raise DataError(f"{path}: the first worksheet has a header but no data rows")
    df.insert(0, ROW, np.arange(1, len(df) + 1, dtype=np.int64))
    size = chunk_size or DEFAULT_CHUNK
    for start in range(0, len(df), size):
        yield df.iloc[start:start + size].reset_index(drop=True)
