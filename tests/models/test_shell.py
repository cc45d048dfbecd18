"""Finite surface-state shell (simsurface.models.shell): the spread of enclosed areas damps h/e and h/2e.

Outside references: scipy.integrate.quad for the Gaussian average of e^{iκ(A − A0)} (the closed form is derived
in the module notes and docs/fields.md); Gauss–Hermite quadrature from numpy; the Dirac tube's exact flux
periodicity (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)).
"""

import numpy as np
import pytest
from scipy.integrate import quad

from simsurface.errors import InputError
from simsurface.geometry import CrossSection, enclosed_area_nm2
from simsurface.models.field import AppliedField
from simsurface.models.modes import ModeTube
from simsurface.models.shell import shell_conductance, shell_harmonic_factor, shell_nodes
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance
from simsurface.units import FLUX_QUANTUM_T_NM2


def gaussian_average(section, sigma, kappa):
    """⟨e^{iκ(A(d) − A0)}⟩ over d ~ N(d0, σ²) by scipy's quadrature (A(d) from the geometry module)."""
    def part(fn):
        f = lambda x: fn(kappa * (enclosed_area_nm2(section.shape, section.width_nm, section.thickness_nm,
                                                    section.depth_nm + x) - section.area_nm2)) \
            * np.exp(-x**2 / (2 * sigma**2)) / np.sqrt(2 * np.pi * sigma**2)
        return quad(f, -10 * sigma, 10 * sigma, limit=400)[0]
    return part(np.cos) + 1j * part(np.sin)


@pytest.mark.parametrize("section", [CrossSection.circle(100.0, 2.0), CrossSection.rectangle(120.0, 60.0, 2.0)])
def test_closed_form_damping_matches_scipy_quadrature(section):
    sigma = 1.0
    for field in (0.5, 3.0, 8.0):
        for n in (1, 2):
            kappa = 2 * np.pi * n * field / FLUX_QUANTUM_T_NM2
            assert shell_harmonic_factor(field, n, section, sigma) == pytest.approx(
                gaussian_average(section, sigma, kappa), abs=1e-7)


def test_h2e_decays_faster_than_h_e_and_both_vanish_at_high_field():
    section = CrossSection.circle(100.0, 2.0)
    h_e, h2e = (abs(shell_harmonic_factor(2.0, n, section, 1.0)) for n in (1, 2))
    assert 0 < h2e < h_e < 1
    # Gaussian limit exp[−2π²n²(B P σ/Φ0)²] (c σ² ≪ P σ)
    b = 2.0
    approx = np.exp(-2 * np.pi**2 * (b * section.perimeter_nm * 1.0 / FLUX_QUANTUM_T_NM2) ** 2)
    assert h_e == pytest.approx(approx, rel=0.01)
    assert abs(shell_harmonic_factor(20.0, 1, section, 1.0)) < 1e-3


def test_gauss_hermite_nodes_reproduce_the_closed_form():
    section = CrossSection.rectangle(80.0, 50.0, 1.5)
    ratio, weight = shell_nodes(section, 0.8, 13)
    assert weight.sum() == pytest.approx(1.0)
    for field in (1.0, 4.0):
        kappa = 2 * np.pi * field / FLUX_QUANTUM_T_NM2
        quadrature = np.sum(weight * np.exp(1j * kappa * section.area_nm2 * (ratio - 1)))
        assert quadrature == pytest.approx(shell_harmonic_factor(field, 1, section, 0.8), abs=1e-6)


def test_area_ratio_scales_only_the_aharonov_bohm_flux():
    section = CrossSection.circle(40.0)
    axial = ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, 100.0, hbar_v_meV_nm=330.0,
                                   max_energy_meV=30.0, section=section)
    np.testing.assert_allclose(axial.chain(0.8, area_ratio=0.9).onsite_values, axial.chain(0.72).onsite_values,
                               atol=1e-12)
    tilted = ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, 100.0, hbar_v_meV_nm=330.0,
                                    max_energy_meV=30.0, section=section, field=AppliedField(30.0, 0.0, 12.0))
    # the AB flux 0.8 cos θ · 0.9 minus the Zeeman shift of the whole field B(0.8)
    expected = 0.8 * np.cos(np.radians(30.0)) * 0.9 - (0.8 * np.cos(np.radians(30.0)) - tilted.effective_flux_quanta(0.8))
    assert tilted.effective_flux_quanta(0.8, 0.9) == pytest.approx(expected, abs=1e-14)
    lattice = SurfaceTube.from_geometry("trivial", section.perimeter_nm, section.area_nm2, 50.0, mass_ratio=0.03,
                                        max_energy_meV=20.0)
    np.testing.assert_allclose(lattice.chain(0.8, area_ratio=0.9).onsite_values, lattice.chain(0.72).onsite_values,
                               atol=1e-12)


def test_shell_average_of_a_clean_tube_follows_the_damped_harmonic_series():
    """At 4 meV a 40 nm Dirac tube conducts through one channel for |φ − n − 1/2| < w = 0.242 and none
    otherwise: G = 2w + Σ_k (2/πk) sin(2πkw) cos(2πk(φ − 1/2)). Averaged over a 1 nm depth spread each harmonic
    is multiplied by χ_k (closed form). The simulated shell average (41 Gauss–Hermite nodes, a step-like G
    needs many) matches that series at φ = 2 and 2.5, where |χ_1| = 0.45 and 0.29."""
    section = CrossSection.circle(40.0, 0.0)
    tube = ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, 200.0, hbar_v_meV_nm=330.0,
                                  max_energy_meV=30.0)
    ratio, weight = shell_nodes(section, 1.0, 41)
    half = 4.0 / (2 * np.pi * 330.0 / section.perimeter_nm)
    k = np.arange(1, 40)
    for phi in (2.0, 2.5):
        chi = shell_harmonic_factor(phi * FLUX_QUANTUM_T_NM2 / section.area_nm2, k, section, 1.0)
        series = 2 * half + np.sum(2 / (np.pi * k) * np.sin(2 * np.pi * k * half)
                                   * np.real(chi * np.exp(2j * np.pi * k * (phi - 0.5))))
        simulated = shell_conductance(lambda c: conductance(c, [4.0], "slices"), tube, phi, ratio, weight)[0]
        assert simulated == pytest.approx(series, abs=0.03)
    assert abs(shell_harmonic_factor(6 * FLUX_QUANTUM_T_NM2 / section.area_nm2, 1, section, 1.0)) < 2e-3


def test_too_wide_spread_names_the_field():
    with pytest.raises(InputError, match="depth_spread_nm"):
        shell_nodes(CrossSection.circle(10.0, 1.0), 2.0)
