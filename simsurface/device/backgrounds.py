"""Smooth magnetoconductance backgrounds of a real trace: the weak-(anti)localization cusp and its field scale.

Interference of time-reversed paths corrects the conductance by an amount that a field suppresses. The sign and
size are set by one number α: α = 1 for a spin-degenerate surface without spin–orbit coupling (weak
localization, the conductance rises with field), α = −1/2 for a single Dirac surface or strong spin–orbit
coupling (weak antilocalization, a cusp-shaped maximum at B = 0) (Hikami, Larkin & Nagaoka, Prog. Theor.
Phys. 63, 707 (1980), "HLN").

* Two dimensions (a surface wider than L_phi), field component B⊥ normal to the surface (HLN):
      Δσ(B) = (α/π)(e²/h) [ψ(1/2 + B_φ/B) − ln(B_φ/B)],   B_φ = ħ/(4eL_phi²),   ΔG = Δσ·W/L.
* Quasi one dimension (wire width W < L_phi; Altshuler & Aronov, JETP Lett. 33, 499 (1981); Beenakker & van
  Houten, PRB 38, 3232 (1988)):
      δG = −2α (e²/h) L_eff/L,   L_eff = (L_phi⁻² + L_B⁻²)^{−1/2},
  with the magnetic dephasing length of a field threading a strip of width W,
      L_B = l_m [1 − 1/(1 + W²/(3 l_m²))]^{−1/2},   l_m = sqrt(ħ/eB)
  (→ sqrt(3) l_m²/W for W ≪ l_m; from memory, Beenakker & van Houten 1988). ΔG(B) = δG(B) − δG(0).
  For a surface wrapped around a wire both field components dephase: the axial one through the thickness t_s of
  the surface-state layer (W = t_s; the same formula as a thin film in a parallel field, Altshuler & Aronov
  1981), the perpendicular one across the wire (W = wire width). Their rates add: L_B⁻² = L_B∥⁻² + L_B⊥⁻².
  The periodic (Altshuler–Aronov–Spivak) part in the axial flux is not in this background: the simulated tube
  carries it.

Classical (Drude, two-carrier) magnetoresistance lives in :mod:`simsurface.device.bulk_channel`.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as _c
from scipy.special import digamma

__all__ = ["ALPHA_ANTILOCALIZATION", "ALPHA_LOCALIZATION", "magnetic_length_nm", "magnetic_dephasing_length_nm",
           "hln_magnetoconductance_e2h", "quasi1d_correction_e2h", "quasi1d_magnetoconductance_e2h",
           "wire_magnetoconductance_e2h"]

#: α of a single Dirac surface or strong spin–orbit coupling (antilocalization).
ALPHA_ANTILOCALIZATION = -0.5
#: α of a spin-degenerate surface without spin–orbit coupling (localization).
ALPHA_LOCALIZATION = 1.0


def magnetic_length_nm(field_T: ArrayLike) -> np.ndarray:
    """l_m = sqrt(ħ/(e|B|)) in nm (inf at B = 0)."""
    b = np.abs(np.asarray(field_T, dtype=float))
    with np.errstate(divide="ignore"):
        return np.sqrt(_c.hbar / (_c.e * b)) * 1e9


def magnetic_dephasing_length_nm(field_T: ArrayLike, width_nm: float) -> np.ndarray:
    """L_B = l_m [1 − 1/(1 + W²/3l_m²)]^{−1/2} in nm for a field threading a strip of width W (inf at B = 0)."""
    lm = magnetic_length_nm(field_T)
    x = width_nm**2 / (3.0 * lm**2)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = lm / np.sqrt(x / (1.0 + x))
    return np.where(np.isfinite(lm), out, np.inf)


def hln_magnetoconductance_e2h(field_perp_T: ArrayLike, coherence_length_nm: float, alpha: float,
                               width_nm: float, length_nm: float) -> np.ndarray:
    """ΔG(B) = G(B) − G(0) in e²/h of a 2D surface of width W and length L (HLN, module docstring)."""
    b = np.abs(np.asarray(field_perp_T, dtype=float))
    b_phi = _c.hbar / (4 * _c.e * (coherence_length_nm * 1e-9) ** 2)
    out = np.zeros_like(b)
    nz = b > 0
    x = b_phi / b[nz]
    out[nz] = alpha / math.pi * (digamma(0.5 + x) - np.log(x))
    return out * width_nm / length_nm


def quasi1d_correction_e2h(field_T_by_width: list[tuple[ArrayLike, float]], coherence_length_nm: float,
                           alpha: float, length_nm: float) -> np.ndarray:
    """δG = −2α (e²/h) L_eff/L with L_eff⁻² = L_phi⁻² + Σ L_B(B_k, W_k)⁻² (module docstring).

    Parameters
    ----------
    field_T_by_width : list of (field_T, width_nm)
        Each field component (arrays of equal shape, T) with the width it threads (nm).
    """
    rate = 1.0 / coherence_length_nm**2
    for field, width in field_T_by_width:
        rate = rate + 1.0 / magnetic_dephasing_length_nm(field, width) ** 2
    return -2.0 * alpha * np.sqrt(1.0 / rate) / length_nm


def quasi1d_magnetoconductance_e2h(field_T_by_width: list[tuple[ArrayLike, float]], coherence_length_nm: float,
                                   alpha: float, length_nm: float) -> np.ndarray:
    """ΔG(B) = δG(B) − δG(0) in e²/h (quasi-1D; zero at zero field)."""
    zero = [(np.zeros_like(np.asarray(f, dtype=float)), w) for f, w in field_T_by_width]
    return (quasi1d_correction_e2h(field_T_by_width, coherence_length_nm, alpha, length_nm)
            - quasi1d_correction_e2h(zero, coherence_length_nm, alpha, length_nm))


def wire_magnetoconductance_e2h(field_T: ArrayLike, angle_deg: float, coherence_length_nm: float, alpha: float,
                                length_nm: float, wire_width_nm: float, shell_thickness_nm: float) -> np.ndarray:
    """The (anti)localization background of a surface wrapped around a wire, field at ``angle_deg`` to the axis.

    Axial part B cos θ dephases through the surface layer (W = ``shell_thickness_nm``), the perpendicular part
    B sin θ across the wire (W = ``wire_width_nm``); quasi-1D form (valid for L_phi ≳ the wire's perimeter).

    Returns
    -------
    numpy.ndarray
        ΔG(B) = G(B) − G(0) in e²/h, shape of ``field_T``.
    """
    b = np.asarray(field_T, dtype=float)
    theta = math.radians(angle_deg)
    parts = [(b * math.cos(theta), shell_thickness_nm), (b * math.sin(theta), wire_width_nm)]
    return quasi1d_magnetoconductance_e2h(parts, coherence_length_nm, alpha, length_nm)
