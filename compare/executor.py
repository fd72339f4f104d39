"""Where the chunks of a sweep run: in this process, in a pool of worker processes (``--workers N``) or on a Dask
cluster (``--scheduler ADDRESS``).

One hook serves all three: :func:`imap` submits tasks through an executor's ``submit(fn, task)`` and yields the
results in task order, with at most ``in_flight`` tasks submitted and not yet consumed, so memory stays bounded
whatever the number of chunks. A task is plain data (the scenario, the chunk's position, the technologies it needs),
so a worker needs nothing but this package installed: it registers the built-in technologies when it starts and
any other technology a task names (its functions travel by reference, as module and name).

Worker processes are started with the ``spawn`` method (a fresh interpreter; no state copied from the parent), so
the same code runs on Linux, macOS and Windows, and a worker sees what a Dask worker on another machine would see.
"""

from __future__ import annotations

from collections import deque
from typing import Callable, Iterable, Iterator


class _Done:
    """A finished call, shaped like a future."""

    __slots__ = ("value",)

    def __init__(self, value):
        self.value = value

    def result(self):
        return self.value

    def cancel(self):
        return False


class Serial:
    """Chunks one after another in this process."""

    workers = 1
    name = "serial"

    def submit(self, fn, task):
        return _Done(fn(task))

    def close(self):
        pass


def start_worker() -> None:
    """Prepare a fresh worker process: register the built-in technologies (a spawned interpreter starts with an
    empty registry)."""
    from .tech import load_builtin
    load_builtin()


class Pool:
    """A pool of ``workers`` spawned worker processes (``concurrent.futures.ProcessPoolExecutor``)."""

    name = "processes"

    def __init__(self, workers: int):
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor

        self.workers = workers
        self._pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("spawn"),
                                         initializer=start_worker)

    def submit(self, fn, task):
        return self._pool.submit(fn, task)

    def close(self):
        self._pool.shutdown(wait=True, cancel_futures=True)


class Dask:
    """A Dask distributed scheduler at ``address`` (``tcp://host:8786``); needs the optional extra ``dask``."""

    name = "dask"

    def __init__(self, address: str):
        from .errors import InputError
        try:
            from distributed import Client
        except ImportError:
            raise InputError("--scheduler: expected the optional extra 'dask' (pip install 'desal-compare[dask]'), "
                             "got no distributed package installed") from None
        try:
            self._client = Client(address, timeout="10s", set_as_default=False)
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(f"--scheduler: expected the address of a running Dask scheduler, got \"{address}\" "
                             f"({type(exc).__name__})") from None
        self.workers = max(1, sum(self._client.nthreads().values()))
        self._client.run(start_worker)

    def submit(self, fn, task):
        return self._client.submit(fn, task, pure=False)

    def close(self):
        self._client.close()


def make(workers: int | None = None, scheduler: str | None = None):
    """The executor for ``--workers N`` / ``--scheduler ADDRESS`` (neither: :class:`Serial`)."""
    if scheduler:
        return Dask(scheduler)
    if workers and workers > 1:
        return Pool(workers)
    return Serial()


def imap(executor, fn: Callable, tasks: Iterable, in_flight: int | None = None) -> Iterator:
    """``fn(task)`` for every task through ``executor``, yielding the results in task order; at most ``in_flight``
    (default twice the executor's workers) are submitted and not yet yielded. Pending tasks are cancelled when the
    caller stops early or a task fails."""
    limit = max(1, in_flight or 2 * getattr(executor, "workers", 1))
    pending: deque = deque()
    try:
        for task in tasks:
            pending.append(executor.submit(fn, task))
            if len(pending) >= limit:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()
    finally:
        for f in pending:
            f.cancel()


__all__ = ["Serial", "Pool", "Dask", "make", "imap", "start_worker"]
