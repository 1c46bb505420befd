"""Where a project's tasks run: in this process, in local worker processes, or on a Dask cluster.

Every runner has one method, ``map(function, items) -> list``, which returns the results in
the order of ``items``; the functions are plain module-level functions of one picklable
argument, so the same task runs in a process pool and on Dask alike. Nothing here schedules:
``concurrent.futures.ProcessPoolExecutor`` and ``dask.distributed.Client`` do.

Opening a Dask runner is input like opening a file: a missing extra or a scheduler that does
not answer is a one-line error (exit 2) naming ``--scheduler``.
"""
from __future__ import annotations

import multiprocessing
from concurrent.futures import ProcessPoolExecutor
from typing import Any, Callable, Sequence

from pitfalls.errors import PitfallsInputError

CONNECT_TIMEOUT_S = 20


class LocalRunner:
    """Tasks in this process (``jobs == 1``) or in ``jobs`` worker processes (started fresh, not forked)."""

    def __init__(self, jobs: int) -> None:
        self.jobs = max(1, int(jobs))
        self._pool: ProcessPoolExecutor | None = None
        self.description = "this process" if self.jobs == 1 else f"{self.jobs} local worker processes"

    def map(self, function: Callable[[Any], Any], items: Sequence[Any]) -> list:
        if self.jobs == 1 or len(items) <= 1:
            return [function(item) for item in items]
        if self._pool is None:  # no more workers than the first batch of tasks needs
            self._pool = ProcessPoolExecutor(max_workers=min(self.jobs, len(items)),
                                             mp_context=multiprocessing.get_context("spawn"))
        return list(self._pool.map(function, items))

    def close(self) -> None:
        if self._pool is not None:
            self._pool.shutdown()
            self._pool = None

    def __enter__(self) -> "LocalRunner":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class DaskRunner:
    """Tasks on a Dask distributed cluster: an existing scheduler at ``address``, or a
    ``LocalCluster`` of ``jobs`` single-threaded worker processes for ``address == "local"``."""

    def __init__(self, address: str, jobs: int) -> None:
        try:
            from dask.distributed import Client, LocalCluster
        except ImportError as err:
            raise PitfallsInputError("--scheduler", "", "needs the optional Dask extra, which is not installed",
                                     'install it with pip install -e ".[dask]", or leave out --scheduler') from err
        self._cluster = None
        try:
            if address == "local":
                self._cluster = LocalCluster(n_workers=max(1, int(jobs)), threads_per_worker=1, processes=True,
                                             dashboard_address=None)
                self._client = Client(self._cluster)
                self.description = f"a Dask LocalCluster of {max(1, int(jobs))} workers"
            else:
                self._client = Client(address, timeout=CONNECT_TIMEOUT_S)
                self.description = f"the Dask scheduler at {address}"
        except (OSError, TimeoutError, ValueError) as err:
            if self._cluster is not None:
                self._cluster.close()
            raise PitfallsInputError("--scheduler", "", f"no Dask scheduler answers at {address} ({err})",
                                     "start one (dask scheduler) and give its address as tcp://HOST:PORT, "
                                     "or use --scheduler local") from err

    def map(self, function: Callable[[Any], Any], items: Sequence[Any]) -> list:
        if not items:
            return []
        futures = self._client.map(function, list(items), pure=False)
        return list(self._client.gather(futures))

    def close(self) -> None:
        self._client.close()
        if self._cluster is not None:
            self._cluster.close()

    def __enter__(self) -> "DaskRunner":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def open_runner(jobs: int, scheduler: str | None) -> LocalRunner | DaskRunner:
    """A Dask runner when ``scheduler`` is given (an address or ``local``), else a local one."""
    if jobs < 1:
        raise PitfallsInputError("--jobs", "", f"must be at least 1, not {jobs}", "give a number of workers such as 2")
    if scheduler:
        return DaskRunner(scheduler, jobs)
    return LocalRunner(jobs)
