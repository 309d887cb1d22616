"""Screen results on disk: part files as chunks arrive, then one output written atomically.

Chunks are written to a private folder beside the output as they are predicted, so memory
stays flat however long the library is. When every chunk is in, the ranks (known only at
the end) are prepended while the parts are copied into a temporary file, which is renamed
over the output. A run killed at any moment leaves no file under the final name; the part
folders of killed runs are removed by the next run.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import DataError
from .atomic import atomic_path


def count_rows(path: Path, fmt: str) -> int | None:
    try:
        if fmt == "parquet":
            import pyarrow.parquet as pq

            return pq.ParquetFile(path).metadata.num_rows
        if path.stat().st_size > 2 * 1024 ** 3:
            return None
        marker = b"$$$$" if fmt == "sdf" else b"\n"
        count = 0
        with open(path, "rb") as fh:
            for block in iter(lambda: fh.read(1 << 22), b""):
                count += block.count(marker)
        return count - (1 if fmt in ("csv", "tsv") else 0)
    except Exception:
        return None


def write_part(df: pd.DataFrame, path: Path, fmt: str) -> None:
    try:
        import pyarrow as pa
    except ImportError:  # pragma: no cover - pyarrow is a dependency
        pa = None
    if fmt == "parquet":
        df.to_parquet(path, index=False)
    elif pa is not None:
        import pyarrow.csv as pacsv

        pacsv.write_csv(pa.Table.from_pandas(df, preserve_index=False), path,
                        pacsv.WriteOptions(include_header=False, delimiter="\t" if fmt == "tsv" else ","))
    else:  # pragma: no cover
        df.to_csv(path, index=False, header=False, sep="\t" if fmt == "tsv" else ",")


def header_line(df: pd.DataFrame, fmt: str) -> str:
    import csv
    import io

    buf = io.StringIO()
    csv.writer(buf, delimiter="\t" if fmt == "tsv" else ",", lineterminator="\n").writerow(["rank", *df.columns])
    return buf.getvalue()


def remove_stale_parts(output: Path) -> None:
    """Part folders left by a run that was killed (its process is gone) are removed."""
    for folder in output.parent.glob(f".{output.name}.parts.*"):
        try:
            pid = int(folder.name.split(".parts.", 1)[1].split(".", 1)[0])
        except (IndexError, ValueError):
            continue
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            shutil.rmtree(folder, ignore_errors=True)
        except PermissionError:  # someone else's live process
            pass


def assemble(parts: list[Path], rank: np.ndarray, output: Path, fmt: str, *, header_frame,
             metadata: dict | None = None) -> None:
    """The parts, ranked, into ``output`` (atomically); ``metadata`` (Parquet only) goes into the
    file's key-value metadata under ``barrierscope`` as JSON."""
    with atomic_path(output) as tmp:
        if fmt == "parquet":
            import pyarrow as pa
            import pyarrow.parquet as pq

            writer = None
            start = 0
            for part in parts:
                table = pq.read_table(part)
                r = rank[start:start + table.num_rows]
                start += table.num_rows
                table = table.add_column(0, "rank", pa.array(np.where(r > 0, r, None), type=pa.int64()))
                if metadata is not None:
                    import json

                    table = table.replace_schema_metadata({**(table.schema.metadata or {}),
                                                           b"barrierscope": json.dumps(metadata).encode("utf-8")})
                if writer is None:
                    writer = pq.ParquetWriter(tmp, table.schema)
                writer.write_table(table)
            if writer is None:
                raise DataError("the library has no rows")
            writer.close()
            return
        with open(tmp, "w", encoding="utf-8", newline="") as out:
            out.write(header_line(header_frame, fmt))
            sep = "\t" if fmt == "tsv" else ","
            start = 0
            for part in parts:
                with open(part, encoding="utf-8") as fh:
                    for line in fh:
                        r = rank[start]
                        start += 1
                        out.write(f"{r if r > 0 else ''}{sep}{line}")
            out.flush()
            os.fsync(out.fileno())




def parts_folder(output: Path) -> Path:
    """A fresh private folder for the part files of a run writing ``output``."""
    remove_stale_parts(output)
    return Path(tempfile.mkdtemp(prefix=f".{output.name}.parts.{os.getpid()}.", dir=output.parent))


def discard(folder: Path) -> None:
    shutil.rmtree(folder, ignore_errors=True)
