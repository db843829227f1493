"""Where the tasks of a streamed run execute: this process, local worker processes, or a Dask cluster.

:func:`task_mapper` gives a callable ``mapper(tasks) -> iterator of TaskResult`` in input
order. At most a few tasks per worker are in flight at a time (so results waiting to be
collected stay few, whatever the number of models); each task carries a path and a byte
range, and the run's :class:`~shiftcheck.stream.Context` (shift list, predictor parameters) is
sent once per worker: to local processes through the pool's initializer, to a Dask cluster by
``Client.scatter(..., broadcast=True)``.

* ``jobs=1``: in this process, one task after the other.
* ``jobs=N``: ``concurrent.futures.ProcessPoolExecutor`` with N processes.
* ``scheduler=ADDRESS``: ``dask.distributed.Client(ADDRESS)`` (``pip install 'shiftcheck[cluster]'``);
  ``jobs`` is then ignored, the cluster's workers decide.

The results do not depend on the engine (the worker is pure and the scoring fixed-blocked).
"""
from __future__ import annotations

import contextlib
import os
from collections import deque

from .errors import InputError

__all__ = ["task_mapper", "default_jobs"]

_CTX = None
_WORKER = None


def default_jobs() -> int:
    """All cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def _init(worker, ctx) -> None:
    global _CTX, _WORKER
    _CTX, _WORKER = ctx, worker


def _run(task):
    return _WORKER(task, _CTX)


def _ordered(submit, tasks, window: int):
    """Yield results of ``submit(task)`` futures in task order with at most ``window`` pending."""
    pending: deque = deque()
    it = iter(tasks)
    for t in it:
        pending.append(submit(t))
        if len(pending) >= window:
            break
    while pending:
        fut = pending.popleft()
        for t in it:
            pending.append(submit(t))
            break
        yield fut.result()


@contextlib.contextmanager
def task_mapper(run_task, ctx, jobs: int | None = 1, scheduler: str | None = None):
    """A ``mapper(tasks)`` running ``run_task(task, ctx)`` (a module-level, picklable function such
    as :func:`shiftcheck.stream.run_task`) on the chosen engine."""
    if scheduler:
        try:
            from distributed import Client
        except ImportError:
            raise InputError("--scheduler needs dask.distributed: pip install 'shiftcheck[cluster]'") from None
        try:
            client = Client(scheduler, set_as_default=False, timeout=30)
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(f"--scheduler {scheduler}: cannot connect ({exc})") from None
        try:
            shared = client.scatter(ctx, broadcast=True)
            n = max(1, sum(client.nthreads().values()))
            yield lambda tasks: _ordered(lambda t: client.submit(run_task, t, shared, pure=False),
                                         tasks, 2 * n + 2)
        finally:
            client.close()
        return
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}")
    if jobs == 1:
        yield lambda tasks: (run_task(t, ctx) for t in tasks)
        return
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(max_workers=jobs, initializer=_init, initargs=(run_task, ctx)) as pool:
        yield lambda tasks: _ordered(lambda t: pool.submit(_run, t), tasks, 2 * jobs + 2)
