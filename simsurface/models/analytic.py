"""Clean, analytic subbands of a surface-conducting tube.

Topological surface (Dirac fermions, spin Berry phase π; Zhang & Vishwanath, PRL 105, 206601 (2010);
Bardarson, Brouwer & Moore, PRL 105, 156803 (2010); Ostrovsky, Gornyi & Mirlin, PRL 105, 036803 (2010))::

    E_l(k) = ± ħv [k² + q_l²]^(1/2),   q_l = 2π (l + 1/2 − Φ/Φ0) / P,   l ∈ ℤ

Trivial surface (parabolic electron layer, no Berry phase, spin-degenerate)::

    E_l(k) = ħ² (k² + q_l²) / (2 m*),   q_l = 2π (l − Φ/Φ0) / P

P is the perimeter of the surface-state contour and Φ the flux through the area it encloses. Clean
conductance is (e²/h) times the number of open channels: one per subband for the spin-momentum-locked
Dirac surface, two (spin) per subband for the trivial layer. Energies are measured from the Dirac
point (topological) or from the bottom of the 2D band (trivial).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ..units import HBAR2_OVER_2ME_MEV_NM2


def angular_indices(max_abs: int) -> np.ndarray:
    """Subband indices l = −max_abs … max_abs."""
    return np.arange(-max_abs, max_abs + 1)


def transverse_momenta_per_nm(flux_quanta: ArrayLike, perimeter_nm: float, berry_phase: bool,
                              indices: ArrayLike) -> np.ndarray:
    """q_l in 1/nm, shape ``flux.shape + indices.shape``."""
    phi = np.asarray(flux_quanta, dtype=float)[..., None]
    l = np.asarray(indices, dtype=float)
    shift = 0.5 if berry_phase else 0.0
    return 2 * np.pi * (l + shift - phi) / perimeter_nm


def subband_indices(energy_scale_meV: float, flux_quanta: ArrayLike, perimeter_nm: float,
                    unit_meV_per_inv_nm: float, power: int) -> np.ndarray:
    """Subband indices l that cover |E| <= ``energy_scale_meV`` at every requested flux.

    ``unit_meV_per_inv_nm`` and ``power`` describe the dispersion E = unit · q**power
    (ħv and 1 for Dirac, ħ²/2m* and 2 for parabolic).
    """
    qmax = (abs(energy_scale_meV) / unit_meV_per_inv_nm) ** (1.0 / power)
    phi_max = float(np.max(np.abs(flux_quanta))) if np.size(flux_quanta) else 0.0
    return angular_indices(int(np.ceil(qmax * perimeter_nm / (2 * np.pi) + phi_max)) + 2)


def dirac_subband_bottoms_meV(flux_quanta: ArrayLike, perimeter_nm: float, hbar_v_meV_nm: float,
                              indices: ArrayLike, berry_phase: bool = True) -> np.ndarray:
    """Energy ħv|q_l| of the bottom of each Dirac subband (positive branch), shape ``flux + (l,)``."""
    q = transverse_momenta_per_nm(flux_quanta, perimeter_nm, berry_phase, indices)
    return hbar_v_meV_nm * np.abs(q)


def dirac_subbands_meV(k_per_nm: ArrayLike, flux_quanta: ArrayLike, perimeter_nm: float,
                       hbar_v_meV_nm: float, indices: ArrayLike, berry_phase: bool = True) -> np.ndarray:
    """Positive branch E_l(k) = ħv (k² + q_l²)^(1/2); shape ``flux + (l,) + k``."""
    q = transverse_momenta_per_nm(flux_quanta, perimeter_nm, berry_phase, indices)
    k = np.asarray(k_per_nm, dtype=float)
    return hbar_v_meV_nm * np.sqrt(q[..., None] ** 2 + k**2)


def parabolic_subband_bottoms_meV(flux_quanta: ArrayLike, perimeter_nm: float, mass_ratio: float,
                                  indices: ArrayLike, berry_phase: bool = False) -> np.ndarray:
    """Energy ħ²q_l²/(2m*) of the bottom of each trivial subband, shape ``flux + (l,)``."""
    q = transverse_momenta_per_nm(flux_quanta, perimeter_nm, berry_phase, indices)
    return HBAR2_OVER_2ME_MEV_NM2 / mass_ratio * q**2


def dirac_channel_count(energy_meV: ArrayLike, flux_quanta: ArrayLike, perimeter_nm: float,
                        hbar_v_meV_nm: float, berry_phase: bool = True) -> np.ndarray:
    """Number of open channels N(E, Φ) of a clean Dirac tube.

    Parameters
    ----------
    energy_meV : array_like, shape (n_E,)
        Fermi energies from the Dirac point; the count is symmetric in E (electron and hole branches).
    flux_quanta : array_like, shape (n_Φ,)
        Axial flux in units of h/e.
    perimeter_nm, hbar_v_meV_nm : float
        Perimeter of the surface-state contour and ħv.
    berry_phase : bool
        True for the topological surface (antiperiodic, l + 1/2), False for a Dirac tube without it.

    Returns
    -------
    ndarray of int, shape (n_Φ, n_E)
    """
    e = np.abs(np.atleast_1d(np.asarray(energy_meV, dtype=float)))
    phi = np.atleast_1d(np.asarray(flux_quanta, dtype=float))
    idx = subband_indices(float(e.max(initial=0.0)), phi, perimeter_nm, hbar_v_meV_nm, 1)
    bottoms = dirac_subband_bottoms_meV(phi, perimeter_nm, hbar_v_meV_nm, idx, berry_phase)
    return np.sum(bottoms[:, :, None] < e[None, None, :], axis=1)


def parabolic_channel_count(energy_meV: ArrayLike, flux_quanta: ArrayLike, perimeter_nm: float,
                            mass_ratio: float, spin_degeneracy: int = 2) -> np.ndarray:
    """Number of open channels N(E, Φ) of a clean trivial tube, spin included; shape (n_Φ, n_E)."""
    e = np.atleast_1d(np.asarray(energy_meV, dtype=float))
    phi = np.atleast_1d(np.asarray(flux_quanta, dtype=float))
    unit = HBAR2_OVER_2ME_MEV_NM2 / mass_ratio
    idx = subband_indices(float(max(e.max(initial=0.0), 0.0)), phi, perimeter_nm, unit, 2)
    bottoms = parabolic_subband_bottoms_meV(phi, perimeter_nm, mass_ratio, idx)
    return spin_degeneracy * np.sum(bottoms[:, :, None] < e[None, None, :], axis=1)


def dirac_gap_meV(perimeter_nm: float, hbar_v_meV_nm: float) -> float:
    """Full gap 2πħv/P around the Dirac point of a topological tube at zero flux.

    The l = 0, −1 pair sits at ±πħv/P = ±ħv/(2R) for a circle (R the radius of the contour).
    """
    return 2 * np.pi * hbar_v_meV_nm / perimeter_nm


def subband_spacing_meV(perimeter_nm: float, hbar_v_meV_nm: float) -> float:
    """Spacing 2πħv/P between consecutive Dirac subband bottoms at large l."""
    return 2 * np.pi * hbar_v_meV_nm / perimeter_nm
