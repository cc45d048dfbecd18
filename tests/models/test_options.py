"""Scenario fields of the surface terms reach the models (simsurface.models.options, registry).

Outside references: the clean channel count of the analytic tube (Zhang & Vishwanath, PRL 105, 206601 (2010))
at the flux shifted by the derived Zeeman term (docs/fields.md), μ_B and h/e from scipy.constants.
"""

import tomllib

import numpy as np
import pytest
from scipy import constants

from simsurface.errors import InputError
from simsurface.models.field import AppliedField
from simsurface.models.modes import ModeTube
from simsurface.models.registry import analytic_model, build_model
from simsurface.models.tube import SurfaceTube
from simsurface.scenario import parse_scenario
from simsurface.sweeps import run_scenario

SCENARIO = """
title = "QX-41 Zeeman tube (invented)"
seed = 3
[material]
surface_g_factor = 30.0
[wire]
cross_section = "circle"
diameter_nm = 40.0
length_nm = 100.0
[model]
kind = "surface_modes"
[sweep]
field_T = [0.5, 2.0, 3.5]
fermi_energy_meV = [7.0, 20.0]
"""


def scenario(**tables):
    data = tomllib.loads(SCENARIO)
    for table, fields in tables.items():
        data.setdefault(table, {}).update(fields)
    return parse_scenario(data)


def test_scenario_g_factor_and_field_direction_reach_the_models():
    scn = scenario(field={"angle_deg": 20.0, "azimuth_deg": 90.0})
    model = build_model(scn)
    assert isinstance(model, ModeTube)
    assert model.field == AppliedField(20.0, 90.0, 30.0) and model.section == scn.wire.section()
    lattice = build_model(scenario(model={"kind": "surface_lattice"}))
    assert isinstance(lattice, SurfaceTube) and lattice.field.g_factor == 30.0
    assert analytic_model(scn) is None          # no closed form for a tilted field


def test_sweep_with_zeeman_matches_the_shifted_analytic_count(tmp_path):
    scn = scenario()
    ds = run_scenario(scn, tmp_path, workers=1, progress=False)
    area, perimeter = scn.wire.section().area_nm2, scn.wire.section().perimeter_nm
    hbar_v = scn.material.material().hbar_v_meV_nm
    mu_b = constants.physical_constants["Bohr magneton in eV/T"][0] * 1e3
    kappa = 30.0 * mu_b * (constants.h / constants.e * 1e18 / area) * perimeter / (4 * np.pi * hbar_v)
    from simsurface.models import analytic

    expected = analytic.dirac_channel_count(ds.energy.values, ds.flux.values * (1 - kappa), perimeter, hbar_v)
    np.testing.assert_allclose(ds.clean_channels.values, expected)
    np.testing.assert_allclose(ds.conductance.values[0], expected, atol=0.08)   # axial discretization


def test_trivial_scenario_with_rashba_builds_a_spinful_lattice_tube():
    scn = scenario(material={"preset": "InAs", "surface_g_factor": -10.0, "rashba_meV_nm": 20.0},
                   wire={"surface": "trivial"}, model={"kind": "surface_lattice"})
    tube = build_model(scn)
    assert tube.spinful and tube.rashba_meV_nm == 20.0 and tube.orbitals == 2


@pytest.mark.parametrize("tables,field", [
    ({"model": {"kind": "bulk_lattice"}, "field": {"angle_deg": 5.0}}, "angle_deg"),
    ({"field": {"angle_deg": 10.0}, "model": {"kind": "surface_analytic"}}, "angle_deg"),
    ({"field": {"angle_deg": 100.0}}, "angle_deg"),
    ({"material": {"rashba_meV_nm": 10.0}}, "rashba_meV_nm"),
    ({"wire": {"circumferential_potential_meV": [1.0] * 8}}, "circumferential_potential_meV"),
    ({"wire": {"circumferential_potential_meV": [1.0, -1.0]}}, "circumferential_potential_meV"),
])
def test_bad_surface_term_fields_are_named(tables, field):
    data = tomllib.loads(SCENARIO)
    for table, fields in tables.items():
        data.setdefault(table, {}).update(fields)
    if "bulk_lattice" in str(tables):
        data.pop("material")          # the 3D model takes no [material] table
    with pytest.raises(InputError, match=field):
        parse_scenario(data)
