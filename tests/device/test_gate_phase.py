"""Channel counts from band structures and the gate-voltage map of the h/e phase."""

import numpy as np
import pytest

from simsurface.analysis.gatemap import gate_map
from simsurface.device.electrostatics import CrossSectionElectrostatics, GateStack, gate_sweep
from simsurface.device.gate_phase import channel_count_from_bands, gate_phase_map
from simsurface.device.surface_charge import SurfaceGas
from simsurface.geometry import CrossSection
from simsurface.models.analytic import dirac_channel_count
from simsurface.models.modes import ModeTube

SECTION = CrossSection.circle(60.0, 1.5)
HBAR_V = 329.0


def _tube(profile, max_energy=80.0):
    return ModeTube.from_geometry(SECTION.perimeter_nm, SECTION.area_nm2, 10.0, hbar_v_meV_nm=HBAR_V,
                                  max_energy_meV=max_energy, section=SECTION, mode_cutoff_factor=1.5,
                                  circumferential_potential_meV=None if profile is None else tuple(profile))


def _k_grid(tube, reach_meV, points=161):
    k_eff = np.linspace(-1, 1, points) * reach_meV / HBAR_V          # ħv k_eff covers the window
    return 2 / tube.spacing_nm * np.arctan(k_eff * tube.spacing_nm / 2)


def test_crossing_count_of_parabolas_including_a_missed_minimum():
    # one band E = k² on a coarse grid whose minimum falls between samples: N = 1 for 0 < E < E(samples)
    k = np.linspace(-1.05, 0.95, 5)  # minimum at k = 0 is not a sample
    n = channel_count_from_bands((k**2)[:, None], np.array([-0.1, 0.001, 0.2, 2.0]))
    assert np.allclose(n, [0.0, 1.0, 1.0, 0.0])


@pytest.mark.parametrize("flux", [0.0, 0.2, 0.5])
def test_mode_tube_band_count_equals_analytic_channel_count(flux):
    # uniform tube: N(E, Φ) = number of subbands with ħv|l + 1/2 − Φ|2π/P < |E| (Zhang & Vishwanath, PRL 105,
    # 206601 (2010); Bardarson, Brouwer & Moore, PRL 105, 156803 (2010))
    tube = _tube(None)
    energies = np.linspace(-70.0, 70.0, 281) + 0.0123  # avoid the edges themselves
    n = channel_count_from_bands(tube.clean_bands_meV(flux, _k_grid(tube, 120.0)), energies)
    exact = dirac_channel_count(energies, [flux], SECTION.perimeter_nm, HBAR_V)[0]
    assert np.array_equal(n, exact)


def test_gate_map_gives_the_phase_against_gate_voltage():
    solver = CrossSectionElectrostatics(SECTION, GateStack(100.0, 3.9, 60.0), grid_spacing_nm=3.0)
    sweep = gate_sweep(solver, SurfaceGas("topological", HBAR_V), 3.0, np.linspace(-6.0, 6.0, 5))
    tube_cache = {}

    def bands(profile, flux):
        key = None if profile is None else profile.tobytes()
        if key not in tube_cache:
            tube_cache[key] = _tube(profile)
        tube = tube_cache[key]
        return tube.clean_bands_meV(flux, _k_grid(tube, 120.0))

    phi = np.linspace(0, 1, 8, endpoint=False)
    gm = gate_phase_map(bands, sweep, 4.0, phi, 0.05)
    assert gm["conductance_e2h"].shape == (5, 8)
    assert np.all(np.diff(gm["fermi_energy_meV"].values) > 0)
    # at V = 0 the tube is uniform: the same map as the analytic gate map (simsurface.analysis.gatemap, channel
    # counts of Zhang & Vishwanath 2010); E_F = 3 meV lies below the first Φ = 0 subband (5.8 meV), so the maxima
    # sit at half-integer flux — the gapless subband at Φ0/2 (Bardarson, Brouwer & Moore 2010)
    reference = gate_map("topological", SECTION.perimeter_nm, HBAR_V, [3.0], 4.0, flux_points=8)
    assert gm["he_cosine_e2h"].sel(gate_voltage_V=0.0) == pytest.approx(float(reference["he_cosine"][0]), abs=2e-3)
    assert gm["he_cosine_e2h"].sel(gate_voltage_V=0.0) < 0
    # gating moves E_F across subband edges: the phase flips somewhere in the sweep
    assert np.any(gm["he_cosine_e2h"].values > 0)
    assert np.all(gm["conductance_e2h"].values >= 0)
