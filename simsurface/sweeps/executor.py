"""Run the tasks of a sweep: serially, on local processes, or on a Dask cluster.

Local processes pin BLAS to one thread each (threadpoolctl), so two workers on two cores do not
oversubscribe. Results come back to the calling process, which alone writes the store: a worker that
dies or is killed cannot leave a half-written file.
"""

from __future__ import annotations

import concurrent.futures as cf
import multiprocessing
import os
import sys
from typing import Callable, Iterable

import numpy as np

from ..errors import InputError
from .spec import SweepSpec, Task, solve_task

OnResult = Callable[[Task, np.ndarray], None]


def default_workers() -> int:
    """Number of local worker processes by default: every core this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - non-Linux
        return max(1, os.cpu_count() or 1)


def _pin_blas() -> None:
    from threadpoolctl import threadpool_limits

    threadpool_limits(1)
    os.environ.update(OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1", MKL_NUM_THREADS="1")


def run_tasks(spec: SweepSpec, tasks: Iterable[Task], on_result: OnResult, *, workers: int = 1,
              cluster: str | None = None) -> None:
    """Compute ``tasks`` and hand each result to ``on_result`` as soon as it is ready.

    Parameters
    ----------
    workers : int
        Local processes; 1 runs in this process.
    cluster : str, optional
        Address of a running Dask distributed scheduler (``tcp://host:8786``); overrides ``workers``.
    """
    tasks = list(tasks)
    if not tasks:
        return
    if cluster:
        _run_dask(spec, tasks, on_result, cluster)
    elif workers <= 1 or len(tasks) == 1:
        for task in tasks:
            on_result(task, solve_task(spec, task))
    else:
        _run_processes(spec, tasks, on_result, workers)


def _run_processes(spec: SweepSpec, tasks: list[Task], on_result: OnResult, workers: int) -> None:
    ctx = multiprocessing.get_context("fork" if sys.platform.startswith("linux") else "spawn")
    pool = cf.ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_pin_blas)
    try:
        # a bounded number of tasks in flight keeps memory flat for very long sweeps
        pending: set[cf.Future] = set()
        it = iter(tasks)
        limit = 4 * workers
        for task in it:
            pending.add(_submit(pool, spec, task))
            if len(pending) >= limit:
                pending = _drain(pending, on_result, cf.FIRST_COMPLETED)
        _drain(pending, on_result, cf.ALL_COMPLETED)
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        for proc in list(getattr(pool, "_processes", {}).values()):
            proc.terminate()
        raise
    pool.shutdown(wait=True)


def _submit(pool, spec, task):
    fut = pool.submit(solve_task, spec, task)
    fut.task = task  # type: ignore[attr-defined]
    return fut


def _drain(pending: set, on_result: OnResult, mode) -> set:
    done, rest = cf.wait(pending, return_when=mode)
    for fut in done:
        on_result(fut.task, fut.result())
    return set(rest)


def _run_dask(spec: SweepSpec, tasks: list[Task], on_result: OnResult, address: str) -> None:
    try:
        from distributed import Client, as_completed
    except ImportError:  # pragma: no cover
        raise InputError("--cluster: dask.distributed is not installed") from None
    try:
        client = Client(address, timeout="10s")
    except (OSError, TimeoutError) as exc:
        raise InputError(f"--cluster: cannot reach a Dask scheduler at {address!r} ({exc})") from None
    try:
        spec_future = client.scatter(spec, broadcast=True)
        futures = {client.submit(solve_task, spec_future, t, pure=False): t for t in tasks}
        for fut in as_completed(futures):
            on_result(futures[fut], fut.result())
    finally:
        client.close()
