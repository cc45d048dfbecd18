"""Fault injection through the command line: nothing lost and nothing wrong.

Real processes get real signals: two runs into one folder, kill -9 at random task counts and during the
clean-up, Ctrl-C and SIGTERM, a killed worker, a killed Dask scheduler, orphaned workers; then a resume
must give results identical bit for bit to an uninterrupted run. Bad inputs (a table below) get exit 2,
one message naming the field or option, no traceback and no folder left behind.
"""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from simsurface.cli import main
from simsurface.scenario import load_scenario
from simsurface.sweeps import make_spec, run_scenario
from simsurface.sweeps.store import PART_SUFFIX, PARTS_DIR

ROOT = str(Path(__file__).resolve().parents[2])
ENV = dict(os.environ, MPLBACKEND="Agg", PYTHONPATH=ROOT)
N_FLUX = 24
FAULT_WIRE = """
title = "QF-1 fault test tube (invented)"
seed = 3

[material]
preset = "Bi2Se3"

[wire]
cross_section = "circle"
diameter_nm = 22.0
depth_nm = 1.0
length_nm = 30.0

[model]
kind = "surface_lattice"

[sweep]
flux_quanta = { start = 0.0, stop = 1.0, points = 5 }
fermi_energy_meV = [5.0, 20.0, 35.0]
"""
#: tasks of the sweep of these wires (spec.tasks(): runs of consecutive flux points)
N_TASKS = 8


def scenario_text(base: str, diameter_nm: float = 22.0) -> str:
    return (base.replace("points = 5", f"points = {N_FLUX}")
            .replace("diameter_nm = 22.0", f"diameter_nm = {diameter_nm}"))


@pytest.fixture(scope="module")
def wires(tmp_path_factory):
    """Two invented wires (22 and 30 nm) as files, with their uninterrupted results (serial, in-process)."""
    folder = tmp_path_factory.mktemp("wires")
    found = {}
    for name, d in (("thin", 22.0), ("thick", 30.0)):
        path = folder / f"{name}.toml"
        path.write_text(scenario_text(FAULT_WIRE, d))
        ds = run_scenario(load_scenario(path), folder / f"ref-{name}", workers=1, progress=False)
        found[name] = (path, ds["conductance"].values)
        assert len(make_spec(load_scenario(path)).tasks()) == N_TASKS
    return found


def start(*args: str) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "simsurface", *args], env=ENV, start_new_session=True,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def run(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "simsurface", *args], env=ENV, capture_output=True, text=True)


def parts(out: Path) -> int:
    return len(list((out / PARTS_DIR).glob(f"*{PART_SUFFIX}")))


def wait_for(condition, proc: subprocess.Popen, timeout: float = 120.0) -> None:
    deadline = time.monotonic() + timeout
    while not condition():
        assert proc.poll() is None, f"the run ended before the fault could be injected: {proc.stderr.read()}"
        assert time.monotonic() < deadline, "timed out waiting for the run"
        time.sleep(0.01)


def children(pid: int) -> list[int]:
    found = []
    for task in Path(f"/proc/{pid}/task").iterdir():
        found += [int(x) for x in (task / "children").read_text().split()]
    return found


def gone(pids: list[int], timeout: float = 10.0) -> bool:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if not any(Path(f"/proc/{p}").exists() and Path(f"/proc/{p}/stat").read_text().split()[2] != "Z"
                   for p in pids if Path(f"/proc/{p}/stat").exists()):
            return True
        time.sleep(0.05)
    return False


def assert_same(out: Path, reference: np.ndarray) -> None:
    with xr.open_dataset(out / "results.nc") as ds:
        np.testing.assert_array_equal(ds["conductance"].values, reference)
    assert not (out / PARTS_DIR).exists()
    for name in ("conductance_map.png", "conductance_vs_flux.png", "subbands_vs_flux.png"):
        assert (out / name).is_file()


def assert_resumes_to(reference: np.ndarray, path: Path, out: Path, *options: str) -> None:
    resumed = run("run", str(path), "--out", str(out), "--quiet", "--resume", *options)
    assert resumed.returncode == 0, resumed.stderr
    assert_same(out, reference)


def test_two_runs_into_one_folder_cannot_mix_their_results(tmp_path, wires):
    (thin, _), (thick, thick_ref) = wires["thin"], wires["thick"]
    long_thin = tmp_path / "long-thin.toml"  # still running when the second run comes
    long_thin.write_text(thin.read_text().replace(f"points = {N_FLUX}", "points = 2000"))
    out = tmp_path / "shared"
    first = start("run", str(long_thin), "--out", str(out), "--quiet", "--workers", "1")
    try:
        wait_for(lambda: parts(out) >= 2, first)
        second = run("run", str(thick), "--out", str(out), "--quiet", "--workers", "1")
        assert second.returncode == 2
        assert f"is in use by another run (pid {first.pid} on host" in second.stderr
    finally:
        os.killpg(first.pid, signal.SIGKILL)
        first.wait()
    resumed = run("run", str(thick), "--out", str(out), "--quiet", "--resume")
    assert resumed.returncode == 2 and "[wire] diameter_nm 22.0 -> 30.0" in resumed.stderr
    fresh = run("run", str(thick), "--out", str(out), "--quiet")
    assert fresh.returncode == 0, fresh.stderr
    assert_same(out, thick_ref)


def test_kill_9_at_random_task_counts_then_resume_gives_identical_results(tmp_path, wires):
    path, reference = wires["thin"]
    out = tmp_path / "out"
    counts = sorted(np.random.default_rng(17).choice(np.arange(1, N_TASKS - 2), size=2, replace=False))
    for count in counts:
        proc = start("run", str(path), "--out", str(out), "--quiet", "--workers", "2",
                     *(["--resume"] if count != counts[0] else []))
        wait_for(lambda: parts(out) >= count, proc)
        workers = children(proc.pid)
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait()
        assert gone(workers)
        assert not (out / "results.nc").exists()
    assert_resumes_to(reference, path, out)


def test_kill_9_during_the_clean_up_then_resume_finishes(tmp_path, wires):
    path, reference = wires["thin"]
    out = tmp_path / "out"
    proc = start("run", str(path), "--out", str(out), "--quiet", "--workers", "2")
    wait_for(lambda: (out / "results.nc").exists(), proc)
    os.killpg(proc.pid, signal.SIGKILL)  # somewhere between results.nc and the last figure
    proc.wait()
    assert_resumes_to(reference, path, out)


@pytest.mark.parametrize("sig,code", [(signal.SIGINT, 130), (signal.SIGTERM, 143)], ids=["ctrl-c", "sigterm"])
def test_signal_stops_the_run_with_its_exit_code_and_the_tasks_kept(tmp_path, wires, sig, code):
    path, reference = wires["thin"]
    out = tmp_path / "out"
    proc = start("run", str(path), "--out", str(out), "--workers", "2")
    wait_for(lambda: parts(out) >= 3, proc)
    workers = children(proc.pid)
    # Ctrl-C reaches the whole process group (the terminal sends it so); SIGTERM only the main process
    (os.killpg if sig == signal.SIGINT else os.kill)(proc.pid, sig)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == code, err
    kept = parts(out)
    assert f"interrupted{'' if sig == signal.SIGINT else ' by SIGTERM'}; {kept} of {N_TASKS} tasks kept" in err
    assert "--resume" in err and "Traceback" not in err
    assert gone(workers)
    assert_resumes_to(reference, path, out)


def test_killed_worker_is_named_and_the_run_resumes(tmp_path, wires):
    path, reference = wires["thin"]
    out = tmp_path / "out"
    proc = start("run", str(path), "--out", str(out), "--quiet", "--workers", "2")
    wait_for(lambda: parts(out) >= 2, proc)
    victim = children(proc.pid)[0]
    os.kill(victim, signal.SIGKILL)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 2
    assert f"worker process {victim} was killed by SIGKILL while computing task (realization 0" in err
    assert f"of {N_TASKS} tasks kept" in err and "Traceback" not in err
    assert_resumes_to(reference, path, out)


def test_resume_of_a_finished_run_says_so_and_does_nothing(tmp_path, wires):
    path, _ = wires["thin"]
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    stamps = {p.name: p.stat().st_mtime_ns for p in out.iterdir()}
    proc = run("run", str(path), "--out", str(out), "--resume")
    assert proc.returncode == 0 and "nothing to do" in proc.stderr
    assert {p.name: p.stat().st_mtime_ns for p in out.iterdir()} == stamps


def test_later_run_into_the_same_folder_removes_the_figures_it_does_not_make(tmp_path, wires):
    path, _ = wires["thin"]
    ensemble = tmp_path / "ensemble.toml"
    ensemble.write_text(path.read_text().replace(f"points = {N_FLUX}", "points = 3")
                        .replace("[sweep]", "[disorder]\nanderson_width_meV = 50.0\n[sweep]\nrealizations = 2"))
    out = tmp_path / "out"
    assert main(["run", str(ensemble), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    assert (out / "conductance_ensemble.png").exists()
    assert main(["run", str(path), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    assert not (out / "conductance_ensemble.png").exists()


def test_killed_dask_scheduler_is_a_clear_error_and_the_run_resumes_locally(tmp_path, wires):
    pytest.importorskip("distributed")
    path, reference = wires["thin"]
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    address = f"tcp://127.0.0.1:{port}"
    quiet = dict(env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    scheduler = subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1",
                                  "--port", str(port), "--no-dashboard"], **quiet)
    worker = subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_worker", address, "--nworkers", "1",
                               "--nthreads", "1", "--no-dashboard"], **quiet)
    out = tmp_path / "out"
    try:
        proc = start("run", str(path), "--out", str(out), "--quiet", "--cluster", address)
        wait_for(lambda: parts(out) >= 2, proc)
        os.killpg(scheduler.pid, signal.SIGKILL)
        _, err = proc.communicate(timeout=120)
    finally:
        for p in (scheduler, worker):
            if p.poll() is None:
                os.killpg(p.pid, signal.SIGKILL)
            p.wait()
    assert proc.returncode == 2, err
    assert f"the Dask cluster at '{address}' lost task" in err and "tasks kept" in err
    assert "Traceback" not in err
    assert_resumes_to(reference, path, out, "--workers", "2")


# --- bad inputs: exit 2, one message, no traceback, nothing left behind ------------------------------
def edit(old: str, new: str):
    return lambda text: text.replace(old, new)


BAD = [
    # (id, scenario edit, extra options, --out below tmp_path (None: as given), expected message)
    ("bool-length", edit("length_nm = 30.0", "length_nm = true"), [], "out",
     "[wire] length_nm: Input should be a valid number"),
    ("string-count", edit(f"points = {N_FLUX}", 'points = "5"'), [], "out", "points: Input should be a valid integer"),
    ("huge-diameter", edit("diameter_nm = 22.0", "diameter_nm = 1e9"), [], "out",
     "[wire] diameter_nm: 1e+09 makes"),
    ("huge-length", edit("length_nm = 30.0", "length_nm = 1e9"), [], "out", "[wire] length_nm: 1e+09 makes"),
    ("tiny-spacing", edit("[model]", "[model]\nlattice_spacing_nm = 1e-6"), [], "out",
     "[model] lattice_spacing_nm: 1e-06 makes"),
    ("10um-mode-tube", lambda t: t.replace('kind = "surface_lattice"', 'kind = "surface_modes"')
     .replace("diameter_nm = 22.0", "diameter_nm = 10000.0"), [], "out", "[wire] diameter_nm: 10000 makes"),
    ("million-realizations", edit("[sweep]", "[sweep]\nrealizations = 1000000"), [], "out",
     "[sweep] realizations: 1,000,000 makes 24,000,000 points"),
    ("empty-out", None, [], "", "--out: the path is empty"),
    ("out-below-a-file", None, [], "file/sub", "--out: cannot write to"),
    ("out-in-proc", None, [], "/proc/simsurface-x", "--out: cannot write to"),
    ("cluster-not-an-address", None, ["--cluster", "foo"], "out", "cluster: 'foo' is not a scheduler address"),
]


@pytest.mark.parametrize("label,change,options,out_name,expected", BAD, ids=[b[0] for b in BAD])
def test_bad_input_gives_one_message_exit_2_and_leaves_nothing(tmp_path, wires, capsys, label, change, options,
                                                                out_name, expected):
    path, _ = wires["thin"]
    scenario = tmp_path / "s.toml"
    scenario.write_text(change(path.read_text()) if change else path.read_text())
    (tmp_path / "file").write_text("not a folder")
    out = out_name if out_name in ("",) or out_name.startswith("/") else str(tmp_path / out_name)
    before = sorted(p.name for p in tmp_path.iterdir())
    code = main(["run", str(scenario), "--out", out, "--workers", "1", *options])
    err = capsys.readouterr().err
    assert code == 2
    assert expected in err and "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    if "oversize" in expected or "makes" in expected:
        assert "--allow-oversize" in err


PLAN_BAD = [
    ("mfp-below-spacing", "mean_free_path_nm = 300.0", "mean_free_path_nm = 0.01",
     "[plan] mean_free_path_nm: 0.01 nm is shorter than the lattice spacing"),
    ("mode-tube-at-600-meV", "fermi_energy_meV = 8.0 ", "fermi_energy_meV = 600.0 ", "[plan] fermi_energy_meV: 600 makes"),
]


@pytest.mark.parametrize("label,old,new,expected", PLAN_BAD, ids=[b[0] for b in PLAN_BAD])
def test_bad_plan_gives_one_message_exit_2_and_leaves_nothing(tmp_path, capsys, label, old, new, expected):
    text = (Path(ROOT) / "scenarios" / "qx11-round-wire.toml").read_text()
    text = text.replace('kind = "surface_lattice"\n', "")  # the plan's default model: the mode tube
    assert old in text
    (tmp_path / "plan.toml").write_text(text.replace(old, new))
    code = main(["plan", str(tmp_path / "plan.toml"), "--out", str(tmp_path / "out"), "--workers", "1", "--quiet"])
    err = capsys.readouterr().err
    assert code == 2 and expected in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()
