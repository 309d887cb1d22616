"""Where work runs: this process, local worker processes, or a Dask cluster.

Every executor offers ``map(fn, items)`` returning results in the order of ``items``, so
the output of a run does not depend on where it ran. ``fn`` and the items must be picklable
(module-level functions, plain data).
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Iterator


def _worker_init() -> None:
    import signal

    # Each worker does small molecules one at a time: one BLAS/OpenMP thread each.
    for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ[var] = "1"
    # The command's stop handlers (forked with it) belong to the main process, which cleans up;
    # a worker simply ends.
    for name in ("SIGTERM", "SIGHUP"):
        if hasattr(signal, name):
            signal.signal(getattr(signal, name), signal.SIG_DFL)


class SerialExecutor:
    workers = 1
    local = True   # runs on this machine: may write files beside the output

    def map(self, fn: Callable, items: Iterable) -> Iterator:
        return map(fn, items)

    def close(self) -> None:
        pass


class ProcessExecutor:
    """A pool of local processes (``--workers N``)."""

    local = True

    def __init__(self, workers: int):
        import multiprocessing as mp
        from concurrent.futures import ProcessPoolExecutor

        self.workers = int(workers)
        ctx = mp.get_context("spawn" if os.environ.get("BARRIERSCOPE_SPAWN") else "fork")
        self._pool = ProcessPoolExecutor(max_workers=self.workers, mp_context=ctx, initializer=_worker_init)

    def map(self, fn: Callable, items: Iterable) -> Iterator:
        return self._pool.map(fn, items)

    def submit(self, fn: Callable, item):
        return self._pool.submit(fn, item)

    def close(self) -> None:
        self._pool.shutdown(wait=True, cancel_futures=True)


class DaskExecutor:
    """Tasks on a Dask cluster: ``local`` starts a loopback cluster, else an address to join.
    Its workers may run on other machines, so results come back rather than into files."""

    local = False

    def __init__(self, scheduler: str, workers: int | None = None, retries: int = 2):
        try:
            from dask.distributed import Client, LocalCluster
        except ImportError:
            raise ImportError("the Dask scheduler needs the 'scale' extra: pip install 'barrierscope[scale]'") from None
        self.retries = retries
        self._cluster = None
        if scheduler == "local":
            n = int(workers or os.cpu_count() or 1)
            self._cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                                         host="127.0.0.1", dashboard_address=None)
            self._client = Client(self._cluster)
        else:
            self._client = Client(scheduler, timeout="30s")
        self._client.run(_worker_init)
        self.workers = max(1, len(self._client.scheduler_info().get("workers", {})))

    @property
    def client(self):
        return self._client

    def map(self, fn: Callable, items: Iterable) -> Iterator:
        items = list(items)
        futures = self._client.map(fn, items, pure=False, retries=self.retries)
        # as results arrive, yield in submission order so outputs match a serial run
        for f in futures:
            yield f.result()

    def submit(self, fn: Callable, item):
        return self._client.submit(fn, item, pure=False, retries=self.retries)

    def close(self) -> None:
        self._client.close()
        if self._cluster is not None:
            self._cluster.close()


def make_executor(workers: int = 1, scheduler: str | None = None):
    """The executor for ``--workers`` and ``--scheduler``."""
    if scheduler:
        return DaskExecutor(scheduler, workers if workers > 1 else None)
    if workers and workers > 1:
        return ProcessExecutor(workers)
    return SerialExecutor()


def ordered_results(executor, fn, tasks, window: int):
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


# One model and one descriptor engine per worker process, rebuilt only when they change.
_MODELS: dict[str, object] = {}
_ENGINES: dict[tuple, object] = {}


def cached_model(content: dict, key: str):
    """The :class:`~.model.FamilyModel` of a model file's content (``key``: its checksum)."""
    model = _MODELS.get(key)
    if model is None:
        from .model import FamilyModel

        model = FamilyModel.from_dict(content)
        _MODELS.clear()
        _MODELS[key] = model
    return model


def cached_engine(model, cache_dir):
    """The descriptor engine that describes library rows the way ``model`` was trained."""
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
