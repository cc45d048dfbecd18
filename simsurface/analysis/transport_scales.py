"""Scales of a disordered surface electron gas: Fermi wavevector, density, mean free path, correlation energy.

Two surfaces, as in :mod:`simsurface.models.analytic`:

* topological — one spin-nondegenerate Dirac cone, E_F = ħv k_F, n = k_F²/(4π);
* trivial — a spin-degenerate parabolic band, E_F = ħ²k_F²/(2m*), n = k_F²/(2π).

Anderson disorder of box width W (site energies uniform in [−W/2, W/2]) on a lattice of spacing a is,
at long wavelengths, white noise of strength K = ⟨V²⟩a² = W²a²/12 (meV² nm²). The Born approximation
(Fermi golden rule) then gives the transport mean free path

* Dirac cone: 1/τ = πνK/ħ with ν = E_F/(2πħ²v²) and the spinor overlap (1 + cos θ)/2, so τ_tr = 2τ and
  ℓ_tr = 4(ħv)³/(E_F K) (Ando, Nakanishi & Saito, J. Phys. Soc. Jpn. 67, 2857 (1998) for the same cone
  in graphene; derivation common practice);
* parabolic band: 1/τ = m*K/ħ³ (isotropic, τ_tr = τ), ℓ_tr = (ħ²/m*)² k_F / K (common practice, no source).

Born is a weak-disorder estimate. On the lattice Dirac tube it overestimates ℓ by up to a few times once
W is comparable to the hopping (measured, see docs/plan.md), which is why :mod:`simsurface.analysis.plan`
calibrates W numerically.

The quasi-one-dimensional Landauer mean free path ℓ is defined by ⟨G⟩ = N/(1 + L/ℓ) (common practice);
in two dimensions ℓ = (π/2) ℓ_tr (Beenakker, Rev. Mod. Phys. 69, 731 (1997), from memory — checked
against this module's Born formula for the trivial tube in tests/analysis/test_transport_scales.py).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from ..units import HBAR2_OVER_2ME_MEV_NM2, HBAR_MEV_S

#: ℓ (Landauer, quasi-1D) / ℓ_tr (Drude) for scattering in two dimensions
LANDAUER_OVER_TRANSPORT_2D = math.pi / 2
_NM2_PER_CM2 = 1e14


def hbar2_over_m_meV_nm2(mass_ratio: float) -> float:
    """ħ²/m* in meV nm²."""
    return 2 * HBAR2_OVER_2ME_MEV_NM2 / mass_ratio


def fermi_wavevector_per_nm(surface: str, fermi_energy_meV: float, energy_scale: float) -> float:
    """k_F in 1/nm; ``energy_scale`` is ħv in meV nm (topological) or m*/m_e (trivial).

    For the Dirac cone |E_F| is used (holes below the Dirac point have the same k_F).
    """
    if surface == "topological":
        return abs(fermi_energy_meV) / energy_scale
    return math.sqrt(max(fermi_energy_meV, 0.0) * 2 / hbar2_over_m_meV_nm2(energy_scale))


def fermi_energy_from_density_meV(surface: str, density_per_cm2: float, energy_scale: float) -> float:
    """E_F in meV (from the Dirac point or band bottom) of a surface carrier density in 1/cm²."""
    n_nm2 = density_per_cm2 / _NM2_PER_CM2
    if surface == "topological":
        return energy_scale * math.sqrt(4 * math.pi * n_nm2)
    k = math.sqrt(2 * math.pi * n_nm2)
    return 0.5 * hbar2_over_m_meV_nm2(energy_scale) * k**2


def density_per_cm2(surface: str, fermi_energy_meV: float, energy_scale: float) -> float:
    """Surface carrier density in 1/cm² at E_F (inverse of :func:`fermi_energy_from_density_meV`)."""
    k = fermi_wavevector_per_nm(surface, fermi_energy_meV, energy_scale)
    per_nm2 = k**2 / (4 * math.pi) if surface == "topological" else k**2 / (2 * math.pi)
    return per_nm2 * _NM2_PER_CM2


def fermi_velocity_nm_per_s(surface: str, fermi_energy_meV: float, energy_scale: float) -> float:
    """Fermi velocity in nm/s."""
    if surface == "topological":
        return energy_scale / HBAR_MEV_S
    return hbar2_over_m_meV_nm2(energy_scale) * fermi_wavevector_per_nm(surface, fermi_energy_meV, energy_scale) / HBAR_MEV_S


def born_transport_mfp_nm(surface: str, width_meV: ArrayLike, spacing_nm: float, fermi_energy_meV: float,
                          energy_scale: float) -> np.ndarray:
    """Born transport mean free path ℓ_tr in nm of Anderson disorder of width W on spacing a."""
    k_noise = np.asarray(width_meV, float) ** 2 * spacing_nm**2 / 12.0
    with np.errstate(divide="ignore"):
        if surface == "topological":
            return 4 * energy_scale**3 / (abs(fermi_energy_meV) * k_noise)
        k_f = fermi_wavevector_per_nm(surface, fermi_energy_meV, energy_scale)
        return hbar2_over_m_meV_nm2(energy_scale) ** 2 * k_f / k_noise


def born_width_meV(surface: str, transport_mfp_nm: float, spacing_nm: float, fermi_energy_meV: float,
                   energy_scale: float) -> float:
    """Anderson width W in meV whose Born transport mean free path is ``transport_mfp_nm``."""
    at_unit = float(born_transport_mfp_nm(surface, 1.0, spacing_nm, fermi_energy_meV, energy_scale))
    return math.sqrt(at_unit / transport_mfp_nm)  # ℓ ∝ W⁻²


def landauer_mfp_nm(mean_conductance: ArrayLike, channels: ArrayLike, length_nm: float) -> np.ndarray:
    """ℓ in nm from ⟨G⟩ = N/(1 + L/ℓ); infinite when ⟨G⟩ ≥ N (ballistic within the noise)."""
    g = np.asarray(mean_conductance, float)
    n = np.asarray(channels, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        excess = n / g - 1.0
        return np.where(excess > 0, length_nm / excess, np.inf)


def correlation_energy_meV(surface: str, length_nm: float, transport_mfp_nm: float, fermi_energy_meV: float,
                           energy_scale: float) -> float:
    """Energy over which the conductance of a phase-coherent section of length L decorrelates.

    Diffusive (ℓ_tr < L): the Thouless energy ħD/L² with D = v ℓ_tr/2 (two dimensions); quasi-ballistic:
    ħv/L (inverse time of flight). Common practice, no source; used to choose the energy grid.
    """
    v = fermi_velocity_nm_per_s(surface, fermi_energy_meV, energy_scale)
    if transport_mfp_nm < length_nm:
        return HBAR_MEV_S * v * transport_mfp_nm / 2 / length_nm**2
    return HBAR_MEV_S * v / length_nm


def broadening_meV(surface: str, fermi_energy_meV: float, energy_scale: float, transport_mfp_nm: float) -> float:
    """Quasiparticle half-width γ = ħ/2τ in meV from the transport mean free path (Born relations above).

    Dirac cone τ = τ_tr/2, so γ = ħv/ℓ_tr; parabolic band τ = τ_tr, so γ = ħv_F/(2ℓ_tr). Zero for ℓ_tr = ∞.
    """
    if not math.isfinite(transport_mfp_nm):
        return 0.0
    v = fermi_velocity_nm_per_s(surface, fermi_energy_meV, energy_scale)
    tau_ratio = 0.5 if surface == "topological" else 1.0     # τ / τ_tr
    return HBAR_MEV_S * v / (2 * tau_ratio * transport_mfp_nm)
