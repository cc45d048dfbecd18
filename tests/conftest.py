"""Shared fixtures: small scenarios that run in seconds."""

from __future__ import annotations

import os

import pytest
from threadpoolctl import threadpool_limits

os.environ.setdefault("MPLBACKEND", "Agg")


@pytest.fixture(autouse=True)
def _one_blas_thread():
    """Tests solve many small dense problems, where threaded BLAS only adds overhead (and oversubscribes the
    cores when pytest runs next to worker processes); the sweeps pin their tasks the same way."""
    with threadpool_limits(1):
        yield

TINY_SCENARIO = """
title = "tiny test tube (invented)"
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


@pytest.fixture
def tiny_scenario_text() -> str:
    return TINY_SCENARIO


@pytest.fixture
def tiny_scenario_file(tmp_path):
    path = tmp_path / "tiny.toml"
    path.write_text(TINY_SCENARIO)
    return path


# --- small disorder studies (invented wires) ---------------------------------------------------
_STUDY_WIRE = """
seed = 4
[wire]
cross_section = "circle"
diameter_nm = 12.0
length_nm = 40.0
[model]
lattice_spacing_nm = 2.0
"""

LENGTHS_STUDY = 'title = "QZ-1 lengths test (invented)"' + _STUDY_WIRE + """
[disorder]
anderson_width_meV = 200.0
[sweep]
flux_quanta = [0.25]
fermi_energy_meV = [60.0]
realizations = 10
[study]
kind = "lengths"
lengths_nm = [16.0, 40.0, 100.0, 240.0]
bootstrap_resamples = 40
"""

TOLERANCE_STUDY = 'title = "QZ-2 tolerance test (invented)"' + _STUDY_WIRE + """
[disorder]
puddle_correlation_nm = 3.0
[sweep]
flux_quanta = { start = 0.0, stop = 1.0, points = 9 }
fermi_energy_meV = [40.0]
realizations = 4
[study]
kind = "tolerance"
parameter = "puddle_rms_meV"
values = [30.0, 0.0]
bootstrap_resamples = 30
"""


@pytest.fixture
def lengths_text():
    return LENGTHS_STUDY


@pytest.fixture
def tolerance_text():
    return TOLERANCE_STUDY
