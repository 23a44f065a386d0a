"""Where the batches run: in this process, in a local process pool, or on a Dask cluster.

All three run the same function on the same batch specs and hand the results
back to this process, which alone writes the run folder; so results do not
depend on the executor or the number of workers, and a cluster's workers need
no access to the run folder.

* :class:`InProcess` (the default) runs the batches here, one after the other,
  each on ``threads`` numba threads (the batch kernels spread its records over
  them with ``prange``; all cores by default). The next batch is computed in a
  background thread while this one saves the last: the compiled kernels release
  the GIL, so the computing and the writing overlap.
* :class:`ProcessPool` runs ``workers`` processes started with the ``spawn``
  method (no state inherited by forking); each loads the compiled kernels from
  numba's cache (``cache=True``) instead of compiling them, and runs its batch
  kernels on one numba thread so that the workers do not oversubscribe the cores.
  Starting them costs a second or two (imports and the kernel cache), so it pays
  only for long suites; it keeps each worker's memory apart.
* :class:`DaskExecutor` submits the batches to a ``dask.distributed`` scheduler,
  either an existing one (``tcp://HOST:PORT``) or a ``LocalCluster`` it starts on
  127.0.0.1 with ``workers`` single-threaded worker processes.

Each executor keeps at most a few batches per worker in flight, so memory does
not grow with the size of the suite.
"""

from __future__ import annotations

import collections
import concurrent.futures
import logging
import multiprocessing
import os
import re
from typing import Callable, Iterable, Iterator

from simulate.errors import InputError

__all__ = ["Executor", "InProcess", "ProcessPool", "DaskExecutor", "make_executor", "CONNECT_TIMEOUT"]

#: Seconds to wait for a Dask scheduler to answer before giving up.
CONNECT_TIMEOUT = 5

#: Batches in flight per worker (one running, one queued).
IN_FLIGHT_PER_WORKER = 2

_ADDRESS = re.compile(r"^(tcp|tls)://[^\s:/]+:\d+$")


class Executor:
    """What the executors share: a context manager whose ``close`` releases its workers."""

    name = "executor"
    threads: int | None = 1

    def close(self) -> None:
        pass

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


class InProcess(Executor):
    """Run the batches here, one after the other, on ``threads`` numba threads (None: all cores)."""

    name = "in-process"

    def __init__(self, threads: int | None = None):
        self.threads = None if threads is None else int(threads)
        if self.threads is not None and self.threads < 1:
            raise InputError(f"--workers: expected a whole number >= 1, got {threads}")

    @property
    def workers(self) -> int:
        if self.threads is not None:
            return self.threads
        import numba

        return numba.config.NUMBA_NUM_THREADS

    def map(self, fn: Callable, specs: Iterable) -> Iterator[tuple[int, object]]:
        """Yield ``(position, fn(spec))`` for each spec, in order.

        ``fn`` runs in one background thread, a batch ahead of the caller, so that
        the caller's work on a result (saving it) overlaps the next computation.
        """
        items = enumerate(specs)
        running: collections.deque = collections.deque()
        pool = concurrent.futures.ThreadPoolExecutor(max_workers=1, thread_name_prefix="swaysim-batch")

        def submit():
            item = next(items, None)
            if item is not None:
                running.append((item[0], pool.submit(fn, item[1])))

        try:
            submit()
            while running:
                position, future = running.popleft()
                result = future.result()
                submit()            # the next batch computes while the caller saves this one
                yield position, result
        finally:
            pool.shutdown(wait=True, cancel_futures=True)

    def describe(self) -> str:
        return f"in this process on {self.workers} thread{'s' if self.workers != 1 else ''}"


def _init_worker() -> None:
    """Process pool worker start: one numba thread (the pool provides the parallelism)."""
    import numba

    numba.set_num_threads(1)


class ProcessPool(Executor):
    """A pool of ``workers`` spawned processes, one numba thread each."""

    name = "process-pool"
    threads = 1

    def __init__(self, workers: int, start_method: str = "spawn"):
        self.workers = int(workers)
        self._pool = concurrent.futures.ProcessPoolExecutor(
            max_workers=self.workers, mp_context=multiprocessing.get_context(start_method),
            initializer=_init_worker)

    def map(self, fn, specs):
        specs = iter(enumerate(specs))
        running: dict = {}
        limit = IN_FLIGHT_PER_WORKER * self.workers

        def fill():
            while len(running) < limit:
                item = next(specs, None)
                if item is None:
                    return
                running[self._pool.submit(fn, item[1])] = item[0]

        fill()
        while running:
            done, _ = concurrent.futures.wait(running, return_when=concurrent.futures.FIRST_COMPLETED)
            for future in done:
                position = running.pop(future)
                yield position, future.result()
            fill()

    def close(self) -> None:
        self._pool.shutdown(wait=True, cancel_futures=True)

    def describe(self) -> str:
        return f"process pool of {self.workers} workers"


def _distributed(option: str):
    try:
        import distributed
    except ImportError:
        raise InputError(f"{option} needs dask.distributed, which is not installed; "
                         "install it with: pip install 'swaysim[cluster]'") from None
    return distributed


class DaskExecutor(Executor):
    """Batches as tasks on a ``dask.distributed`` cluster.

    Parameters
    ----------
    scheduler : str, optional
        Address ``tcp://HOST:PORT`` of a running scheduler.
    local_workers : int, optional
        Start a ``LocalCluster`` on 127.0.0.1 with this many single-threaded
        worker processes instead (and stop it on close).
    """

    name = "dask"
    threads = 1

    def __init__(self, scheduler: str | None = None, local_workers: int | None = None):
        option = "--scheduler" if scheduler else "--cluster local"
        distributed = _distributed(option)
        self._cluster = None
        if scheduler:
            if not _ADDRESS.match(scheduler):
                raise InputError(f"--scheduler {scheduler}: expected an address such as tcp://127.0.0.1:8786")
            try:
                self._client = distributed.Client(scheduler, timeout=f"{CONNECT_TIMEOUT}s",
                                                  set_as_default=False)
            except (OSError, TimeoutError) as exc:
                raise InputError(f"--scheduler {scheduler}: no Dask scheduler answered within "
                                 f"{CONNECT_TIMEOUT} s ({type(exc).__name__})") from None
            self.address = scheduler
        else:
            self._cluster = distributed.LocalCluster(
                n_workers=int(local_workers), threads_per_worker=1, processes=True, host="127.0.0.1",
                dashboard_address=None, silence_logs=logging.ERROR, memory_limit=0)
            self._client = distributed.Client(self._cluster, set_as_default=False)
            self.address = self._cluster.scheduler_address
        self.workers = max(1, len(self._client.scheduler_info().get("workers", {})) or int(local_workers or 1))

    def map(self, fn, specs):
        distributed = _distributed("dask")
        specs = iter(enumerate(specs))
        running: dict = {}
        limit = IN_FLIGHT_PER_WORKER * self.workers

        def submit_one():
            item = next(specs, None)
            if item is None:
                return None
            future = self._client.submit(fn, item[1], pure=False)
            running[future] = item[0]
            return future

        first = [f for f in (submit_one() for _ in range(limit)) if f is not None]
        if not first:
            return
        queue = distributed.as_completed(first, loop=self._client.loop)
        try:
            for future in queue:
                position = running.pop(future)
                result = future.result()
                future.release()
                yield position, result
                nxt = submit_one()
                if nxt is not None:
                    queue.add(nxt)
        finally:
            for future in running:
                future.cancel()

    def close(self) -> None:
        try:
            self._client.close()
        finally:
            if self._cluster is not None:
                self._cluster.close()

    def describe(self) -> str:
        if self._cluster is not None:
            return f"Dask local cluster of {self.workers} workers at {self.address}"
        return f"Dask cluster at {self.address} ({self.workers} workers)"


def make_executor(workers: int | None = None, scheduler: str | None = None, cluster: str | None = None,
                  processes: bool = False):
    """The executor for the command-line choices (``--workers``, ``--processes``, ``--scheduler``, ``--cluster``)."""
    if scheduler and cluster:
        raise InputError("--scheduler and --cluster: give one of them (an existing scheduler, or a "
                         "local cluster to start)")
    if processes and (scheduler or cluster):
        raise InputError("--processes: not used with --scheduler or --cluster (Dask workers are processes)")
    if workers is not None and workers < 1:
        raise InputError(f"--workers: expected a whole number >= 1, got {workers}")
    if scheduler:
        if workers is not None:
            raise InputError("--workers: not used with --scheduler (the cluster has its own workers)")
        return DaskExecutor(scheduler=scheduler)
    if cluster is not None:
        if cluster != "local":
            raise InputError(f"--cluster {cluster}: unknown cluster; only 'local' is known")
        return DaskExecutor(local_workers=workers or 2)
    if processes:
        return ProcessPool(workers or _cores())
    return InProcess(threads=workers)


def _cores() -> int:
    """Cores this process may use."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1
