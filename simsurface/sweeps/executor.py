"""Run the tasks of a sweep: serially, on local worker processes, or on a Dask cluster.

Results come back to the calling process, which alone writes the store: a worker that dies or is killed
cannot leave a half-written file.

Local workers are processes of our own (one pipe each, not a general-purpose pool), so the parent always
knows which task each worker holds:

* a worker that dies (killed, out of memory) is named with its pid, the signal or exit code and its task
  (:class:`~simsurface.errors.ComputeLost`), instead of a generic broken-pool error;
* workers die with their parent, however the parent ends: on Linux the kernel sends them SIGKILL when the
  parent goes (``prctl(PR_SET_PDEATHSIG)``); elsewhere a watcher thread ends a worker whose parent is gone;
  on any exception, Ctrl-C or SIGTERM in the parent they are terminated before the error propagates;
* workers ignore Ctrl-C (the terminal sends it to the whole process group); the parent decides;
* BLAS is pinned to one thread per worker (threadpoolctl), so two workers on two cores do not
  oversubscribe and results are bit-identical for any worker count.

On Dask, the futures of an interrupted run are cancelled before the client closes; a scheduler that
cannot be reached or goes away mid-run raises :class:`~simsurface.errors.InputError` or
:class:`~simsurface.errors.ComputeLost` with the address.
"""

from __future__ import annotations

import contextlib
import ctypes
import logging
import multiprocessing
import multiprocessing.connection as mpc
import os
import signal
import sys
import threading
import time
from collections import deque
from typing import Callable, Iterable

import numpy as np

from ..errors import ComputeLost, InputError
from .spec import SweepSpec, Task, solve_task

__all__ = ["OnResult", "connect", "default_workers", "describe_task", "run_tasks"]

OnResult = Callable[[Task, np.ndarray], None]

#: seconds a terminated worker gets before SIGKILL
_GRACE_S = 2.0


def default_workers() -> int:
    """Number of local worker processes by default: every core this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - non-Linux
        return max(1, os.cpu_count() or 1)


def run_tasks(spec: SweepSpec, tasks: Iterable[Task], on_result: OnResult, *, workers: int = 1,
              cluster: str | None = None) -> None:
    """Compute ``tasks`` and hand each result to ``on_result`` as soon as it is ready.

    Parameters
    ----------
    spec : SweepSpec
    tasks : iterable of Task
    on_result : callable (task, conductance_e2h of shape (n_energy,))
        Called in this process, in completion order.
    workers : int
        Local processes; 1 runs in this process.
    cluster : str, optional
        Address of a running Dask distributed scheduler (``tcp://host:8786``); overrides ``workers``.

    Raises
    ------
    ComputeLost
        A worker process died, or the Dask scheduler went away.
    InputError
        The Dask scheduler cannot be reached.
    """
    tasks = list(tasks)
    if cluster:
        _run_dask(spec, tasks, on_result, cluster)
    elif not tasks:
        return
    elif workers <= 1 or len(tasks) == 1:
        for task in tasks:
            on_result(task, solve_task(spec, task))
    else:
        _run_processes(spec, tasks, on_result, min(workers, len(tasks)))


def describe_task(task: Task) -> str:
    """``"realization 0, flux points 8-11"``: a task as the user's axes name it."""
    first, stop = task.fluxes.start, task.fluxes.stop
    points = f"flux point {first}" if stop - first == 1 else f"flux points {first}-{stop - 1}"
    return f"realization {task.realization}, {points}"


# --- local processes ------------------------------------------------------------------------------------
class _Worker:
    def __init__(self, ctx, spec: SweepSpec, number: int):
        self.conn, child = ctx.Pipe()
        self.process = ctx.Process(target=_worker_main, args=(child, spec, os.getpid()),
                                   name=f"simsurface-worker-{number}", daemon=True)
        self.process.start()
        child.close()
        self.task: Task | None = None

    def give(self, task: Task | None) -> None:
        self.task = task
        self.conn.send(task)

    def death(self) -> str:
        self.process.join(timeout=1.0)
        code = self.process.exitcode
        if code is not None and code < 0:
            try:
                how = f"was killed by {signal.Signals(-code).name}"
            except ValueError:
                how = f"was killed by signal {-code}"
        else:
            how = f"ended with exit code {code}"
        held = f" while computing task ({describe_task(self.task)})" if self.task is not None else ""
        return f"worker process {self.process.pid} {how}{held}"


def _run_processes(spec: SweepSpec, tasks: list[Task], on_result: OnResult, workers: int) -> None:
    ctx = multiprocessing.get_context("fork" if sys.platform.startswith("linux") else "spawn")
    pool: list[_Worker] = []
    try:
        pool = [_Worker(ctx, spec, i + 1) for i in range(workers)]
        queue = deque(tasks)
        for worker in pool:
            worker.give(queue.popleft())
        busy = {worker.conn: worker for worker in pool}
        sentinels = {worker.process.sentinel: worker for worker in pool}
        while busy:
            ready = mpc.wait(list(busy) + [w.process.sentinel for w in busy.values()])
            for obj in ready:
                worker = busy.get(obj) or sentinels.get(obj)
                if worker is None or worker.conn not in busy:
                    continue
                try:
                    status, payload = worker.conn.recv() if worker.conn.poll() else (None, None)
                except (EOFError, OSError):
                    status, payload = None, None
                if status is None:
                    if worker.process.is_alive() and obj is worker.conn:
                        continue
                    raise ComputeLost(worker.death())
                if status == "error":
                    raise payload
                task = worker.task
                on_result(task, payload)
                if queue:
                    worker.give(queue.popleft())
                else:
                    worker.give(None)
                    del busy[worker.conn]
    finally:
        _stop(pool)


def _stop(pool: list["_Worker"]) -> None:
    """End every worker: SIGTERM, then SIGKILL after a grace period; reap them all."""
    for worker in pool:
        if worker.process.is_alive():
            with contextlib.suppress(OSError):
                worker.process.terminate()
    deadline = time.monotonic() + _GRACE_S
    for worker in pool:
        worker.process.join(timeout=max(0.0, deadline - time.monotonic()))
        if worker.process.is_alive():
            worker.process.kill()
            worker.process.join(timeout=_GRACE_S)
        worker.conn.close()


def _worker_main(conn, spec: SweepSpec, parent_pid: int) -> None:
    """Loop of a worker process: receive a task, send ("ok", values) or ("error", exception)."""
    _die_with_parent(parent_pid)
    signal.signal(signal.SIGINT, signal.SIG_IGN)    # Ctrl-C reaches the whole process group; the parent decides
    signal.signal(signal.SIGTERM, signal.SIG_DFL)   # undo the parent's handler inherited through fork
    signal.signal(signal.SIGHUP, signal.SIG_DFL)
    _pin_blas()
    while True:
        try:
            task = conn.recv()
        except (EOFError, OSError):
            return
        if task is None:
            return
        try:
            message = ("ok", solve_task(spec, task))
        except Exception as exc:  # sent to the parent, which raises it
            message = ("error", exc)
        try:
            conn.send(message)
        except Exception:  # an exception that cannot be pickled travels as text
            conn.send(("error", RuntimeError(f"{type(message[1]).__name__}: {message[1]}")))


def _die_with_parent(parent_pid: int) -> None:
    """Make sure this worker does not outlive the process that started it."""
    if sys.platform.startswith("linux"):
        with contextlib.suppress(OSError, AttributeError):
            libc = ctypes.CDLL(None, use_errno=True)
            pr_set_pdeathsig = 1
            libc.prctl(pr_set_pdeathsig, signal.SIGKILL, 0, 0, 0)
    if os.getppid() != parent_pid:  # the parent died before the request above was in place
        os._exit(1)

    def watch() -> None:  # also on Linux: PDEATHSIG follows the thread that forked, not the process
        while os.getppid() == parent_pid:
            time.sleep(1.0)
        os._exit(1)

    threading.Thread(target=watch, daemon=True, name="parent-watch").start()


def _pin_blas() -> None:
    from threadpoolctl import threadpool_limits

    threadpool_limits(1)
    os.environ.update(OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1", MKL_NUM_THREADS="1")


# --- Dask -------------------------------------------------------------------------------------------
def connect(address: str, timeout_s: float = 10.0):
    """A Dask client of the scheduler at ``address``; InputError naming the address if it cannot be reached."""
    try:
        from distributed import Client
    except ImportError:  # pragma: no cover
        raise InputError("cluster: dask.distributed is not installed") from None
    if "://" not in address and ":" not in address:
        raise InputError(f"cluster: {address!r} is not a scheduler address; give host:port or tcp://host:port")
    try:
        return Client(address, timeout=f"{timeout_s}s")
    except Exception as exc:  # OSError, TimeoutError, ValueError (bad address) ...
        raise InputError(f"cluster: cannot reach a Dask scheduler at {address!r} "
                         f"({type(exc).__name__}: {str(exc).splitlines()[0] if str(exc) else 'no answer'})") from None


def _run_dask(spec: SweepSpec, tasks: list[Task], on_result: OnResult, address: str) -> None:
    from distributed import as_completed
    from distributed.scheduler import KilledWorker

    client = connect(address)
    # a lost scheduler is reported once, by us: not by distributed's loggers with their tracebacks
    quiet = [logging.getLogger(name) for name in list(logging.root.manager.loggerDict) if name.startswith("distributed")]
    disabled = [log.disabled for log in quiet]
    for log in quiet:
        log.disabled = True
    futures = {}
    try:
        if not tasks:
            return
        try:
            spec_future = client.scatter(spec, broadcast=True)
            futures = {client.submit(solve_task, spec_future, t, pure=False): t for t in tasks}
            for fut in as_completed(futures):
                if fut.status == "error":
                    exc = fut.exception()
                    if isinstance(exc, KilledWorker):  # the task took down the workers it ran on, repeatedly
                        raise ComputeLost(f"the Dask cluster at {address!r} lost the workers that ran task "
                                          f"({describe_task(futures[fut])}): {exc}") from None
                    raise exc
                try:
                    values = fut.result()
                except Exception as exc:
                    reason = (str(exc).splitlines() or [""])[0]
                    raise ComputeLost(f"the Dask cluster at {address!r} lost task ({describe_task(futures[fut])}): "
                                      f"{type(exc).__name__}: {reason}") from None
                on_result(futures[fut], values)
        except (OSError, TimeoutError) as exc:
            raise ComputeLost(f"the Dask scheduler at {address!r} went away ({type(exc).__name__}: {exc})") from None
    except BaseException:
        with contextlib.suppress(Exception):
            client.cancel(list(futures), force=True)
        raise
    finally:
        with contextlib.suppress(Exception):
            client.close(timeout=5)
        for log, was in zip(quiet, disabled):
            log.disabled = was
