"""The `screen` job: rank a virtual library with a fitted model, every row accounted for.

The library is read in chunks; each chunk is described and predicted (in this process, in
local worker processes, or as Dask tasks — the same function everywhere, so the output does
not depend on where it ran) and written to a part file as it arrives, a bounded number of
chunks in flight (:mod:`..io.parts`). When every chunk is in, rows are ranked and the output
is assembled atomically.

Ranking: rank 1 is the lowest predicted barrier among the rows that succeeded; rows share a
rank only when their barriers are equal (competition ranking: 1, 2, 2, 4). Whether a row's
90 % interval reaches the curve's floor, where the model cannot tell it from the floor, is its
own column (``reaches_floor``) and a count in the summary, never a rank.
"""

from __future__ import annotations

import json
import sys
import time
from collections import Counter
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..io import parts as partfiles
from ..io.atomic import write_text_atomic
from ..io.tables import READ_ERROR, ROW, detect_format, id_column_of, iter_table, require_columns
from ..views.columns import screen_frame
from .predict import OK, ScreenOptions, floor_of, kinetics_of, predict_chunk, with_library
from .executors import cached_engine, cached_model, ordered_results
from .records import ScreenSummary, TopRow


@dataclass
class _Tally:
    """A screen's counts while its chunks come in (kcal/mol); the record is built at the end."""

    rows: int = 0
    ok: int = 0
    errors: Counter = field(default_factory=Counter)
    out_of_domain: int = 0
    energy_given: int = 0
    implausible_half_lives: int = 0
    at_floor: int = 0
    diffusion_limited: int = 0
    half_life_bands: Counter = field(default_factory=Counter)
    top: list = field(default_factory=list)
    distances: list = field(default_factory=list)
    notes: Counter = field(default_factory=Counter)


TOP_FIELDS = ("id", "barrier", "low", "high", "alpha", "half_life_s", "energy", "energy_source", "in_domain", "route",
              "reaches_floor")

#: Half-lives outside these bounds (s) are physically implausible for a thermal reaction in a
#: flask: below a picosecond (faster than a molecular vibration), above the age of the universe
#: (about 4.35e17 s, Planck 2018 cosmology; rounded).
HALF_LIFE_BOUNDS = (1e-12, 4.35e17)
#: Half-life bands of the summary (upper bounds, s): what a bench chemist plans around —
#: done on mixing, within the working day, overnight to a week, slower than a month, a year.
HALF_LIFE_BANDS = (("under a second", 1.0), ("a second to an hour", 3600.0), ("an hour to a day", 86400.0),
                   ("a day to a month", 30 * 86400.0), ("a month to a year", 365.25 * 86400.0),
                   ("over a year", np.inf))


def half_life_bands(t) -> dict[str, int]:
    """Rows per :data:`HALF_LIFE_BANDS` band of the finite half-lives ``t`` (s)."""
    t = np.asarray(t, dtype=float)
    t = t[np.isfinite(t)]
    edges = [0.0] + [hi for _, hi in HALF_LIFE_BANDS]
    return {name: int(np.sum((t >= lo) & (t < hi))) for (name, _), lo, hi in zip(HALF_LIFE_BANDS, edges[:-1],
                                                                                  edges[1:])}


def screen_chunk(args):
    """One chunk: (model content, model key, chunk, source, options, output format, top k,
    part file or None) → (output frame in the user's unit, or its empty header when the worker
    wrote the part file itself; the chunk's part of the summary in kcal/mol). Workers on this
    machine write their own part files; Dask workers, which may be elsewhere, send frames."""
    content, key, chunk, source, opts, fmt, top, part = args
    model = cached_model(content, key)
    engine = cached_engine(model, opts.cache_dir) if model.has_structures else None
    chunk_pred = predict_chunk(model, chunk, source, opts, engine=engine)
    pred = chunk_pred.frame
    bimolecular = kinetics_of(model, opts)["molecularity"] == 2
    frame = with_library(screen_frame(pred, model.units, rounded=fmt != "parquet", bimolecular=bimolecular),
                         chunk_pred.library)
    if part is not None:
        partfiles.write_part(frame, part, fmt)
        frame = frame.iloc[:0]
    return frame, _chunk_summary(pred, top, model.spec.columns)


def _chunk_summary(pred, top: int, structure_columns) -> dict:
    ok = (pred["status"] == OK).to_numpy()
    t = pred["half_life_s"].to_numpy(dtype=float)
    d = pred["ad_distance"].to_numpy(dtype=float)
    return {"rows": len(pred), "ok": int(ok.sum()), "errors": Counter(pred.loc[~ok, "error_kind"].astype(str)),
            "out_of_domain": int((ok & ~pred["in_domain"].to_numpy(dtype=bool)).sum()),
            "energy_given": int((pred["energy_source"] == "given").sum()),
            "implausible": int(np.sum(ok & np.isfinite(t) & ((t < HALF_LIFE_BOUNDS[0]) | (t > HALF_LIFE_BOUNDS[1])))),
            "distances": d[np.isfinite(d)][:2000], "barrier": np.where(ok, pred["barrier"].to_numpy(dtype=float), np.nan),
            "at_floor": int((ok & pred["reaches_floor"].to_numpy(dtype=bool)).sum()),
            "diffusion_limited": int((ok & pred["diffusion_limited"].to_numpy(dtype=bool)).sum()),
            "half_life_bands": half_life_bands(t[ok]),
            "top": _merge_top([], pred, top, structure_columns) if top else [], "notes": note_kinds(pred["notes"])}


def note_kinds(notes) -> Counter:
    """Rows per kind of note (a note's text up to its first colon: the kind, without the row's specifics)."""
    arr = np.asarray(notes, dtype=object)
    arr = arr[arr != ""]                      # most rows carry no note: skip them in one pass
    return Counter(part.split(":")[0].strip() for text in arr for part in str(text).split("; "))


def ranks(barrier: np.ndarray) -> np.ndarray:
    """1-based competition ranks by barrier (equal barriers share the lower rank; −1 where
    there is none)."""
    rank = np.full(barrier.size, -1, dtype=np.int64)
    ok = np.flatnonzero(np.isfinite(barrier))
    order = ok[np.argsort(barrier[ok], kind="stable")]
    sorted_b = barrier[order]
    position = np.arange(1, order.size + 1)
    # Each run of equal barriers takes the rank of its first row.
    first = np.r_[True, sorted_b[1:] != sorted_b[:-1]] if order.size else np.zeros(0, dtype=bool)
    rank[order] = np.maximum.accumulate(np.where(first, position, 0))
    return rank


def _merge_top(current: list, pred, k: int, structure_columns) -> list:
    """The k lowest barriers of ``current`` and ``pred``, in-domain rows first (kcal/mol), with
    their structures."""
    import pandas as pd

    ok = pred[pred["status"] == OK]
    cand = pd.concat([ok.nsmallest(k, "barrier"), ok[ok["in_domain"].astype(bool)].nsmallest(k, "barrier")])
    structures = [c for c in structure_columns if c in ok.columns]
    picked = cand.drop_duplicates("row")[[*TOP_FIELDS, *structures]]
    rows = current + [_top_row(r, structures) for r in picked.itertuples(index=False)]
    return sorted(rows, key=lambda r: (not r.in_domain, r.barrier))[:k]


def _top_row(values, structures) -> TopRow:
    d = dict(zip(TOP_FIELDS, values[:len(TOP_FIELDS)]))
    d["in_domain"], d["reaches_floor"] = bool(d["in_domain"]), bool(d["reaches_floor"])
    return TopRow(**d, structure={c: str(v) for c, v in zip(structures, values[len(TOP_FIELDS):])})


def _tasks(library, in_fmt, model, opts, *, content, key, chunk_size, fmt, top, folder, local):
    needed = list(model.spec.columns) + ([model.spec.multiplicity] if model.spec.multiplicity else [])
    needed += [opts.energy_column] if opts.energy_column else []
    needed += [model.family_column] if model.family_column else []
    # The user's own descriptor columns and computed energies: read where the library has them.
    optional = set(model.extra_descriptors) | ({model.computed_energy} if model.computed_energy else set())
    for k, chunk in enumerate(iter_table(library, chunk_size=chunk_size, fmt=in_fmt)):
        require_columns(chunk, needed + ([opts.id_column] if opts.id_column else []) + list(opts.keep or ()), library)
        wanted = set(needed) | optional | {ROW, opts.id_column, id_column_of(chunk.columns), READ_ERROR}
        keep = [c for c in chunk.columns if c in wanted or opts.keep is None or c in set(opts.keep)]
        yield (content, key, chunk[keep], str(library), opts, fmt, top, part_path(folder, k, fmt) if local else None)


def part_path(folder: Path, k: int, fmt: str) -> Path:
    return folder / f"part{k:06d}.{fmt}"


def _count(summary: _Tally, part: dict, top: int) -> None:
    summary.rows += part["rows"]
    summary.ok += part["ok"]
    summary.errors.update(part["errors"])
    summary.out_of_domain += part["out_of_domain"]
    summary.energy_given += part["energy_given"]
    summary.implausible_half_lives += part["implausible"]
    summary.at_floor += part["at_floor"]
    summary.diffusion_limited += part["diffusion_limited"]
    summary.half_life_bands.update(part["half_life_bands"])
    summary.notes.update(part.get("notes", {}))
    if len(summary.distances) < 20000:
        summary.distances += part["distances"].tolist()
    if top:
        summary.top = sorted(summary.top + part["top"], key=lambda r: (not r.in_domain, r.barrier))[:top]


def _kinetics_record(model, opts) -> dict:
    kin = kinetics_of(model, opts)
    return {k: kin[k] for k in ("molecularity", "standard_state", "concentration", "solvent")} | \
        {"diffusion_rate_per_M_per_s": kin["k_diff"]}


def meta_path(output: Path) -> Path:
    """Where a CSV/TSV output's description goes: ``OUT.meta.json`` beside it."""
    return Path(output).with_name(Path(output).name + ".meta.json")


def screen_metadata(model_path, model, opts, *, library, rows: int) -> dict:
    """What a screen's output file needs to describe itself: the conditions, the units, the
    model (its file's SHA-256) and the run."""
    import hashlib
    from datetime import datetime, timezone

    from .. import __version__

    kin = kinetics_of(model, opts)
    return {"format": "barrierscope-screen", "temperature_K": opts.temperature, "units": model.units,
            "energy_kind": model.energy_kind, "molecularity": kin["molecularity"],
            "concentration_M": kin["concentration"], "standard_state": kin["standard_state"],
            "solvent": kin["solvent"], "diffusion_rate_per_M_per_s": kin["k_diff"], "transmission": opts.transmission,
            "model": str(model_path), "model_sha256": hashlib.sha256(Path(model_path).read_bytes()).hexdigest(),
            "library": str(library), "rows": rows, "barrierscope_version": __version__,
            "created": datetime.now(timezone.utc).isoformat(timespec="seconds")}


def run_screen(model_path, library, output, opts: ScreenOptions, *, executor=None, chunk_size: int = 20000,
               top: int = 0, progress: bool = True) -> ScreenSummary:
    """Screen ``library`` with the model in ``model_path`` into ``output``; see the module docstring."""
    from ..io import modelfile
    from .model import FamilyModel

    t0 = time.monotonic()
    content = modelfile.load(model_path)
    model, key = FamilyModel.from_dict(content), modelfile.checksum(content)
    library, output = Path(library), Path(output)
    out_fmt = detect_format(output)
    if out_fmt not in ("csv", "tsv", "parquet"):
        raise InputError(f"{output}: results can be written as .csv, .tsv or .parquet")
    if output.resolve() == library.resolve():
        raise InputError(f"{output}: the output would overwrite the library")
    in_fmt = detect_format(library)
    if not model.has_structures and opts.energy_column is None:
        opts = replace(opts, energy_column=model.energy_column)
    tally = _Tally()
    floor = floor_of(model.curve) if model.joint is None else None
    family_floors = ({} if model.joint is None else
                     dict(zip(model.joint["names"], model.family_floors().tolist())))
    output.parent.mkdir(parents=True, exist_ok=True)
    folder = partfiles.parts_folder(output)
    total = partfiles.count_rows(library, in_fmt)
    workers = max(1, getattr(executor, "workers", 1))
    if workers > 1 and total:  # about eight chunks a worker, so no worker waits on a long last one
        chunk_size = int(np.clip(-(-total // (8 * workers)), 1000, chunk_size))
    bar = _Progress(total, progress and sys.stderr.isatty())
    barriers, parts, header = [], [], None
    try:
        local = getattr(executor, "local", True)
        tasks = _tasks(library, in_fmt, model, opts, content=content, key=key, chunk_size=chunk_size, fmt=out_fmt, top=top, folder=folder, local=local)
        window = 2 * workers
        for k, (frame, piece) in enumerate(ordered_results(executor, screen_chunk, tasks, window)):
            part = part_path(folder, k, out_fmt)
            if not local:
                partfiles.write_part(frame, part, out_fmt)
            parts.append(part)
            header = frame.iloc[:0] if header is None else header
            barriers.append(piece["barrier"])
            _count(tally, piece, top)
            bar.update(piece["rows"])
        bar.close()
        b = np.concatenate(barriers) if barriers else np.zeros(0)
        meta = screen_metadata(model_path, model, opts, library=library, rows=int(b.size))
        partfiles.assemble(parts, ranks(b), output, out_fmt, header_frame=header,
                           metadata=meta if out_fmt == "parquet" else None)
        if out_fmt != "parquet":
            write_text_atomic(meta_path(output), json.dumps(meta, indent=2) + "\n")
    finally:
        partfiles.discard(folder)
    seconds = time.monotonic() - t0
    return ScreenSummary(units=model.units, energy_kind=model.energy_kind, temperature=opts.temperature,
                         rows=tally.rows, ok=tally.ok, errors=dict(tally.errors), out_of_domain=tally.out_of_domain,
                         energy_given=tally.energy_given, seconds=seconds,
                         rows_per_second=tally.rows / seconds if seconds else None, output=str(output), top=tally.top,
                         floor=floor, family_floors=family_floors, at_floor=tally.at_floor,
                         half_life_bands=({k: tally.half_life_bands.get(k, 0) for k, _ in HALF_LIFE_BANDS}
                                          if sum(tally.half_life_bands.values()) else {}),
                         implausible_half_lives=tally.implausible_half_lives, distances=tally.distances,
                         notes=dict(tally.notes), kinetics=_kinetics_record(model, opts),
                         diffusion_limited=tally.diffusion_limited)


class _Progress:
    def __init__(self, total: int | None, enabled: bool):
        self.total, self.enabled, self.t0, self.done = total, enabled, time.monotonic(), 0

    def update(self, n: int) -> None:
        self.done += n
        if self.enabled:
            rate = self.done / max(time.monotonic() - self.t0, 1e-9)
            sys.stderr.write(f"\rscreened {self.done}{'/' + str(self.total) if self.total else ''} rows "
                             f"({rate:,.0f} rows/s)")
            sys.stderr.flush()

    def close(self) -> None:
        if self.enabled:
            sys.stderr.write("\n")
