"""The `descriptors` job: a table in, one row out per input row, with a status."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..descriptors.featurize import featurize
from ..descriptors.tiers import DescriptorEngine
from ..io.tables import ROW, iter_table, require_columns, row_ids
from ..structures.checks import DEFAULT_MAX_HEAVY_ATOMS
from ..errors import InputError
from ..structures.spec import InputSpec


def structure_columns(spec: InputSpec) -> list[str]:
    return list(spec.columns)


def describe_chunk(chunk: pd.DataFrame, source: str, spec: InputSpec, engine: DescriptorEngine,
                   *, id_column: str | None = None, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> pd.DataFrame:
    require_columns(chunk, structure_columns(spec), source)
    chunk = chunk.reset_index(drop=True)
    block = featurize(chunk, spec, engine, max_atoms=max_atoms)
    out = pd.DataFrame({"row": chunk[ROW].to_numpy(), "id": row_ids(chunk, id_column, source).to_numpy()})
    for c in structure_columns(spec):
        out[c] = chunk[c].to_numpy()
    out["status"] = block.status
    out["notes"] = block.notes
    for p, keys in block.units.items():
        out[f"{p}_canonical"] = np.where(pd.isna(keys), "", keys)
    return pd.concat([out, block.X.reset_index(drop=True)], axis=1)


def describe_file(path, spec: InputSpec, engine: DescriptorEngine, id_column: str | None = None,
                  *, chunk_size: int | None = None, max_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> pd.DataFrame:
    parts = [describe_chunk(c, str(path), spec, engine, id_column=id_column, max_atoms=max_atoms)
             for c in iter_table(path, chunk_size=chunk_size)]
    return pd.concat(parts, ignore_index=True)


def run_describe(data, output, structure, tiers: str, *, id_column=None, cache_dir=None, max_atoms: int = 200,
                 workers: int = 1, scheduler=None, xtb_level: str = "sp", solvent=None) -> pd.DataFrame:
    """Describe ``data`` into ``output`` (atomically); returns the table written."""
    from ..io.tables import write_table
    from .setup import descriptor_engine, structure_spec

    spec = structure_spec(**structure)
    if spec.mode == "none":
        raise InputError("say where the structures are: --substituents, --molecule (with or without --core), "
                         "--reaction, or --template with --substituents")
    with descriptor_engine(tiers, cache_dir, workers, scheduler, xtb_level=xtb_level, solvent=solvent) as engine:
        table = describe_file(data, spec, engine, id_column=id_column, max_atoms=max_atoms)
    write_table(table, output)
    return table
