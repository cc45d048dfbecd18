"""`simsurface run` from the command line: outputs, bad input, kill -9 and --resume."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from simsurface.cli import main
from simsurface.sweeps.store import PARTS_DIR


def run_cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, MPLBACKEND="Agg", PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    return subprocess.run([sys.executable, "-m", "simsurface", *args], capture_output=True, text=True, env=env)


def test_run_writes_results_and_three_figures(tmp_path, tiny_scenario_file):
    out = tmp_path / "out"
    assert main(["run", str(tiny_scenario_file), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    names = sorted(p.name for p in out.iterdir() if not p.name.startswith("."))  # hidden: bookkeeping
    assert names == ["conductance_map.png", "conductance_vs_flux.png", "results.nc", "subbands_vs_flux.png"]
    with xr.open_dataset(out / "results.nc") as ds:
        assert ds["conductance"].shape == (1, 5, 3)


BAD_INPUTS = [
    ("missing file", None, "not found"),
    ("garbled", "title = 'x'\n[wire\n", "not valid TOML"),
    ("unknown field", "EXTRA", "[wire] colour: unknown field"),
    ("missing field", "title = 'x'\n[wire]\ncross_section='circle'\ndiameter_nm=20.0\n[sweep]\n"
                      "flux_quanta=[0.0]\nfermi_energy_meV=[1.0]\n", "[wire] length_nm: required field is missing"),
    ("out of range", "NEGATIVE", "[wire] diameter_nm: Input should be greater than 0"),
]


@pytest.mark.parametrize("label,text,expected", BAD_INPUTS, ids=[b[0] for b in BAD_INPUTS])
def test_bad_scenario_gives_one_message_exit_2_and_no_output(tmp_path, tiny_scenario_text, label, text, expected):
    path = tmp_path / "bad.toml"
    if text == "EXTRA":
        text = tiny_scenario_text.replace("[wire]", "[wire]\ncolour = 'blue'")
    elif text == "NEGATIVE":
        text = tiny_scenario_text.replace("diameter_nm = 22.0", "diameter_nm = -22.0")
    if text is not None:
        path.write_text(text)
    out = tmp_path / "out"
    proc = run_cli("run", str(path), "--out", str(out))
    assert proc.returncode == 2
    assert expected in proc.stderr
    assert "Traceback" not in proc.stderr
    assert not out.exists()


def test_lattice_outside_validity_window_warns_on_stderr(tmp_path, tiny_scenario_text):
    path = tmp_path / "s.toml"
    path.write_text(tiny_scenario_text.replace("[model]", "[model]\nlattice_spacing_nm = 8.0")
                    .replace('flux_quanta = { start = 0.0, stop = 1.0, points = 5 }', 'flux_quanta = [0.0]'))
    proc = run_cli("run", str(path), "--out", str(tmp_path / "o"), "--quiet")
    assert proc.returncode == 0, proc.stderr
    assert "validity limit" in proc.stderr


def test_killed_run_resumes_to_exactly_the_uninterrupted_result(tmp_path, tiny_scenario_text):
    path = tmp_path / "s.toml"
    path.write_text(tiny_scenario_text.replace("points = 5", "points = 40"))
    ref = run_cli("run", str(path), "--out", str(tmp_path / "ref"), "--quiet", "--workers", "1")
    assert ref.returncode == 0, ref.stderr

    out = tmp_path / "killed"
    env = dict(os.environ, MPLBACKEND="Agg", PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    proc = subprocess.Popen([sys.executable, "-m", "simsurface", "run", str(path), "--out", str(out), "--quiet",
                             "--workers", "2"], env=env, start_new_session=True,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    parts = out / PARTS_DIR
    deadline = time.time() + 120
    while time.time() < deadline and len(list(parts.glob("*.npz"))) < 3 and proc.poll() is None:
        time.sleep(0.01)
    os.killpg(proc.pid, signal.SIGKILL)
    proc.wait()
    n_parts = len(list(parts.glob("*.npz")))
    assert 3 <= n_parts < 40, "the run must be killed mid-way for this test to mean anything"
    assert not (out / "results.nc").exists()

    resumed = run_cli("run", str(path), "--out", str(out), "--quiet", "--resume")
    assert resumed.returncode == 0, resumed.stderr
    with xr.open_dataset(tmp_path / "ref" / "results.nc") as a, xr.open_dataset(out / "results.nc") as b:
        np.testing.assert_array_equal(a["conductance"].values, b["conductance"].values)
