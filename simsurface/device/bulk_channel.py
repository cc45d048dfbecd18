"""A conducting bulk in parallel with the surface: Drude conductance, classical magnetoresistance, fluctuations.

Real Bi2Se3-family wires often have bulk carriers (Se vacancies). The bulk is a diffusive three-dimensional
conductor in parallel with the surface between the same contacts; it dilutes the relative Aharonov–Bohm signal,
ΔR/R = ΔG_s/(G_s + G_b), and adds its own aperiodic conductance fluctuations.

* Drude: G_b = n e μ A/L (n carrier density, μ mobility, A the bulk cross-section, L the contact distance).
* Classical magnetoresistance of parallel channels i with conductance G_i, mobility μ_i and carrier sign s_i in
  the field component B⊥ perpendicular to the current (two-carrier Drude model with the Hall field built up
  across the wire; e.g. Ashcroft & Mermin, Solid State Physics (1976), problem 1.4; Pippard, Magnetoresistance
  in Metals (1989)):
      σ_xx = Σ G_i/(1 + μ_i²B²),  σ_xy = Σ s_i G_i μ_i B/(1 + μ_i²B²),  G(B) = (σ_xx² + σ_xy²)/σ_xx.
  One channel alone has none; the field along the current (the axial AB field) has no Lorentz force on the
  current and gives none either. Assumes the channels share the geometry of a Hall bar (same length and width).
* Universal conductance fluctuations of the bulk (Lee & Stone, PRL 55, 1622 (1985); Lee, Stone & Fukuyama,
  PRB 35, 1039 (1987); review Beenakker & van Houten, Solid State Phys. 44, 1 (1991)):
  a phase-coherent segment fluctuates by δG_c = sqrt(1/15) e²/h (quasi-1D, time reversal broken by the field,
  non-degenerate channels; Var G = 2/(15β) (e²/h)², β = 2); a wire of n = L/L_phi incoherent segments in
  series by δG_c·(L_phi/L)^{3/2}; thermal smearing over k_BT ≫ ħD/L_phi² reduces it by L_T/L_phi with
  L_T = sqrt(ħD/k_BT), interpolated here as [1 + (L_phi/L_T)²]^{−1/2} (order-one prefactors from memory).
  Correlation field: the field that adds one flux quantum h/e through the phase-coherent area — the bulk cross-
  section A for the axial component, W·min(L, L_phi) for the perpendicular one (W the wire width), added in
  quadrature: B_c = (h/e)/sqrt((A cos θ)² + (W L_phi sin θ)²) (order-one prefactor from memory). In an axial field
  the bulk's fluctuations therefore live at field scales down to the h/e period of the bulk area: they overlap
  the h/e frequency band and are aperiodic.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as _c

from ..units import CONDUCTANCE_QUANTUM_S, FLUX_QUANTUM_WB, KB_MEV_PER_K, HBAR_MEV_S

__all__ = ["drude_conductance_e2h", "surface_mobility_m2_per_V_s", "bulk_diffusion_nm2_per_s",
           "thermal_length_nm", "parallel_channels_conductance_e2h", "ucf_rms_e2h", "ucf_correlation_field_T",
           "gaussian_fluctuations", "fluctuation_spectral_density", "fluctuation_amplitude_noise",
           "SEGMENT_UCF_RMS_E2H"]

#: rms conductance fluctuation of one phase-coherent quasi-1D segment, β = 2: sqrt(2/(15·2)) e²/h.
SEGMENT_UCF_RMS_E2H = math.sqrt(1.0 / 15.0)


def drude_conductance_e2h(density_per_cm3: float, mobility_cm2_per_V_s: float, area_nm2: float,
                          length_nm: float) -> float:
    """G = n e μ A / L in units of e²/h.

    Parameters
    ----------
    density_per_cm3 : float
        Bulk carrier density n in cm⁻³.
    mobility_cm2_per_V_s : float
        Bulk mobility μ in cm²/(V s).
    area_nm2, length_nm : float
        Conducting bulk cross-section and the distance between the contacts (or voltage probes).
    """
    sigma_S_per_m = density_per_cm3 * 1e6 * _c.e * mobility_cm2_per_V_s * 1e-4
    return sigma_S_per_m * area_nm2 * 1e-18 / (length_nm * 1e-9) / CONDUCTANCE_QUANTUM_S


def surface_mobility_m2_per_V_s(transport_mean_free_path_nm: float, fermi_wavevector_per_nm: float) -> float:
    """μ = e ℓ_tr/(ħ k_F) in m²/(V s) (Drude, μ = eτ/m with m = ħk_F/v_F for any isotropic band)."""
    return _c.e * transport_mean_free_path_nm * 1e-9 / (_c.hbar * fermi_wavevector_per_nm * 1e9)


def bulk_diffusion_nm2_per_s(density_per_cm3: float, mobility_cm2_per_V_s: float, mass_ratio: float) -> float:
    """D = v_F ℓ/3 of a degenerate parabolic band (spin-degenerate), k_F = (3π²n)^{1/3}, ℓ = ħk_F μ/e, in nm²/s."""
    k_f = (3 * math.pi**2 * density_per_cm3 * 1e6) ** (1 / 3)  # 1/m
    v_f = _c.hbar * k_f / (mass_ratio * _c.m_e)
    mfp = _c.hbar * k_f * mobility_cm2_per_V_s * 1e-4 / _c.e
    return v_f * mfp / 3 * 1e18


def thermal_length_nm(diffusion_nm2_per_s: float, temperature_K: float) -> float:
    """L_T = sqrt(ħD/k_BT) in nm."""
    return math.sqrt(HBAR_MEV_S * diffusion_nm2_per_s / (KB_MEV_PER_K * temperature_K))


def parallel_channels_conductance_e2h(field_perp_T: ArrayLike, conductances_e2h: list[float],
                                      mobilities_m2_per_V_s: list[float], carrier_signs: list[int]) -> np.ndarray:
    """Two-(or more-)carrier Drude conductance of parallel channels in a perpendicular field component.

    Parameters
    ----------
    field_perp_T : array_like
        Field component perpendicular to the current, T, any shape.
    conductances_e2h, mobilities_m2_per_V_s, carrier_signs : lists of equal length
        Zero-field conductance (e²/h), mobility (m²/(V s)) and sign (−1 electrons, +1 holes) of each channel.

    Returns
    -------
    numpy.ndarray
        G(B) in e²/h, shape of ``field_perp_T``; G(0) = Σ G_i.
    """
    b = np.asarray(field_perp_T, dtype=float)
    sxx = np.zeros_like(b)
    sxy = np.zeros_like(b)
    for g, mu, sign in zip(conductances_e2h, mobilities_m2_per_V_s, carrier_signs):
        denom = 1.0 + (mu * b) ** 2
        sxx += g / denom
        sxy += sign * g * mu * b / denom
    return (sxx**2 + sxy**2) / sxx


def ucf_rms_e2h(length_nm: float, coherence_length_nm: float, thermal_length_nm_: float) -> float:
    """rms aperiodic conductance fluctuation of a diffusive wire in e²/h (module docstring: formula, sources)."""
    coherent = min(length_nm, coherence_length_nm)
    series = (coherent / length_nm) ** 1.5
    thermal = 1.0 / math.sqrt(1.0 + (coherent / thermal_length_nm_) ** 2)
    return SEGMENT_UCF_RMS_E2H * series * thermal


def ucf_correlation_field_T(area_nm2: float, width_nm: float, coherence_length_nm: float, length_nm: float,
                            angle_deg: float = 0.0) -> float:
    """B_c = (h/e)/sqrt((A cos θ)² + (W min(L, L_phi) sin θ)²) in T; θ the field's angle to the wire axis."""
    theta = math.radians(angle_deg)
    axial = area_nm2 * math.cos(theta)
    perpendicular = width_nm * min(length_nm, coherence_length_nm) * math.sin(theta)
    return FLUX_QUANTUM_WB / (math.hypot(axial, perpendicular) * 1e-18)


def gaussian_fluctuations(field_T: ArrayLike, rms: float, correlation_field_T: float,
                          rng: np.random.Generator) -> np.ndarray:
    """A stationary Gaussian random function of the field with autocorrelation rms²·2^{−(ΔB/B_c)²}.

    B_c is the half-width of the autocorrelation (it falls to one half at ΔB = B_c, the usual definition of the
    UCF correlation field). Drawn on a fine uniform grid by filtering white noise with a Gaussian kernel, then
    interpolated to ``field_T``; reproducible from ``rng``.

    Returns
    -------
    numpy.ndarray
        Shape of ``field_T``, same unit as ``rms``.
    """
    b = np.asarray(field_T, dtype=float)
    lo, hi = float(b.min()), float(b.max())
    sigma_kernel = correlation_field_T / math.sqrt(2 * math.log(2.0)) / math.sqrt(2.0)  # kernel ⊗ kernel → C
    step = sigma_kernel / 8
    pad = 6 * sigma_kernel
    grid = np.arange(lo - pad, hi + pad + step, step)
    white = rng.normal(size=grid.size)
    offsets = np.arange(-int(pad / step), int(pad / step) + 1) * step
    kernel = np.exp(-0.5 * (offsets / sigma_kernel) ** 2)
    kernel /= math.sqrt(np.sum(kernel**2))
    smooth = np.convolve(white, kernel, mode="same")
    return rms * np.interp(b, grid, smooth)


def fluctuation_spectral_density(rms: float, correlation_field_T: float, frequency_per_T: ArrayLike) -> np.ndarray:
    """Two-sided spectral density S(f) = ∫ C(ΔB) cos(2πfΔB) dΔB of the fluctuations of :func:`gaussian_fluctuations`.

    C(ΔB) = rms² exp(−ln2 ΔB²/B_c²) gives S(f) = rms² B_c sqrt(π/ln 2) exp(−π²f²B_c²/ln 2) (Gaussian integral),
    in (unit of rms)² T.
    """
    f = np.asarray(frequency_per_T, dtype=float)
    ln2 = math.log(2.0)
    return rms**2 * correlation_field_T * math.sqrt(math.pi / ln2) * np.exp(-(math.pi * f * correlation_field_T) ** 2
                                                                            / ln2)


def fluctuation_amplitude_noise(rms: float, correlation_field_T: float, frequency_per_T: ArrayLike,
                                field_span_T: float) -> np.ndarray:
    """Standard deviation of a least-squares cosine (or sine) coefficient at frequency f over a field span.

    For a stationary process over a span B_span ≫ B_c the coefficient variance is 2S(f)/B_span (the white-noise
    result σ²·2/N with σ²/N → S/B_span per unit bandwidth; common practice). It plays the role of σ·sqrt(2/N)
    of white noise in the verdict: aperiodic fluctuations mask a harmonic only through their power at its frequency.
    """
    return np.sqrt(2.0 * fluctuation_spectral_density(rms, correlation_field_T, frequency_per_T) / field_span_T)
