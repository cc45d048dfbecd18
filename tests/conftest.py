"""Shared fixtures: small scenarios that run in seconds."""

from __future__ import annotations

import os

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")

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
