"""Round trip: a device plan → synthetic measured data from its theory curve → the measured-data analysis.

The analysis must give back what the plan put in: the enclosed area (through the h/e period) and the ratio
of the h/2e to the h/e amplitude of the planned curve. The reference ratio is computed here from the plan's
own curve by a least-squares Fourier fit over whole flux periods (numpy), independent of the analysis code.
"""

from __future__ import annotations

import json
import tomllib

import numpy as np
import pytest
import xarray as xr

from simsurface.analysis.plan import prepare_plan, run_plan
from simsurface.measured.analysis import AnalysisOptions, analyze_curve
from simsurface.measured.overlay import read_theory
from simsurface.measured.synthetic import Background, resistance_from_theory_ohm, uneven_fields_T
from simsurface.report.plan_report import write_plan
from simsurface.scenario import parse_scenario
from simsurface.units import FLUX_QUANTUM_WB

PLAN = """
title = "QX-0 round-trip plan (invented)"
seed = 5
[wire]
cross_section = "circle"
diameter_nm = 36.0
depth_nm = 1.0
length_nm = 60.0
[plan]
fermi_energy_meV = 12.0
temperature_K = 1.0
coherence_length_nm = 60.0
anderson_width_meV = 40.0
field_range_T = [0.0, 40.0]
terminals = 4
noise_floor_ohm = 5.0
devices = 4
max_energy_points = 3
gate_map = false
"""


def fourier_amplitudes(flux: np.ndarray, g: np.ndarray, harmonics=(1, 2)) -> dict[int, float]:
    """Amplitudes of cos/sin(2πnΦ) in g(Φ) by linear least squares (g sampled on whole periods)."""
    cols = [np.ones_like(flux)]
    for n in harmonics:
        cols += [np.cos(2 * np.pi * n * flux), np.sin(2 * np.pi * n * flux)]
    coef, *_ = np.linalg.lstsq(np.column_stack(cols), g, rcond=None)
    return {n: float(np.hypot(coef[1 + 2 * i], coef[2 + 2 * i])) for i, n in enumerate(harmonics)}


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    out = tmp_path_factory.mktemp("plan")
    setup = prepare_plan(parse_scenario(tomllib.loads(PLAN), "round-trip.toml"))
    result = run_plan(setup, out / ".work", workers=1, progress=False)
    write_plan(result, None, out)
    return json.loads((out / "plan.json").read_text()), read_theory(out / "theory_typical_device.csv")


def test_plan_to_synthetic_data_to_analysis_recovers_area_and_harmonic_ratio(planned):
    summary, theory = planned
    area_nm2 = summary["device"]["enclosed_area_nm2"]
    # Aharonov & Bohm, Phys. Rev. 115, 485 (1959): ΔB = (h/e)/A, h/e from scipy.constants
    period_T = FLUX_QUANTUM_WB / (area_nm2 * 1e-18)
    assert summary["period_he_T"] == pytest.approx(period_T, rel=1e-9)

    flux = np.asarray(theory["flux_quanta"])
    one_period = flux < flux[0] + 1.0 - 1e-9
    planned_amp = fourier_amplitudes(flux[one_period], np.asarray(theory)[one_period])
    planned_ratio = planned_amp[2] / planned_amp[1]

    rng = np.random.default_rng(21)
    field_T = uneven_fields_T(0.0, 10 * period_T, 1200, rng)
    resistance = resistance_from_theory_ohm(
        theory, field_T, area_nm2=area_nm2, periodic=True, rng=rng, noise_ohm=2.0,
        background=Background(parallel_conductance_e2h=5.0, mobility_per_T=0.02, series_resistance_ohm=0.0))
    data = xr.Dataset({"field_T": ("point", field_T), "resistance_ohm": ("point", resistance),
                       "sweep": ("point", np.ones(field_T.size, np.int8))},
                      attrs={"source": "round trip", "quantity": "resistance", "metadata": {}})
    found = analyze_curve(data, AnalysisOptions(n_bootstrap=40, shape="circle", width_nm=36.0, depth_nm=1.0))

    assert found.harmonic(1).detected and found.harmonic(2).detected
    assert found.period_T == pytest.approx(period_T, rel=0.01)
    found_area = FLUX_QUANTUM_WB / found.period_T * 1e18
    assert found_area == pytest.approx(area_nm2, rel=0.01)
    # the parallel channel only adds a smooth conductance, so the ratio of the harmonics of G is kept
    assert found.harmonic(2).amplitude / found.harmonic(1).amplitude == pytest.approx(planned_ratio, rel=0.05)
