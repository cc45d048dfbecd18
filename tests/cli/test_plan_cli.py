"""`simsurface plan` from the command line: the files it writes and its answers to bad input."""

from __future__ import annotations

import json

import numpy as np
import pytest
from test_run_cli import run_cli  # pytest puts this folder on sys.path (no package __init__)

PLAN = """
title = "QX-0 tiny plan (invented)"
seed = 7
[wire]
cross_section = "circle"
diameter_nm = 22.0
depth_nm = 1.0
length_nm = 60.0
[plan]
fermi_energy_meV = 20.0
temperature_K = 2.0
coherence_length_nm = 30.0
anderson_width_meV = 40.0
field_range_T = [0.0, 30.0]
terminals = 2
series_resistance_ohm = 1000.0
noise_floor_ohm = 20.0
devices = 4
"""


def test_plan_writes_json_reports_figures_and_theory_curves(tmp_path):
    scenario = tmp_path / "plan.toml"
    scenario.write_text(PLAN)
    out = tmp_path / "out"
    proc = run_cli("plan", str(scenario), "--out", str(out), "--workers", "1")
    assert proc.returncode == 0, proc.stderr
    assert "ensemble" in proc.stderr                      # progress is shown
    summary = json.loads((out / "plan.json").read_text())
    for key in ("period_he_T", "period_h2e_T", "dominant_harmonic", "verdict"):
        assert key in summary
    assert summary["dominant_harmonic"] in ("h/e", "h/2e")
    assert summary["verdict"] in ("visible", "marginal", "not visible")
    assert summary["period_h2e_T"] == summary["period_he_T"] / 2
    for name in ("plan.md", "plan.html", "plan.nc", "field_dependence.png", "harmonics.png", "gate_map.png",
                 "theory_curve.csv", "theory_typical_device.csv"):
        assert (out / name).is_file(), name
    assert "data:image/png;base64," in (out / "plan.html").read_text()
    lines = (out / "theory_curve.csv").read_text().splitlines()
    header = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    assert lines[header] == "field_T,flux_quanta,conductance_e2h,resistance_ratio"
    table = np.genfromtxt(out / "theory_curve.csv", delimiter=",", skip_header=header, names=True)
    assert table["field_T"][0] == 0.0 and table["field_T"][-1] == 30.0
    assert table["resistance_ratio"][0] == pytest.approx(1.0)
    # R includes the series resistance: R(B)/R(0) = (h/e²G(B) + Rs)/(h/e²G(0) + Rs)
    rq = 25812.807459
    g = table["conductance_e2h"]
    np.testing.assert_allclose(table["resistance_ratio"], (rq / g + 1000.0) / (rq / g[0] + 1000.0), rtol=1e-6)
    assert not (out / ".plan-work").exists()
    # the measured-data overlay reads the curve and its area
    from simsurface.measured.overlay import read_theory

    theory = read_theory(out / "theory_curve.csv")
    assert theory.attrs["enclosed_area_nm2"] == pytest.approx(summary["device"]["enclosed_area_nm2"], rel=1e-6)
    np.testing.assert_allclose(theory.values, g, rtol=1e-9)


@pytest.mark.parametrize("edit,expected", [
    (("[plan]", "[plan]\ncolour = 1"), "[plan] colour: unknown field"),
    (("anderson_width_meV = 40.0", "anderson_width_meV = 40.0\nmean_free_path_nm = 50.0"), "mean_free_path_nm / anderson_width_meV"),
    (("field_range_T = [0.0, 30.0]", "field_range_T = [5.0, 1.0]"), "field_range_T"),
    (("noise_floor_ohm = 20.0", ""), "noise_floor_ohm / noise_floor_e2h"),
    (("temperature_K = 2.0", "temperature_K = -1.0"), "[plan] temperature_K"),
    (None, "[plan]: required table is missing"),
], ids=["unknown", "two-disorders", "field-range", "no-noise", "negative-T", "no-plan"])
def test_bad_plan_input_is_one_message_exit_2_no_output(tmp_path, edit, expected):
    scenario = tmp_path / "bad.toml"
    scenario.write_text(PLAN.replace(*edit) if edit else PLAN.split("[plan]")[0])
    out = tmp_path / "out"
    proc = run_cli("plan", str(scenario), "--out", str(out))
    refused = (proc.returncode, expected in proc.stderr, "Traceback" in proc.stderr, out.exists())
    assert refused == (2, True, False, False), proc.stderr
