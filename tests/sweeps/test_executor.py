"""Executor: a lost worker is named, workers die with their parent, Dask failures are clear messages.

Every check sends a real signal to a real process. ``solve_task`` is replaced by a slow stand-in here (the
workers are forked, so they inherit the replacement); the numbers are tested elsewhere.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest

import simsurface.sweeps.executor as executor
from simsurface.errors import ComputeLost, InputError
from simsurface.scenario import parse_scenario
from simsurface.sweeps import make_spec
from simsurface.sweeps.executor import run_tasks

ROOT = str(Path(__file__).resolve().parents[2])


def children(pid: int) -> list[int]:
    """Direct child processes of ``pid`` (Linux /proc)."""
    found = []
    for task in Path(f"/proc/{pid}/task").iterdir():
        text = (task / "children").read_text().split()
        found += [int(x) for x in text]
    return found


def alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().split()[2]
    except FileNotFoundError:
        return False
    return state != "Z"


def slow_solve(spec, task):
    time.sleep(0.2)
    return np.full((task.fluxes.stop - task.fluxes.start, spec.energies_meV.size), float(task.flux_index))


@pytest.fixture
def spec(tiny_scenario_text):
    data = tomllib.loads(tiny_scenario_text)
    data["sweep"]["flux_quanta"] = {"start": 0.0, "stop": 1.0, "points": 12}
    return make_spec(parse_scenario(data))


def test_killed_worker_is_named_with_its_signal_and_task(spec, monkeypatch):
    monkeypatch.setattr(executor, "solve_task", slow_solve)
    got = []

    def on_result(task, values):
        got.append(task)
        if len(got) == 2:
            os.kill(children(os.getpid())[0], signal.SIGKILL)

    with pytest.raises(ComputeLost, match=r"worker process \d+ was killed by SIGKILL while computing task "
                                          r"\(realization 0, flux points? [-\d]+\)"):
        run_tasks(spec, spec.tasks(), on_result, workers=2)
    assert 2 <= len(got) < len(spec.tasks())
    assert children(os.getpid()) == []  # the other worker was stopped too


def test_error_inside_a_worker_reaches_the_caller_with_its_type(spec, monkeypatch):
    def bad(spec, task):
        raise InputError("[wire] length_nm: bad for this task")

    monkeypatch.setattr(executor, "solve_task", bad)
    with pytest.raises(InputError, match="bad for this task"):
        run_tasks(spec, spec.tasks(), lambda t, v: None, workers=2)
    assert children(os.getpid()) == []


PARENT = textwrap.dedent("""
    import sys, time, tomllib
    import numpy as np
    import simsurface.sweeps.executor as executor
    from simsurface.scenario import parse_scenario
    from simsurface.sweeps import make_spec
    from tests_conftest_text import TEXT

    def slow(spec, task):
        time.sleep(0.5)
        return np.zeros(spec.energies_meV.size)

    executor.solve_task = slow
    data = tomllib.loads(TEXT)
    data["sweep"]["flux_quanta"] = {"start": 0.0, "stop": 1.0, "points": 200}
    spec = make_spec(parse_scenario(data))
    print("started", flush=True)
    executor.run_tasks(spec, spec.tasks(), lambda t, v: print("done", flush=True), workers=2)
""")


@pytest.mark.parametrize("sig", [signal.SIGKILL, signal.SIGTERM], ids=["SIGKILL", "SIGTERM"])
def test_workers_die_with_their_parent(tmp_path, tiny_scenario_text, sig):
    (tmp_path / "tests_conftest_text.py").write_text(f"TEXT = {tiny_scenario_text!r}\n")
    proc = subprocess.Popen([sys.executable, "-c", PARENT], stdout=subprocess.PIPE, text=True,
                            env=dict(os.environ, PYTHONPATH=os.pathsep.join([ROOT, str(tmp_path)])))
    assert proc.stdout.readline().strip() == "started"
    assert proc.stdout.readline().strip() == "done"  # the workers are up and working
    workers = children(proc.pid)
    assert len(workers) == 2
    os.kill(proc.pid, sig)
    proc.wait(timeout=30)
    deadline = time.monotonic() + 10
    while any(alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not any(alive(w) for w in workers), "a worker outlived its parent"


@pytest.mark.parametrize("address,expected", [
    ("foo", "not a scheduler address"),
    ("tcp://127.0.0.1:9", "cannot reach a Dask scheduler at 'tcp://127.0.0.1:9'"),
], ids=["not-an-address", "nobody-listening"])
def test_unreachable_scheduler_is_an_input_error_naming_the_address(address, expected):
    pytest.importorskip("distributed")
    with pytest.raises(InputError, match=expected):
        executor.connect(address, timeout_s=2)
