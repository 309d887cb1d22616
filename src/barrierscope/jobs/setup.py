"""Turning command options into the objects jobs use: the structure spec, the descriptor
engine (with the executor it owns, closed when the job ends), GFN2-xTB settings."""

from __future__ import annotations

import contextlib


def structure_spec(substituents=None, molecule=None, core=None, reaction=None, *, template=None, multiplicity=None,
                   centre=None):
    """The structure options as an :class:`~barrierscope.structures.spec.InputSpec`; a
    combination that cannot be used (or an unreadable core or template) names the options."""
    from ..structures.spec import make_spec
    from .options import option

    with option("structure options (--substituents, --molecule, --core, --reaction, --template, --multiplicity, "
                "--centre)"):
        return make_spec(substituents=substituents, molecule=molecule, core=core, reaction=reaction,
                         template=template, multiplicity=multiplicity, centre=centre)


def xtb_settings(level: str = "sp", solvent: str | None = None):
    from ..semiempirical.species import XtbSettings

    solvent = None if solvent is None or solvent.strip().lower() in ("", "none", "gas") else solvent.strip()
    return XtbSettings(level=level, solvent=solvent)


@contextlib.contextmanager
def descriptor_engine(tiers: str, cache_dir=None, workers: int = 1, scheduler: str | None = None,
                      *, xtb_level: str = "sp", solvent: str | None = None):
    """A :class:`~barrierscope.descriptors.tiers.DescriptorEngine` for the run; the worker
    pool or Dask cluster it starts is shut down when the block ends, whatever happens."""
    from ..descriptors.cache import DescriptorCache
    from ..descriptors.tiers import DescriptorEngine, parse_tiers
    from .executors import make_executor

    from .options import at_least, one_of, option

    with option("--tiers"):
        names = parse_tiers(tiers)
    settings = xtb_settings(one_of("--xtb-level", xtb_level, ("sp", "opt")), solvent)
    at_least("--workers", workers, 1)
    executor = make_executor(workers=workers, scheduler=scheduler) if (workers > 1 or scheduler) else None
    try:
        yield DescriptorEngine(names, DescriptorCache(cache_dir if cache_dir is not None else "default"),
                               executor=executor, xtb_settings=settings)
    finally:
        if executor is not None:
            executor.close()
