"""The `screen` job: rank a virtual library with a fitted model, every row accounted for.

The library is read in chunks; each chunk is described and predicted (in this process, in
local worker processes, or as Dask tasks — the same function everywhere, so the output
does not depend on where it ran); results are written to part files beside the output as
they arrive, a bounded number of chunks in flight. When every chunk is in, rows are ranked
by barrier among the rows that succeeded, and the output is assembled under a temporary
name and renamed over the final one. A run killed at any moment leaves no file under the
final name.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
import time
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from ..io.tables import (
    ROW,
    detect_format,
    iter_table,
    parse_numeric,
    require_columns,
    row_ids,
)
from ..kinetics import eyring_rate, format_duration, half_life
from ..units import factor_to_kcal, normalize_unit
from ..views.cautions import CAUTION, RATE_NEEDS_FREE_ENERGY

OK = "ok"


def unit_slug(unit: str) -> str:
    return {"kcal/mol": "kcal_mol", "kJ/mol": "kJ_mol", "eV": "eV", "hartree": "hartree"}[normalize_unit(unit)]


@dataclass(frozen=True)
class ScreenOptions:
    temperature: float = 298.15
    transmission: float = 1.0
    energy_column: str | None = None     # library column with computed reaction energies
    energy_units: str | None = None      # unit of that column (default: the model's)
    id_column: str | None = None
    cache_dir: str | None = "default"
    max_atoms: int = 200


# -- per chunk (runs wherever the executor puts it) ------------------------------------------
_MODELS: dict[str, object] = {}
_ENGINES: dict[tuple, object] = {}


def _model(content: dict, key: str):
    model = _MODELS.get(key)
    if model is None:
        from .model import FamilyModel

        model = FamilyModel.from_dict(content)
        _MODELS.clear()  # one model per worker at a time
        _MODELS[key] = model
    return model


def _engine(model, cache_dir):
    from ..descriptors.cache import DescriptorCache
    from ..descriptors.tiers import DescriptorEngine
    from ..semiempirical.species import XtbSettings

    xtb = model.xtb or {}
    key = (model.tiers, str(cache_dir), xtb.get("level"), xtb.get("solvent"))
    engine = _ENGINES.get(key)
    if engine is None:
        settings = XtbSettings(level=xtb.get("level", "sp"), solvent=xtb.get("solvent"))
        engine = DescriptorEngine(model.tiers, DescriptorCache(cache_dir), xtb_settings=settings)
        _ENGINES.clear()
        _ENGINES[key] = engine
    return engine


def screen_chunk(args) -> pd.DataFrame:
    """Predictions for one chunk: (model content, model key, chunk, source, options)."""
    content, key, chunk, source, opts = args
    model = _model(content, key)
    return predict_chunk(model, chunk, source, opts, _engine(model, opts.cache_dir) if model.has_structures else None)


def predict_chunk(model, chunk: pd.DataFrame, source: str, opts: ScreenOptions, engine,
                  return_features: bool = False):
    """One output row per input row of ``chunk`` (see the module docstring for the columns);
    with ``return_features`` also the model's descriptor matrix of the chunk (None for a
    curve-only model)."""
    chunk = chunk.reset_index(drop=True)
    n = len(chunk)
    unit = model.units
    f = factor_to_kcal(unit)
    slug = unit_slug(unit)
    status = np.full(n, OK, dtype=object)
    kind = np.full(n, "", dtype=object)
    notes = np.full(n, "", dtype=object)
    from ..io.tables import READ_ERROR

    if READ_ERROR in chunk.columns:
        bad = chunk[READ_ERROR].astype(str) != ""
        status[bad.to_numpy()] = chunk.loc[bad, READ_ERROR].to_numpy()
        kind[bad.to_numpy()] = "unreadable"

    given = np.full(n, np.nan)
    if opts.energy_column is not None:
        values, problems = parse_numeric(chunk[opts.energy_column], opts.energy_column)
        given = values * factor_to_kcal(opts.energy_units or unit)
        if model.has_structures:
            # Missing energies are predicted from structure; text that is not a number is an error.
            for pos, msg in problems:
                if "empty cell" not in msg and "NaN" not in msg and status[pos] == OK:
                    status[pos], kind[pos] = msg, "energy"
        else:
            for pos, msg in problems:
                if status[pos] == OK:
                    status[pos], kind[pos] = msg, "energy"

    X = None
    if model.has_structures:
        from ..descriptors.featurize import featurize

        block = featurize(chunk, model.spec, engine, max_atoms=opts.max_atoms)
        for i in np.flatnonzero(~block.ok):
            if status[i] == OK:
                status[i], kind[i] = block.status[i], block.error_kind[i] or "structure"
        notes = block.notes.copy()
        X = _model_features(block.X, model)
    good = status == OK
    out = {
        "row": chunk[ROW].to_numpy(),
        "id": row_ids(chunk, opts.id_column, source).to_numpy(),
    }
    for c in model.spec.columns:
        if c in chunk.columns:
            out[c] = chunk[c].astype(str).str.replace("\n", " ", regex=False).to_numpy()
    if opts.energy_column and opts.energy_column not in out:
        out[opts.energy_column] = chunk[opts.energy_column].astype(str).to_numpy()
    cols = {name: np.full(n, np.nan) for name in (
        f"reaction_energy_{slug}", f"reaction_energy_sd_{slug}", f"barrier_{slug}", f"barrier_low90_{slug}",
        f"barrier_high90_{slug}", f"barrier_sd_{slug}", "leffler_alpha", "rate_constant_per_s", "half_life_s",
        "ad_distance")}
    source_col = np.full(n, "", dtype=object)
    route = np.full(n, "", dtype=object)
    half_text = np.full(n, "", dtype=object)
    out_desc = np.zeros(n, dtype=bool)
    out_energy = np.zeros(n, dtype=bool)
    if good.any():
        idx = np.flatnonzero(good)
        Xg = None if X is None else X.iloc[idx].reset_index(drop=True)
        p = model.predict(Xg, given[idx])
        cols[f"reaction_energy_{slug}"][idx] = p["energy"] / f
        cols[f"reaction_energy_sd_{slug}"][idx] = p["energy_std"] / f
        cols[f"barrier_{slug}"][idx] = p["barrier"] / f
        cols[f"barrier_low90_{slug}"][idx] = p["low"] / f
        cols[f"barrier_high90_{slug}"][idx] = p["high"] / f
        cols[f"barrier_sd_{slug}"][idx] = p["barrier_std"] / f
        cols["leffler_alpha"][idx] = p["alpha"]
        cols["ad_distance"][idx] = p["ad_distance"]
        source_col[idx] = np.where(p["energy_given"], "given", "predicted")
        route[idx] = p["route"]
        out_desc[idx] = p["ad_descriptor_out"]
        out_energy[idx] = p["ad_energy_out"]
        if model.energy_kind == "free-energy":
            cols["rate_constant_per_s"][idx] = eyring_rate(p["barrier"], opts.temperature, opts.transmission)
            t_half = half_life(p["barrier"], opts.temperature, opts.transmission)
            cols["half_life_s"][idx] = t_half
            half_text[idx] = [format_duration(float(t)) for t in t_half]
        marcus = p.get("marcus_outside")
        if marcus is not None and model.curve.relation_.name in ("marcus", "marcus_nowork"):
            for j, flag in zip(idx, marcus):
                if flag:
                    notes[j] = "; ".join(x for x in (notes[j], "outside |dE| < λ of the Marcus relation") if x)
    out.update({"status": status, "error_kind": kind})
    out.update({k: cols[k] for k in (f"reaction_energy_{slug}", f"reaction_energy_sd_{slug}")})
    out["reaction_energy_source"] = source_col
    for k in (f"barrier_{slug}", f"barrier_low90_{slug}", f"barrier_high90_{slug}", f"barrier_sd_{slug}",
              "leffler_alpha", "rate_constant_per_s", "half_life_s"):
        out[k] = cols[k]
    out["half_life"] = half_text
    out["ad_distance"] = cols["ad_distance"]
    out["ad_descriptor_out"] = np.where(good, out_desc, False)
    out["ad_energy_out"] = np.where(good, out_energy, False)
    out["in_domain"] = good & ~out_desc & ~out_energy
    out["route"] = route
    out["notes"] = notes
    frame = pd.DataFrame(out)
    return (frame, X) if return_features else frame


def _model_features(X: pd.DataFrame, model) -> pd.DataFrame:
    missing = [c for c in model.features if c not in X.columns]
    for c in missing:  # a user's extra descriptor absent here is imputed like any missing value
        X[c] = np.nan
    return X[model.features]


# -- the whole run ----------------------------------------------------------------------------
@dataclass
class ScreenSummary:
    rows: int = 0
    ok: int = 0
    errors: Counter = field(default_factory=Counter)
    out_of_domain: int = 0
    energy_given: int = 0
    seconds: float = 0.0
    output: str = ""
    top: list = field(default_factory=list)
    rate_note: str = ""

    def as_dict(self) -> dict:
        return {"rows": self.rows, "ok": self.ok, "errors": dict(self.errors), "out_of_domain": self.out_of_domain,
                "energy_given": self.energy_given, "seconds": self.seconds, "output": self.output,
                "rows_per_second": self.rows / self.seconds if self.seconds else None, "rate_note": self.rate_note}


def _count_rows(path: Path, fmt: str) -> int | None:
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


class _Progress:
    def __init__(self, total: int | None, enabled: bool):
        self.total, self.enabled, self.t0, self.done = total, enabled, time.monotonic(), 0

    def update(self, n: int) -> None:
        self.done += n
        if not self.enabled:
            return
        rate = self.done / max(time.monotonic() - self.t0, 1e-9)
        of = f"/{self.total}" if self.total else ""
        sys.stderr.write(f"\rscreened {self.done}{of} rows ({rate:,.0f} rows/s)")
        sys.stderr.flush()

    def close(self) -> None:
        if self.enabled:
            sys.stderr.write("\n")


def _write_part(df: pd.DataFrame, path: Path, fmt: str) -> None:
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


def _header(df: pd.DataFrame, fmt: str) -> str:
    import csv
    import io

    buf = io.StringIO()
    csv.writer(buf, delimiter="\t" if fmt == "tsv" else ",", lineterminator="\n").writerow(["rank", *df.columns])
    return buf.getvalue()


def ordered_chunks(executor, fn, tasks, window: int):
    """Results of ``fn`` over ``tasks`` in order, with at most ``window`` tasks in flight."""
    submit = getattr(executor, "submit", None)
    if submit is None:
        for t in tasks:
            yield fn(t)
        return
    from collections import deque

    pending = deque()
    for t in tasks:
        pending.append(submit(fn, t))
        if len(pending) >= window:
            yield pending.popleft().result()
    while pending:
        yield pending.popleft().result()


def run_screen(model_path, library, output, opts: ScreenOptions, executor=None, chunk_size: int = 20000,
               top: int = 0, progress: bool = True) -> ScreenSummary:
    from ..io import modelfile
    from .model import FamilyModel

    t0 = time.monotonic()
    content = modelfile.load(model_path)
    model = FamilyModel.from_dict(content)
    key = modelfile.checksum(content)
    library, output = Path(library), Path(output)
    out_fmt = detect_format(output)
    if out_fmt not in ("csv", "tsv", "parquet"):
        raise InputError(f"{output}: results can be written as .csv, .tsv or .parquet")
    if output.resolve() == library.resolve():
        raise InputError(f"{output}: the output would overwrite the library")
    in_fmt = detect_format(library)
    summary = ScreenSummary(output=str(output))
    if model.energy_kind != "free-energy":
        summary.rate_note = RATE_NEEDS_FREE_ENERGY.format(kind={"enthalpy": "enthalpies", "electronic":
                                                              "electronic energies"}.get(model.energy_kind, model.energy_kind))
    if not model.has_structures and opts.energy_column is None:
        opts = ScreenOptions(**{**opts.__dict__, "energy_column": model.energy_column})
    output.parent.mkdir(parents=True, exist_ok=True)
    _remove_stale_parts(output)
    parts_dir = Path(tempfile.mkdtemp(prefix=f".{output.name}.parts.{os.getpid()}.", dir=output.parent))
    bar = _Progress(_count_rows(library, in_fmt), progress and sys.stderr.isatty())
    barriers: list[np.ndarray] = []
    parts: list[Path] = []
    header_frame = None
    slug = unit_slug(model.units)
    try:
        def tasks():
            for chunk in iter_table(library, chunk_size=chunk_size, fmt=in_fmt):
                needed = list(model.spec.columns) + ([model.spec.multiplicity] if model.spec.multiplicity else [])
                needed += [opts.energy_column] if opts.energy_column else []
                require_columns(chunk, needed, library)
                if opts.id_column:
                    require_columns(chunk, [opts.id_column], library)
                keep = [c for c in chunk.columns if c in set(needed) | {ROW, opts.id_column, "id", "_read_error"}]
                yield (content, key, chunk[keep], str(library), opts)

        window = 2 * max(1, getattr(executor, "workers", 1))
        for k, result in enumerate(ordered_chunks(executor, screen_chunk, tasks(), window)):
            part = parts_dir / f"part{k:06d}.{out_fmt}"
            _write_part(result, part, out_fmt)
            parts.append(part)
            if header_frame is None:
                header_frame = result.iloc[:0]
            ok = (result["status"] == OK).to_numpy()
            b = result[f"barrier_{slug}"].to_numpy(dtype=float)
            barriers.append(np.where(ok, b, np.nan))
            summary.rows += len(result)
            summary.ok += int(ok.sum())
            summary.errors.update(result.loc[~ok, "error_kind"].astype(str))
            summary.out_of_domain += int((ok & ~result["in_domain"].to_numpy(dtype=bool)).sum())
            summary.energy_given += int((result["reaction_energy_source"] == "given").sum())
            if top:
                summary.top = _merge_top(summary.top, result[ok], f"barrier_{slug}", top)
            bar.update(len(result))
        bar.close()
        allb = np.concatenate(barriers) if barriers else np.zeros(0)
        rank = np.full(allb.size, -1, dtype=np.int64)
        order = np.argsort(np.where(np.isfinite(allb), allb, np.inf), kind="stable")
        finite = np.isfinite(allb[order])
        rank[order[finite]] = np.arange(1, int(finite.sum()) + 1)
        _assemble(parts, rank, output, out_fmt, header_frame)
    finally:
        shutil.rmtree(parts_dir, ignore_errors=True)
    summary.seconds = time.monotonic() - t0
    return summary


def _remove_stale_parts(output: Path) -> None:
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


def _merge_top(current: list, frame: pd.DataFrame, col: str, k: int) -> list:
    rows = current + frame.nsmallest(k, col)[["id", col, "half_life"]].to_dict("records")
    return sorted(rows, key=lambda r: r[col])[:k]


def _assemble(parts: list[Path], rank: np.ndarray, output: Path, fmt: str, header_frame) -> None:
    from ..io.atomic import atomic_path

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
                if writer is None:
                    writer = pq.ParquetWriter(tmp, table.schema)
                writer.write_table(table)
            if writer is None:
                raise InputError("the library has no rows")
            writer.close()
            return
        with open(tmp, "w", encoding="utf-8", newline="") as out:
            out.write(_header(header_frame, fmt))
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


def format_screen_summary(s: ScreenSummary, unit: str, temperature: float) -> str:
    lines = [f"{s.rows} rows screened in {s.seconds:.1f} s: {s.ok} ok, {s.rows - s.ok} with errors, "
             f"{s.out_of_domain} of the ok rows outside the applicability domain; "
             f"{s.energy_given} used a given reaction energy"]
    if s.errors:
        lines.append("errors by kind: " + ", ".join(f"{k} {v}" for k, v in s.errors.most_common()))
    if s.rate_note:
        lines.append(s.rate_note)
    if s.top:
        slug = unit_slug(unit)
        lines.append(f"lowest barriers ({unit}; half-life at {temperature:g} K):")
        for r in s.top:
            lines.append(f"  {r['id']}: {r[f'barrier_{slug}']:.2f}  {r['half_life']}")
    lines.append(f"written to {s.output}")
    lines.append(CAUTION)
    return "\n".join(lines)
