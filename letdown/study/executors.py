"""Where many cases run: in this process, on a local process pool, or on a Dask cluster.

One small interface: ``executor.map(fn, items)`` returns the results in order. Studies split their
cases into chunks (each chunk still a vectorised batch) and hand the chunks to an executor.

* :class:`Serial` -- this process (the default; the batch solver already vectorises the cases).
* :class:`ProcessPool` -- ``--workers N``: a local process pool (``concurrent.futures``).
* :class:`DaskCluster` -- ``--dask ADDRESS``: an existing Dask distributed scheduler.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError


#: Seconds before the progress bar appears: a run shorter than this shows none [s].
PROGRESS_DELAY = 1.0


def progress(iterable, total: int, desc: str, enabled: bool):
    """Wrap ``iterable`` in a terminal progress bar (tqdm, on stderr) when ``enabled``; the bar
    appears only once the run has taken :data:`PROGRESS_DELAY` seconds."""
    if not enabled:
        return iterable
    try:
        from tqdm import tqdm
    except ImportError:       # the bar is a convenience (the optional 'progress' extra)
        return iterable
    return tqdm(iterable, total=total, desc=desc, unit="chunk", leave=False,
                delay=PROGRESS_DELAY)


class Serial:
    """Run chunks one after the other in this process."""

    workers = 1

    def map(self, fn, items, show_progress: bool = False):
        items = list(items)
        return [fn(item) for item in progress(items, len(items), "solving", show_progress)]

    def close(self):
        pass


class ProcessPool:
    """Run chunks on ``workers`` local processes."""

    def __init__(self, workers: int):
        if int(workers) < 1:
            raise InputError(f"--workers must be at least 1 (got {workers})", field="--workers")
        self.workers = int(workers)
        self._pool = None

    def map(self, fn, items, show_progress: bool = False):
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor
        if self._pool is None:
            # not "fork": a process that has run a large batch holds the compiled kernels' thread
            # pool, and a child forked from it can block forever on a lock a thread held
            # (a year after a serial year hung so); "forkserver" starts the workers clean
            method = ("forkserver" if "forkserver" in multiprocessing.get_all_start_methods()
                      else "spawn")
            self._pool = ProcessPoolExecutor(max_workers=self.workers,
                                             mp_context=multiprocessing.get_context(method))
        items = list(items)
        return list(progress(self._pool.map(fn, items), len(items), "solving", show_progress))

    def close(self):
        if self._pool is not None:
            self._pool.shutdown()
            self._pool = None


class DaskCluster:
    """Run chunks on an existing Dask distributed cluster (``address`` of its scheduler)."""

    def __init__(self, address: str):
        try:
            from distributed import Client
        except ImportError:
            raise InputError("--dask needs the dask distributed package: pip install "
                             "'dask[distributed]'", field="--dask") from None
        try:
            self._client = Client(address, timeout="10s")
        except OSError as exc:
            raise InputError(f"cannot reach the Dask scheduler at {address}: {exc}",
                             field="--dask") from None
        self.workers = max(1, len(self._client.scheduler_info().get("workers", {})))

    def map(self, fn, items, show_progress: bool = False):
        from distributed import as_completed
        futures = self._client.map(fn, list(items), pure=False)
        for _ in progress(as_completed(futures), len(futures), "solving", show_progress):
            pass
        return self._client.gather(futures)

    def close(self):
        self._client.close()


def make_executor(workers: int | None = None, dask: str | None = None):
    """The executor the command-line options ask for."""
    if workers and dask:
        raise InputError("give --workers or --dask, not both", field="--workers")
    if dask:
        return DaskCluster(dask)
    if workers and int(workers) > 1:
        return ProcessPool(workers)
    return Serial()


def chunks(n: int, parts: int) -> list:
    """Index arrays splitting ``n`` cases into ``parts`` nearly equal, contiguous chunks."""
    parts = max(1, min(int(parts), n))
    return [a for a in np.array_split(np.arange(n), parts) if a.size]
