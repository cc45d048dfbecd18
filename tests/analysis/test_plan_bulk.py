"""Device plans for the 3D four-band wire: period from its own AB area, flux window, refusals, a tiny plan."""

import json
import math
import tomllib
import warnings

import numpy as np
import pytest
from scipy import constants as c

from simsurface.analysis.plan import field_curve, prepare_plan, run_plan
from simsurface.analysis.plan_bulk import flux_window, lead_channel_count
from simsurface.analysis.verdict import verdict
from simsurface.errors import InputError, ValidityWarning
from simsurface.models import analytic
from simsurface.models.bulk import BulkWire
from simsurface.models.bulk_params import bulk_parameters
from simsurface.scenario import parse_scenario
from simsurface.transport.engines import conductance

# an isotropic, particle-hole symmetric test material with a short decay length (as in tests/models/test_bulk.py):
# a 3.5 nm wire at a = 0.5 nm has 7 x 7 sites, fast enough for the default suite
ISOTROPIC = dict(C_meV=0.0, D1_meV_nm2=0.0, D2_meV_nm2=0.0, M0_meV=300.0, B1_meV_nm2=75.0, B2_meV_nm2=75.0,
                 A1_meV_nm=300.0, A2_meV_nm=300.0)

PLAN_3D = """
title = "QX-0 tiny 3D plan (invented)"
seed = 5
[wire]
cross_section = "rectangle"
width_nm = 3.5
thickness_nm = 3.5
length_nm = 1.5
[model]
kind = "bulk_lattice"
bulk_preset = "custom"
lattice_spacing_nm = 0.5
{params}
[plan]
{fermi}
temperature_K = 0.0
coherence_length_nm = 10.0
{disorder}
field_range_T = [0.0, 400.0]        # 0.89 h/e periods: simulated over one period
noise_floor_ohm = 20.0
devices = 2
flux_points = 6
gate_map = false
{extra}
"""


def bulk_plan(fermi="fermi_energy_meV = 120.0", disorder="anderson_width_meV = 300.0", extra="", tail=""):
    params = "\n".join(f"{k} = {v}" for k, v in ISOTROPIC.items())
    text = PLAN_3D.format(params=params, fermi=fermi, disorder=disorder, extra=extra) + tail
    return parse_scenario(tomllib.loads(text))


def reference_wire(length_nm=1.5):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return BulkWire.from_geometry("rectangle", 3.5, 3.5, length_nm, bulk_parameters("custom", **ISOTROPIC),
                                      spacing_nm=0.5)


def test_period_is_flux_quantum_over_the_3d_wires_own_ab_area():
    # ΔB = (h/e)/A_eff (scipy.constants; Aharonov & Bohm, Phys. Rev. 115, 485 (1959)) with A_eff from the
    # k_x = 0 level crossing at h/2e (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010))
    setup = prepare_plan(bulk_plan())
    a_eff = reference_wire().effective_area_nm2()
    assert setup.lattice["ab_area_source"] == "level crossing"
    assert setup.area_nm2 == pytest.approx(a_eff, rel=1e-9)
    assert setup.period_he_T == pytest.approx(c.h / c.e / (a_eff * 1e-18), rel=1e-9)
    # the model's chain takes the flux through its contour, which is a different area
    assert setup.model_flux_per_flux == pytest.approx(reference_wire().area_nm2 / a_eff, rel=1e-9)
    assert setup.model_flux_per_flux != pytest.approx(1.0, abs=1e-3)


def test_bulk_plan_refuses_carrier_density_and_roughness_naming_the_field():
    with pytest.raises(InputError, match=r"\[plan\] carrier_density_per_cm2: not available for \[model\] kind"):
        prepare_plan(bulk_plan(fermi="carrier_density_per_cm2 = 1.0e12"))
    with pytest.raises(InputError, match=r"\[disorder\] roughness_rms_nm"):
        prepare_plan(bulk_plan(tail="[disorder]\nroughness_rms_nm = 0.2\nroughness_correlation_nm = 2.0\n"))
    # [wire] depth_nm and a [material] table belong to the surface models (scenario validation)
    with pytest.raises(InputError, match=r"\[wire\] depth_nm"):
        parse_scenario(tomllib.loads(PLAN_3D.replace("length_nm = 1.5", "length_nm = 1.5\ndepth_nm = 1.0").format(
            params="\n".join(f"{k} = {v}" for k, v in ISOTROPIC.items()), fermi="fermi_energy_meV = 120.0",
            disorder="", extra="")))


def test_flux_window_covers_the_field_range_and_simulates_each_absolute_flux_once():
    area = 50.0                                        # nm²; period (h/e)/A = 82.7 T
    period = c.h / c.e / (area * 1e-18)
    notes = []
    window, simulated, index = flux_window([-period, 2 * period], area, 6, notes)
    assert window[0] == pytest.approx(-1.0) and window[-1] == pytest.approx(2.0)
    assert np.diff(window).max() <= 0.1 + 1e-12       # 6 points per half period: spacing 1/10
    np.testing.assert_allclose(simulated[index], np.abs(window), atol=1e-12)
    assert simulated.size < window.size and not notes  # [-1, 0] reuses [0, 1]
    short, _, _ = flux_window([0.0, 0.3 * period], area, 6, notes)
    assert short[-1] == pytest.approx(1.0) and "extended to one period" in notes[0]


def test_clean_3d_plan_gives_the_lead_channel_count_and_kwants_conductance(tmp_path):
    # a clean translation-invariant wire transmits every propagating mode of its leads; the count is checked
    # against kwant's scattering solver on the same wire and against the analytic Dirac tube count
    # (Bardarson, Brouwer & Moore 2010) where the tube description holds (inside the bulk gap)
    setup = prepare_plan(bulk_plan(disorder=""))
    result = run_plan(setup, tmp_path, workers=1, progress=False)
    g = result.devices["conductance"].values              # (device, flux) at T = 0, E_F = 120 meV
    wire = reference_wire()
    model_flux = setup.model_flux(setup.flux_full)
    assert setup.flux_full[-1] == pytest.approx(1.0) and any("extended to one period" in n for n in setup.notes)
    some = [0, 5, 10]
    counts = lead_channel_count(wire, model_flux[some], [120.0])[:, 0]
    np.testing.assert_allclose(g[:, some], np.broadcast_to(counts, (2, 3)), atol=1e-6)
    np.testing.assert_allclose(g[0], g[1], atol=1e-9)      # clean devices are all the same
    i = int(np.argmin(np.abs(model_flux - 0.25)))
    kwant_g = conductance(wire.chain(float(model_flux[i])), [120.0], engine="kwant")[0]
    assert g[0, i] == pytest.approx(kwant_g, abs=1e-6)
    tp = wire.tube_parameters()
    tube = analytic.dirac_channel_count(np.array([120.0 - tp["dirac_point_meV"]]), 0.25, tp["perimeter_nm"],
                                        tp["hbar_v_meV_nm"])[0]
    assert lead_channel_count(wire, [0.25], [120.0])[0, 0] == tube[0] == 1
    assert result.summary["device"]["ab_area_source"] == "level crossing"
    assert result.summary["validity"]["lattice_window_ok"]


def test_tiny_disordered_3d_plan_writes_plan_json_whose_verdict_follows_its_numbers(tmp_path):
    from simsurface.report.plan_report import write_plan

    setup = prepare_plan(bulk_plan())
    result = run_plan(setup, tmp_path / "work", workers=1, progress=False)
    write_plan(result, None, tmp_path / "out")
    s = json.loads((tmp_path / "out" / "plan.json").read_text())
    for key in ("period_he_T", "period_h2e_T", "dominant_harmonic", "verdict", "verdict_rule", "harmonics",
                "device", "measurement", "coherence", "disorder", "validity", "assumptions", "compute"):
        assert key in s
    assert s["device"]["model"] == "bulk_lattice" and s["device"]["carrier_density_per_cm2"] is None
    for name, k in (("h/e", 1), ("h/2e", 2)):
        h = s["harmonics"][name]
        assert h["verdict"] == verdict(h["measured_amplitude"]["value"], 20.0, setup.periods(k))
    assert s["verdict"] in {s["harmonics"]["h/e"]["verdict"], s["harmonics"]["h/2e"]["verdict"]}
    # the theory curve follows the simulated window: R(0)/R(0) = 1, G at a window point is the device mean
    g = result.devices["conductance"].values.mean(axis=0)
    fields = np.array([0.0, setup.flux_full[3] * setup.period_he_T])
    gb, ratio = field_curve(setup, g, fields)
    assert ratio[0] == pytest.approx(1.0) and gb[1] == pytest.approx(g[3], rel=1e-9)
    assert math.isfinite(s["disorder"]["born_transport_mfp_nm"])
    assert (tmp_path / "out" / "theory_curve.csv").is_file()
