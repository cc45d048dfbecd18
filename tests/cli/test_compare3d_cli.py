"""`simsurface compare3d` and `simsurface run` with the 3D model: outputs, physics of the comparison, bad input."""

from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from simsurface.cli import main

# invented isotropic test material: every facet equivalent, decay length 0.5 nm, 8 x 8 sites
BULK_SCENARIO = """
title = "QX-90 isotropic test wire (invented)"
[wire]
cross_section = "rectangle"
width_nm = 4.0
thickness_nm = 4.0
length_nm = 1.0
[model]
kind = "bulk_lattice"
bulk_preset = "custom"
engine = "kwant"
lattice_spacing_nm = 0.5
C_meV = 0.0
D1_meV_nm2 = 0.0
D2_meV_nm2 = 0.0
M0_meV = 300.0
B1_meV_nm2 = 75.0
B2_meV_nm2 = 75.0
A1_meV_nm = 300.0
A2_meV_nm = 300.0
[sweep]
flux_quanta = [0.0, 0.25, 0.5]
fermi_energy_meV = [-74.0, 18.0, 74.0]
"""


@pytest.fixture
def bulk_file(tmp_path):
    path = tmp_path / "bulk.toml"
    path.write_text(BULK_SCENARIO)
    return path


def test_compare3d_writes_dataset_summary_and_figure(tmp_path, bulk_file):
    out = tmp_path / "cmp"
    assert main(["compare3d", str(bulk_file), "--out", str(out), "--quiet"]) == 0
    assert sorted(p.name for p in out.iterdir() if not p.name.startswith(".")) == ["comparison.json", "comparison.nc", "comparison.png"]
    summary = json.loads((out / "comparison.json").read_text())["summary"]
    # the AB depth of the 3D wire is the slab depth within the lattice resolution a/2 (tests/models/test_bulk.py)
    assert abs(summary["ab_depth_nm"] - summary["slab_depth_z_nm"]) < 0.25
    with xr.open_dataset(out / "comparison.nc") as ds:
        # energies midway between the tube's thresholds at Φ = 0.25 h/e: both models count the same channels
        # (clean conductance = open Dirac subbands; Bardarson, Brouwer & Moore, PRL 105, 156803 (2010))
        quarter = ds.sel(flux=0.25)
        np.testing.assert_allclose(quarter.conductance_bulk, quarter.channels_tube_analytic, atol=1e-6)
        np.testing.assert_allclose(quarter.conductance_tube, quarter.channels_tube_analytic, atol=1e-6)


def test_run_accepts_bulk_lattice_scenario(tmp_path, bulk_file):
    out = tmp_path / "run"
    assert main(["run", str(bulk_file), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    with xr.open_dataset(out / "results.nc") as ds:
        assert ds.attrs["model"] == "bulk_lattice"
        assert ds["conductance"].shape == (1, 3, 3)


@pytest.mark.parametrize("edit, message", [
    (("bulk_preset = \"custom\"", "bulk_preset = \"Bi2Te3_nowhere\""), "[model] bulk_preset: unknown parameter set"),
    (("A2_meV_nm = 300.0", ""), "[model] A2_meV_nm: required for bulk_preset = 'custom'"),
    (("B1_meV_nm2 = 75.0", "B1_meV_nm2 = -5.0"), "[model] B1_meV_nm2: must exceed |D1_meV_nm2|"),
    (("length_nm = 1.0", "length_nm = 1.0\ndepth_nm = 1.0"), "[wire] depth_nm: not used by kind = 'bulk_lattice'"),
    (("kind = \"bulk_lattice\"", "kind = \"surface_lattice\""), "[model] A1_meV_nm: only used with kind = 'bulk_lattice'"),
    (("lattice_spacing_nm = 0.5", "lattice_spacing_nm = 3.0"), "[model] lattice_spacing_nm"),
])
def test_bad_bulk_input_names_the_field(tmp_path, capsys, edit, message):
    path = tmp_path / "bad.toml"
    path.write_text(BULK_SCENARIO.replace(*edit))
    assert main(["compare3d", str(path), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert message in err
    assert "Traceback" not in err
    assert not (tmp_path / "o").exists()
