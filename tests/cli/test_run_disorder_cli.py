"""`simsurface run` with [disorder] and [study]: outputs, figures, bad input."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import xarray as xr

from simsurface.cli import main


def run_cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, MPLBACKEND="Agg", PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    return subprocess.run([sys.executable, "-m", "simsurface", *args], capture_output=True, text=True, env=env)


def test_ensemble_sweep_adds_the_ensemble_figure(tmp_path, tiny_scenario_text):
    path = tmp_path / "ens.toml"
    path.write_text(tiny_scenario_text.replace("[sweep]", "[disorder]\nanderson_width_meV = 50.0\n\n[sweep]\n"
                                               "realizations = 3"))
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    assert (out / "conductance_ensemble.png").stat().st_size > 10_000
    with xr.open_dataset(out / "results.nc") as ds:
        assert ds["conductance"].sizes["realization"] == 3 and "conductance_percentile" in ds


def test_study_scenario_writes_study_files_and_a_print_figure(tmp_path, tolerance_text):
    path = tmp_path / "tol.toml"
    path.write_text(tolerance_text)
    out = tmp_path / "out"
    proc = run_cli("run", str(path), "--out", str(out), "--workers", "1")
    assert proc.returncode == 0, proc.stderr
    assert "tolerance study" in proc.stdout
    for name in ("study.nc", "study.json", "study_tolerance.png", "study_tolerance.pdf"):
        assert (out / name).is_file(), name
    assert json.loads((out / "study.json").read_text())["parameter"] == "puddle_rms_meV"


def test_bad_disorder_input_exits_2_with_one_line_and_no_output(tmp_path, tiny_scenario_text):
    path = tmp_path / "bad.toml"
    path.write_text(tiny_scenario_text + "\n[disorder]\nanderson_width_meV = -3.0\n")
    out = tmp_path / "out"
    proc = run_cli("run", str(path), "--out", str(out))
    assert proc.returncode == 2
    assert "[disorder] anderson_width_meV: Input should be greater than or equal to 0" in proc.stderr
    assert "Traceback" not in proc.stderr and not out.exists()


def test_short_correlation_length_warns_on_the_command_line(tmp_path, tiny_scenario_text):
    path = tmp_path / "warn.toml"
    path.write_text(tiny_scenario_text.replace("[sweep]", "[disorder]\npuddle_rms_meV = 5.0\n"
                                               "puddle_correlation_nm = 0.2\n\n[sweep]"))
    proc = run_cli("run", str(path), "--out", str(tmp_path / "out"), "--quiet", "--workers", "1")
    assert proc.returncode == 0
    assert "simsurface: warning: [disorder] puddle_correlation_nm: correlation length 0.2 nm is below" in proc.stderr
