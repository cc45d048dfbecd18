"""``simsurface analyze`` on the demo files and on bad input (exit code, one message, nothing written)."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from simsurface.cli import main
from simsurface.units import period_he_T

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo" / "measured"
# generator geometry of the demo samples (simsurface.measured.synthetic.QX23 / KX7)
QX23_AREA = (150 - 8) * (40 - 8)
KX7_AREA = np.pi * (55 - 4) ** 2


def run(args, capsys):
    rc = main(["analyze", *map(str, args), "--bootstrap", "30"])
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_temperature_series_with_overlay_writes_json_csv_and_plots(tmp_path, capsys):
    out = tmp_path / "out"
    rc, stdout, _ = run(["--manifest", DEMO / "QX-23_series.toml", "--out", out, "--theory", DEMO / "QX-23_theory.csv",
                         "--overlay-detrend", "--overlay-area", "fit"], capsys)
    assert rc == 0
    doc = json.loads((out / "analysis.json").read_text())
    # demo generator: area (150 - 2*4)(40 - 2*4) nm^2, L_phi ∝ T^-1/2
    assert doc["period_T"] == pytest.approx(float(period_he_T(QX23_AREA)), rel=0.01)
    assert doc["area_nm2"] == pytest.approx(QX23_AREA, rel=0.01)
    assert doc["depth_nm"] == pytest.approx(4.0, abs=0.3)
    assert doc["synthetic_input"] is True and doc["n_curves"] == 5
    fit = doc["temperature_series"]["fit"]
    assert abs(fit["exponent"] - 0.5) < 0.15
    assert doc["overlay"]["area_nm2"] == pytest.approx(QX23_AREA, rel=0.01)
    for name in doc["outputs"]:
        assert (out / name).is_file()
    pngs = list(out.glob("*.png"))
    assert len(pngs) == 3 * 5 + 2 and all(p.read_bytes()[:4] == b"\x89PNG" for p in pngs)
    header = [l for l in (out / "overlay.csv").read_text().splitlines() if not l.startswith("#")][0]
    assert header == "field_T,flux_quanta,measured_conductance_e2h,theory_conductance_e2h,residual_conductance_e2h"
    assert not list(out.glob(".*tmp"))
    assert "L_phi" in stdout


def test_up_down_sweep_over_both_signs_with_voltage_and_current_columns(tmp_path, capsys):
    rc, _, _ = run([DEMO / "KX-7_updown.txt", "--out", tmp_path, "--shape", "circle", "--width-nm", "110"], capsys)
    assert rc == 0
    doc = json.loads((tmp_path / "analysis.json").read_text())
    c = doc["curves"][0]
    assert c["symmetrization"].startswith("field-even") and c["dropped_rows"] == 6 and c["n_sweeps"] == 2
    assert doc["period_T"] == pytest.approx(float(period_he_T(KX7_AREA)), rel=0.01)
    assert doc["h2e_to_he_ratio"] is not None


def test_reciprocal_four_terminal_pair(tmp_path, capsys):
    rc, _, _ = run([DEMO / "KX-7_4t_14-23.tsv", "--reciprocal", DEMO / "KX-7_4t_23-14.tsv", "--quantity", "resistance",
                    "--out", tmp_path], capsys)
    assert rc == 0
    doc = json.loads((tmp_path / "analysis.json").read_text())
    assert doc["curves"][0]["symmetrization"].startswith("reciprocal")
    assert doc["curves"][0]["unit"] == "ohm"
    assert doc["period_T"] == pytest.approx(float(period_he_T(KX7_AREA)), rel=0.01)


def sine_file(path, field_T, period=0.6):
    rows = "\n".join(f"{b:.6g},{1000 + 20 * np.cos(2 * np.pi * b / period):.6g}" for b in field_T)
    path.write_text("B (T),R (Ohm)\n" + rows + "\n")
    return path


BAD = {
    "empty": lambda p: p.write_text(""),
    "garbled": lambda p: p.write_bytes(bytes(range(256)) * 4),
    "one_column": lambda p: p.write_text("B (T)\n" + "\n".join(str(x) for x in range(50))),
    "text_in_numbers": lambda p: p.write_text("B (T),R (Ohm)\n0,1\n0.1,2\n0.2,three\n"),
    "few_points_per_period": lambda p: sine_file(p, np.linspace(0, 6, 30)),
    "short_range": lambda p: sine_file(p, np.linspace(0, 1.0, 200)),
}
MESSAGES = {"empty": "no data rows", "garbled": "not a text table", "one_column": "only one column",
            "text_in_numbers": "'three' is not a number", "few_points_per_period": "points per expected h/e period",
            "short_range": "shorter than two expected h/e periods"}


@pytest.mark.parametrize("kind", list(BAD))
def test_bad_input_gives_one_message_exit_2_and_writes_nothing(tmp_path, capsys, kind):
    data = tmp_path / "data.csv"
    BAD[kind](data)
    out = tmp_path / "out"
    rc, stdout, stderr = run([data, "--out", out, "--expected-period-T", "0.6"], capsys)
    assert rc == 2
    lines = stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("simsurface: error:") and MESSAGES[kind] in lines[0]
    assert not out.exists() or not any(out.iterdir())


def test_a_bad_file_in_a_series_leaves_no_output_from_the_good_ones(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    BAD["text_in_numbers"](bad)
    out = tmp_path / "out"
    rc, _, stderr = run([DEMO / "QX-23_1p6K.csv", bad, "--out", out], capsys)
    assert rc == 2 and "not a number" in stderr
    assert not out.exists()


def test_one_temperature_per_file_is_required(tmp_path, capsys):
    rc, _, stderr = run([DEMO / "QX-23_1p6K.csv", DEMO / "QX-23_3K.csv", "--temperature-K", "1.6", "--out", tmp_path],
                        capsys)
    assert rc == 2 and "--temperature-K" in stderr


def test_temperatures_on_the_command_line_override_the_headers(tmp_path, capsys):
    files = [DEMO / f"QX-23_{t}K.csv" for t in ("1p6", "6", "20")]
    rc, _, _ = run([*files, "--temperature-K", "2,7,21", "--out", tmp_path], capsys)
    assert rc == 0
    doc = json.loads((tmp_path / "analysis.json").read_text())
    assert doc["temperature_series"]["temperatures_K"] == [2.0, 7.0, 21.0]
    assert doc["temperature_series"]["fit"] is not None


def test_command_line_process_exits_nonzero_without_traceback(tmp_path):
    data = tmp_path / "empty.csv"
    data.write_text("# nothing\n")
    p = subprocess.run([sys.executable, "-m", "simsurface", "analyze", str(data), "--out", str(tmp_path / "o")],
                       capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 2
    assert "Traceback" not in p.stderr and "no data rows" in p.stderr


def test_overlay_reads_the_results_nc_written_by_simsurface_run(tmp_path, capsys, tiny_scenario_file):
    # the layout of results.nc as `simsurface run` writes it: conductance (realization, flux, energy)
    assert main(["run", str(tiny_scenario_file), "--out", str(tmp_path / "sim"), "--quiet", "--workers", "1"]) == 0
    capsys.readouterr()
    out = tmp_path / "out"
    rc, _, stderr = run([DEMO / "KX-7_updown.txt", "--out", out, "--theory", tmp_path / "sim" / "results.nc",
                         "--theory-energy-meV", "20", "--periodic-theory", "--overlay-detrend"], capsys)
    assert rc == 0, stderr
    doc = json.loads((out / "analysis.json").read_text())
    assert doc["overlay"]["theory_energy_meV"] == 20.0 and doc["overlay"]["quantity"] == "G"
    assert (out / "overlay.csv").is_file()
    rc, _, stderr = run([DEMO / "KX-7_updown.txt", "--out", tmp_path / "o2", "--theory", tmp_path / "sim" / "results.nc"],
                        capsys)
    assert rc == 2 and "--theory-energy-meV" in stderr and not (tmp_path / "o2").exists()
