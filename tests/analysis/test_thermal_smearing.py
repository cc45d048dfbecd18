"""Thermal smearing: against the Fermi function (scipy), the cosine damping factor and numerical quadrature."""

import numpy as np
import pytest
from scipy import integrate
from scipy.special import expit

from simsurface.analysis import temperature as th
from simsurface.units import KB_MEV_PER_K


def test_smeared_conductance_step_is_the_fermi_function():
    # G(E) = Θ(E − E0) gives ∫ Θ (−f′) dE = f(E0 − μ)... = expit((μ − E0)/k_BT) (scipy reference)
    t_k = 4.0
    kt = t_k * KB_MEV_PER_K
    e0 = 1.0
    energies = np.linspace(-10.0, 10.0, 20001)           # spacing 1e-3 meV << k_BT = 0.34 meV
    step = (energies >= e0).astype(float)
    mu = np.linspace(-1.0, 3.0, 41)
    smeared = th.thermal_average(energies, step, mu, t_k)
    # the sampled step is a ramp of one grid spacing, centred half a spacing below e0
    expected = expit((mu - (e0 - 0.5e-3)) / kt)
    np.testing.assert_allclose(smeared, expected, atol=2e-6)


@pytest.mark.parametrize("temperature_K", [0.5, 2.0, 8.0])
def test_cosine_in_energy_is_damped_by_x_over_sinh_x(temperature_K):
    # ∫ cos(2πE/ΔE)(−f′) dE = cos(2πμ/ΔE)·x/sinh x, x = 2π²k_BT/ΔE: the thermal damping factor of
    # magnetic-oscillation theory (Shoenberg, Magnetic Oscillations in Metals, CUP 1984)
    period = 2.0
    kt = temperature_K * KB_MEV_PER_K
    energies = np.linspace(-40, 40, 16001)
    mu = np.array([0.0, 0.3, 0.5])
    smeared = th.thermal_average(energies, np.cos(2 * np.pi * energies / period), mu, temperature_K)
    x = 2 * np.pi**2 * kt / period
    # G is linear between grid points: error bound h² max|G''| / 8
    bound = (energies[1] - energies[0]) ** 2 * (2 * np.pi / period) ** 2 / 8
    np.testing.assert_allclose(smeared, np.cos(2 * np.pi * mu / period) * x / np.sinh(x), atol=bound)


def test_closed_form_weights_equal_numerical_quadrature_for_a_smooth_curve():
    # reference: scipy.integrate.quad of G(E)(−f′) with the model's own window
    t_k, mu = 3.0, 0.7
    def g(e):
        return 1.0 + np.tanh(e) + 0.2 * np.sin(3 * e)
    energies = np.linspace(-6, 8, 4001)
    ours = th.thermal_average(energies, g(energies), mu, t_k)
    ref, _ = integrate.quad(lambda e: g(e) * th.fermi_window(e, mu, t_k), mu - 40 * t_k * KB_MEV_PER_K,
                            mu + 40 * t_k * KB_MEV_PER_K, limit=200)
    bound = (energies[1] - energies[0]) ** 2 * (0.77 + 0.2 * 9) / 8    # h² max|G''| / 8 (linear G between points)
    assert ours == pytest.approx(ref, abs=bound)


def test_window_has_unit_weight_and_constant_stays_constant():
    t_k = 1.0
    kt = t_k * KB_MEV_PER_K
    e = np.linspace(-50 * kt, 50 * kt, 3001)
    area = np.trapz(th.fermi_window(e, 0.0, t_k), e)
    assert area == pytest.approx(1.0, abs=1e-6)
    grid = th.energy_grid_meV([0.0], t_k, spacing_meV=kt / 2)
    assert grid[0] <= -5 * kt + 1e-12 and grid[-1] >= 5 * kt - 1e-12
    np.testing.assert_allclose(th.thermal_average(grid, np.full((2, grid.size), 3.0), [0.0], t_k), 3.0, rtol=1e-12)


def test_zero_temperature_is_linear_interpolation_and_short_grids_are_refused():
    e = np.array([0.0, 1.0, 2.0])
    g = np.array([0.0, 2.0, 3.0])
    assert th.thermal_average(e, g, 0.5, 0.0) == pytest.approx(1.0)
    with pytest.raises(ValueError, match="does not reach"):
        th.thermal_average(e, g, 1.0, 10.0)       # 5 k_BT = 4.3 meV beyond a 1 meV half-width grid
