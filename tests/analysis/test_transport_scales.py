"""Surface-gas scales and the Born mean free path, checked against scipy constants and the lattice simulation."""

import math

import numpy as np
import pytest
from scipy import constants as c

from simsurface.analysis import transport_scales as ts
from simsurface.disorder import DisorderParameters, realize
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance
from simsurface.units import hbar_v_meV_nm


def test_dirac_density_and_fermi_energy_from_scipy_constants():
    # one spin-nondegenerate cone: n = k_F²/4π, E_F = ħ v k_F (PHYSICS.md, surface Dirac gas)
    v = 5.0e5
    n_m2 = 1.0e12 * 1e4
    k_f = math.sqrt(4 * math.pi * n_m2)
    e_f_meV = c.hbar * v * k_f / c.e * 1e3
    hv = float(hbar_v_meV_nm(v))
    assert ts.fermi_energy_from_density_meV("topological", 1.0e12, hv) == pytest.approx(e_f_meV, rel=1e-12)
    assert ts.density_per_cm2("topological", e_f_meV, hv) == pytest.approx(1.0e12, rel=1e-12)


def test_parabolic_density_counts_spin():
    # spin-degenerate 2D gas: n = k_F²/2π, E_F = ħ²k_F²/2m* (scipy constants)
    m = 0.023
    n_m2 = 5.0e11 * 1e4
    k_f = math.sqrt(2 * math.pi * n_m2)
    e_f_meV = (c.hbar * k_f) ** 2 / (2 * m * c.m_e) / c.e * 1e3
    assert ts.fermi_energy_from_density_meV("trivial", 5.0e11, m) == pytest.approx(e_f_meV, rel=1e-10)
    assert ts.density_per_cm2("trivial", e_f_meV, m) == pytest.approx(5.0e11, rel=1e-10)


def test_born_width_inverts_the_born_mean_free_path():
    for surface, scale in (("topological", 329.0), ("trivial", 0.023)):
        w = ts.born_width_meV(surface, 120.0, 2.0, 40.0, scale)
        assert float(ts.born_transport_mfp_nm(surface, w, 2.0, 40.0, scale)) == pytest.approx(120.0)
        # ℓ ∝ W⁻²
        assert float(ts.born_transport_mfp_nm(surface, 2 * w, 2.0, 40.0, scale)) == pytest.approx(30.0)


def test_landauer_mean_free_path_from_mean_conductance():
    assert float(ts.landauer_mfp_nm(2.0, 10.0, 100.0)) == pytest.approx(25.0)
    assert float(ts.landauer_mfp_nm(10.0, 10.0, 100.0)) == math.inf


def test_simulated_mean_free_path_of_a_trivial_tube_matches_born_times_pi_over_two():
    # Born ℓ_tr of white-noise disorder in a 2D parabolic band (common practice) and ℓ = (π/2)ℓ_tr between
    # the quasi-1D Landauer ℓ of ⟨G⟩ = N/(1 + L/ℓ) and the 2D transport mean free path (Beenakker,
    # Rev. Mod. Phys. 69, 731 (1997), from memory): weak disorder (W ≈ 1.2 t), ten channels, L ≈ 2ℓ.
    perimeter, energy, l_tr = 60.0, 113.6, 30.0
    tube = SurfaceTube.from_geometry("trivial", perimeter, perimeter**2 / (4 * math.pi), 100.0, mass_ratio=0.023,
                                     max_energy_meV=energy)
    width = ts.born_width_meV("trivial", l_tr, tube.spacing_nm, energy, 0.023)
    params = DisorderParameters(anderson_width_meV=width)
    g = [conductance(tube.chain(0.25, **realize(params, tube, 5, r).chain_kwargs(0.25)), [energy])[0]
         for r in range(24)]
    n_open = conductance(tube.chain(0.25), [energy])[0]
    l_fit = float(ts.landauer_mfp_nm(np.mean(g), n_open, tube.modelled_length_nm))
    assert l_fit == pytest.approx(ts.LANDAUER_OVER_TRANSPORT_2D * l_tr, rel=0.2)
