"""A bulk channel in parallel: Drude conductance, two-carrier magnetoresistance, conductance fluctuations."""

import math

import numpy as np
import pytest
from scipy import constants

from simsurface.device.bulk_channel import (SEGMENT_UCF_RMS_E2H, drude_conductance_e2h, fluctuation_amplitude_noise,
                                            gaussian_fluctuations,
                                            parallel_channels_conductance_e2h, surface_mobility_m2_per_V_s,
                                            thermal_length_nm, bulk_diffusion_nm2_per_s, ucf_correlation_field_T,
                                            ucf_rms_e2h)
from simsurface.units import FLUX_QUANTUM_WB, RESISTANCE_QUANTUM_OHM


def test_drude_conductance_from_resistivity_in_ohm_cm():
    # ρ = 1/(n e μ) in Ω cm with n in cm⁻³ and μ in cm²/(V s) (common practice, no source); 1e18 cm⁻³ at
    # 300 cm²/Vs: ρ = 20.8 mΩ cm; a 100 nm × 100 nm bar 1 µm long: R = ρL/A
    rho_ohm_cm = 1.0 / (1e18 * constants.e * 300.0)
    r_ohm = rho_ohm_cm * 1e-4 / (100e-7 * 100e-7)  # L = 1e-4 cm, A in cm²
    g = drude_conductance_e2h(1e18, 300.0, 100.0 * 100.0, 1000.0)
    assert g == pytest.approx(RESISTANCE_QUANTUM_OHM / r_ohm, rel=1e-12)


def test_surface_mobility_agrees_with_einstein_relation_of_the_dirac_cone():
    # σ = n e μ must equal e²νD with ν = k_F/(2πħv), D = vℓ/2 (2D diffusion; Einstein relation)
    k_f, mfp = 0.06, 150.0  # 1/nm, nm
    mu = surface_mobility_m2_per_V_s(mfp, k_f)
    n = (k_f * 1e9) ** 2 / (4 * math.pi)
    einstein = constants.e**2 * (k_f * 1e9) * (mfp * 1e-9) / (4 * math.pi * constants.hbar)
    assert n * constants.e * mu == pytest.approx(einstein, rel=1e-12)


def test_one_carrier_has_no_classical_magnetoresistance():
    b = np.linspace(0, 9, 10)
    assert np.allclose(parallel_channels_conductance_e2h(b, [3.0], [0.2], [-1]), 3.0, rtol=1e-12)


def test_compensated_two_carriers_give_quadratic_unsaturated_magnetoresistance():
    # electrons and holes of equal density and mobility: ρ(B) = ρ0 (1 + μ²B²) (two-band model; Pippard 1989)
    b = np.linspace(0, 9, 10)
    g = parallel_channels_conductance_e2h(b, [1.0, 1.0], [0.1, 0.1], [-1, 1])
    assert np.allclose(2.0 / g, 1.0 + (0.1 * b) ** 2, rtol=1e-12)


def test_same_sign_carriers_low_field_and_saturation():
    # low field: Δρ/ρ0 = σ1σ2(μ1 − μ2)²B²/(σ1 + σ2)²; high field: ρ∞ = (Σ n_i/μ_i)/(e (Σ n_i)²)
    # (two-band model, e.g. Ashcroft & Mermin 1976, problem 1.4)
    g1, g2, mu1, mu2 = 2.0, 0.5, 0.05, 0.8
    small = 1e-3
    rel = 1 / parallel_channels_conductance_e2h(small, [g1, g2], [mu1, mu2], [-1, -1]) * (g1 + g2) - 1
    assert rel == pytest.approx(g1 * g2 * (mu1 - mu2) ** 2 * small**2 / (g1 + g2) ** 2, rel=1e-4)
    n1, n2 = g1 / mu1, g2 / mu2  # ∝ density
    rho_inf = (n1 / mu1 + n2 / mu2) / (n1 + n2) ** 2
    big = parallel_channels_conductance_e2h(1e5, [g1, g2], [mu1, mu2], [-1, -1])
    assert 1 / big == pytest.approx(rho_inf, rel=1e-4)


def test_ucf_of_one_coherent_segment_is_universal():
    # Var G = 2/(15β)(e²/h)², β = 2: rms 0.258 e²/h (Lee & Stone, PRL 55, 1622 (1985); Beenakker, RMP 69, 731)
    assert ucf_rms_e2h(500.0, 1000.0, 1e9) == pytest.approx(0.2582, abs=1e-4)


def test_ucf_of_incoherent_segments_in_series_falls_as_three_halves_power():
    # n independent segments, each G_c + δ with rms δ ≪ G_c, in series: rms G = δ n^{-3/2} (Monte Carlo, numpy)
    rng = np.random.default_rng(3)
    g_c, delta, n = 20.0, SEGMENT_UCF_RMS_E2H, 9
    g = 1 / np.sum(1 / (g_c + delta * rng.standard_normal((200000, n))), axis=1)
    # the relative fluctuation of a series chain: δG/G = (δ/G_c)/sqrt(n); with G = G_c/n: δG = δ n^{-3/2}
    assert np.std(g) == pytest.approx(delta * n**-1.5, rel=0.02)
    assert ucf_rms_e2h(9 * 300.0, 300.0, 1e9) == pytest.approx(delta * n**-1.5, rel=1e-12)


def test_thermal_smearing_reduces_ucf_by_thermal_over_coherence_length():
    # L_T ≪ L_phi: δG ∝ L_T/L_phi (Lee, Stone & Fukuyama, PRB 35, 1039 (1987))
    full = ucf_rms_e2h(300.0, 300.0, 1e9)
    assert ucf_rms_e2h(300.0, 300.0, 3.0) / full == pytest.approx(3.0 / 300.0, rel=1e-3)


def test_thermal_length_of_a_typical_bulk():
    # L_T = sqrt(ħD/k_BT) (common practice): D = 1e-3 m²/s = 1e15 nm²/s at 1 K → sqrt(1.0546e-34·1e-3/1.38e-23)
    assert thermal_length_nm(1e15, 1.0) == pytest.approx(
        math.sqrt(constants.hbar * 1e-3 / (constants.k * 1.0)) * 1e9, rel=1e-9)
    # D of a Bi2Se3-like bulk against the Einstein relation D = σ/(e²ν), ν = m*k_F/(π²ħ²) (3D, spin 2)
    n, mu, mass = 1e24, 300e-4, 0.14 * constants.m_e  # SI
    k_f = (3 * math.pi**2 * n) ** (1 / 3)
    einstein = n * constants.e * mu / (constants.e**2 * mass * k_f / (math.pi**2 * constants.hbar**2))
    assert bulk_diffusion_nm2_per_s(1e18, 300.0, 0.14) == pytest.approx(einstein * 1e18, rel=1e-9)


def test_correlation_field_is_one_flux_quantum_through_the_coherent_area():
    area, width, lphi = 7000.0, 100.0, 600.0
    assert ucf_correlation_field_T(area, width, lphi, 2000.0, 0.0) == pytest.approx(FLUX_QUANTUM_WB / (area * 1e-18))
    assert ucf_correlation_field_T(area, width, lphi, 2000.0, 90.0) == pytest.approx(
        FLUX_QUANTUM_WB / (width * lphi * 1e-18))


def test_gaussian_fluctuations_have_the_requested_rms_and_half_width():
    rng = np.random.default_rng(7)
    b = np.arange(0, 400.0, 0.05)
    bc = 0.5
    draws = np.array([gaussian_fluctuations(b, 0.1, bc, rng) for _ in range(20)])
    assert np.std(draws) == pytest.approx(0.1, rel=0.05)
    lag = int(round(bc / 0.05))
    corr = np.mean(draws[:, :-lag] * draws[:, lag:]) / np.mean(draws**2)
    assert corr == pytest.approx(0.5, abs=0.03)
    again = gaussian_fluctuations(b[:50], 0.1, bc, np.random.default_rng(1))
    assert np.array_equal(again, gaussian_fluctuations(b[:50], 0.1, bc, np.random.default_rng(1)))


@pytest.mark.parametrize("frequency", [0.5, 1.2])
def test_fluctuation_power_at_a_frequency_matches_least_squares_fits(frequency):
    # fit cosine and sine (numpy lstsq) to independent draws of the fluctuations over 40 T; the coefficient spread
    # must be sqrt(2 S(f)/B_span) with the Gaussian spectrum S(f) (Wiener–Khinchin; common practice)
    rng = np.random.default_rng(21)
    b = np.linspace(0, 40.0, 4001)
    bc = 0.3
    design = np.column_stack([np.ones_like(b), np.cos(2 * np.pi * frequency * b), np.sin(2 * np.pi * frequency * b)])
    draws = np.array([gaussian_fluctuations(b, 1.0, bc, rng) for _ in range(400)]).T
    coef = np.linalg.lstsq(design, draws, rcond=None)[0]
    expected = float(fluctuation_amplitude_noise(1.0, bc, frequency, 40.0))
    assert np.std(coef[1:]) == pytest.approx(expected, rel=0.1)
