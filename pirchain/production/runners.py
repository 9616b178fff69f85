"""Where the units run: in this process, on local worker processes, or on a Dask cluster.

Work is split into tasks (batches of units) that are pure functions of their arguments, and
every runner returns the tasks' results in task order; with the same seed the answer is the
same whichever runner computes it. Local processes use the standard library's
``concurrent.futures.ProcessPoolExecutor``; a cluster is Dask distributed's own scheduler
and workers (``distributed.Client`` on a scheduler address, or a client given). No
scheduling of our own: a runner only submits and gathers in order.
"""

from __future__ import annotations

import multiprocessing
import os
from concurrent.futures import ProcessPoolExecutor

from ..errors import DesignError


def on_one_thread(func, *args):
    """Call ``func`` with the compiled pass on one thread (numba's thread count is per
    calling thread, so it is set in the thread that runs the task)."""
    import numba

    numba.set_num_threads(1)
    return func(*args)


class InProcess:
    """Run every task here, one after the other."""

    name = "in-process"

    def map(self, func, tasks, progress=None):
        out = []
        for k, t in enumerate(tasks):
            out.append(func(*t))
            if progress is not None:
                progress((k + 1) / len(tasks))
        return out

    def close(self):
        """Nothing to release."""


class LocalProcesses:
    """Worker processes on this machine (``processes`` of them; default: the cores)."""

    name = "local processes"

    def __init__(self, processes: int | None = None):
        n = (os.cpu_count() or 1) if processes is None else processes
        if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= 256:
            raise DesignError("--processes", processes, "an integer between 1 and 256")
        # spawned, not forked: the parent's compiled kernels hold an OpenMP runtime that a
        # fork cannot carry; each worker runs one thread (the units are the parallelism)
        self.pool = ProcessPoolExecutor(
            max_workers=n, mp_context=multiprocessing.get_context("spawn")
        )

    def map(self, func, tasks, progress=None):
        futures = [self.pool.submit(on_one_thread, func, *t) for t in tasks]
        out = []
        for k, f in enumerate(futures):  # in task order
            out.append(f.result())
            if progress is not None:
                progress((k + 1) / len(tasks))
        return out

    def close(self):
        self.pool.shutdown(cancel_futures=True)


class DaskCluster:
    """A Dask distributed cluster: ``client`` given, or one connected at ``address``.

    Every task of one ``map`` must share its first argument (the design), which is
    scattered to the workers once.
    """

    name = "dask cluster"

    def __init__(self, address: str | None = None, client=None):
        if client is None:
            try:
                from distributed import Client
            except ImportError:  # pragma: no cover - a dependency of the package
                raise DesignError("--scheduler", address, "dask[distributed] installed") from None
            try:
                client = Client(address, timeout="10s")
            except (OSError, TimeoutError, ValueError) as err:
                raise DesignError(
                    "--scheduler", address, f"a reachable Dask scheduler ({err})"
                ) from None
            self._own = True
        else:
            self._own = False
        self.client = client

    def map(self, func, tasks, progress=None):
        # the first argument (the design) is the same for every task: send it once
        shared = self.client.scatter(tasks[0][0], broadcast=True, hash=False) if tasks else None
        futures = [
            self.client.submit(on_one_thread, func, shared, *t[1:], pure=False) for t in tasks
        ]
        out = []
        for k, f in enumerate(futures):
            out.append(f.result())
            if progress is not None:
                progress((k + 1) / len(tasks))
        return out

    def close(self):
        if self._own:
            self.client.close()


def runner_for(processes=None, scheduler=None, client=None):
    """The runner a call asks for: a Dask client or scheduler address, local processes
    (``processes`` > 1, or None for one per core), or in-process (``processes`` = 1)."""
    if client is not None or scheduler is not None:
        return DaskCluster(scheduler, client)
    if processes == 1:
        return InProcess()
    return LocalProcesses(processes)
