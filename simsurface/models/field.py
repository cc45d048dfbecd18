"""The applied magnetic field on a wire's surface: direction, Zeeman term and the perpendicular orbital term.

Conventions (docs/fields.md derives them)
-----------------------------------------
Wire axis +x; the cross-section spans (y, z); the back gate / substrate lies towards −z. The field is
B = B (cos θ, sin θ sin α, sin θ cos α): θ (``angle_deg``) is the angle to the wire axis, α
(``azimuth_deg``) the direction of the perpendicular part around the wire (0: +z, 90°: +y).

* **Flux.** The models are parametrized by φ = B A/Φ0 (``flux_quanta``, B the signed magnitude, A the area
  enclosed by the surface-state contour); the Aharonov–Bohm (axial) flux is φ cos θ.
* **Zeeman.** H_Z = +(g μ_B/2) σ·B with the real spin σ and the surface g-factor g.
* **Perpendicular part, orbital.** In the gauge A = (z B_y − y B_z) e_x (curl A = (0, B_y, B_z); only the axial
  component, independent of x, so leads stay translation invariant) an electron (charge −e) has the kinetic
  axial momentum k_x + (e/ħ) A_x(s) = k_x + (2π/Φ0) A_x(s) on the contour point s.

The surface models work in the spin frame that turns with the surface: σ_1 = σ·e_s (e_s the counterclockwise
tangent seen from +x), σ_2 = σ·e_x, σ_3 = σ·n (n the outward normal), in which the Dirac surface of helicity
H = ħv (σ × k)·n reads ħv(σ_1 k_x + σ_2 q) with q the circumferential momentum measured clockwise (the
mode and lattice tubes' coordinate runs clockwise, s' = −s, which makes q_l = 2π(l + ½ − φ)/P for electrons).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from ..errors import InputError
from ..geometry import CrossSection, contour_points
from ..units import BOHR_MAGNETON_MEV_PER_T, FLUX_QUANTUM_T_NM2, field_T as _field_from_flux
from ..units import flux_quanta as _flux_from_field

__all__ = ["FieldConversion", "AppliedField", "SurfaceFieldTerms", "zeeman_flux_shift_quanta", "surface_field_terms", "describe_surface_terms"]


class FieldConversion:
    """Mixin of the surface models: their flux parameter φ = B A/Φ0 and the field B, with A = ``area_nm2``."""

    area_nm2: float

    def field_T(self, flux_quanta: ArrayLike) -> np.ndarray:
        """Field magnitude B (T) of the model's flux parameter φ = B A/Φ0."""
        return _field_from_flux(flux_quanta, self.area_nm2)

    def flux_quanta(self, field_T: ArrayLike) -> np.ndarray:
        """The model's flux parameter φ = B A/Φ0 of a field magnitude B in T (exact inverse of :meth:`field_T`)."""
        return _flux_from_field(field_T, self.area_nm2)


@dataclass(frozen=True)
class AppliedField:
    """Direction of the applied field and the surface g-factor (what a model needs besides the flux).

    Attributes
    ----------
    angle_deg : float
        θ, angle between the field and the wire axis, −90 … 90 degrees.
    azimuth_deg : float
        α, direction of the perpendicular part around the wire (0: +z, away from the back gate; 90: +y).
    g_factor : float
        Surface g-factor g in H_Z = +(g μ_B/2) σ·B (0: no Zeeman term).
    """

    angle_deg: float = 0.0
    azimuth_deg: float = 0.0
    g_factor: float = 0.0

    def __post_init__(self) -> None:
        if not (math.isfinite(self.angle_deg) and -90 <= self.angle_deg <= 90):
            raise InputError(f"field_angle_deg: {self.angle_deg} is not allowed; use -90 … 90 degrees "
                             "(the angle between the field and the wire axis)")
        if not math.isfinite(self.azimuth_deg):
            raise InputError(f"field_azimuth_deg: {self.azimuth_deg} is not a finite angle in degrees")
        if not (math.isfinite(self.g_factor) and abs(self.g_factor) <= 1000):
            raise InputError(f"surface_g_factor: {self.g_factor} is not allowed; use a number between -1000 and 1000")

    @property
    def axial_fraction(self) -> float:
        """cos θ: the axial (flux-threading) part of the field; exactly 1 at θ = 0."""
        return 1.0 if self.angle_deg == 0 else math.cos(math.radians(self.angle_deg))

    @property
    def tilted(self) -> bool:
        return self.angle_deg != 0

    @property
    def is_axial_orbital_only(self) -> bool:
        """True when the field acts only through the axial flux (today's models, bitwise)."""
        return self.angle_deg == 0 and self.g_factor == 0

    def unit_vector(self) -> np.ndarray:
        """(x, y, z) components of the field direction."""
        th, al = math.radians(self.angle_deg), math.radians(self.azimuth_deg)
        return np.array([self.axial_fraction, math.sin(th) * math.sin(al), math.sin(th) * math.cos(al)])

    def describe(self) -> dict:
        return {"field_angle_deg": self.angle_deg, "field_azimuth_deg": self.azimuth_deg,
                "surface_g_factor": self.g_factor}


def zeeman_flux_shift_quanta(g_factor: float, axial_field_T: ArrayLike, perimeter_nm: float,
                             hbar_v_meV_nm: float) -> np.ndarray:
    """Axial Zeeman term of a Dirac surface on a cylinder expressed as a flux: δφ = g μ_B B_x P/(4πħv).

    The effective Aharonov–Bohm flux of the surface is φ_ax − δφ (for the helicity H = ħv(σ × k)·n and
    electrons; docs/fields.md): the Zeeman term (g μ_B B_x/2) σ·e_x shifts the circumferential momentum
    by −g μ_B B_x/(2ħv) everywhere on the contour, whatever its shape.

    Parameters
    ----------
    g_factor : float
    axial_field_T : array_like
        B cos θ in T.
    perimeter_nm, hbar_v_meV_nm : float

    Returns
    -------
    ndarray, shape of ``axial_field_T``, in units of h/e
    """
    b = np.asarray(axial_field_T, dtype=float)
    return g_factor * BOHR_MAGNETON_MEV_PER_T * b * perimeter_nm / (4 * np.pi * hbar_v_meV_nm)


@dataclass(frozen=True, eq=False)
class SurfaceFieldTerms:
    """The s-dependent field terms at points of the contour, in the turning spin frame (see module notes).

    Attributes
    ----------
    zeeman_meV : ndarray, shape (n, 3)
        (g μ_B/2)(B·e_s, B·e_x, B·n): coefficients of σ_1, σ_2, σ_3.
    axial_momentum_per_nm : ndarray, shape (n,)
        (2π/Φ0) A_x(s): the shift of the axial momentum by the perpendicular field.
    zeeman_lab_meV : ndarray, shape (3,)
        (g μ_B/2)(B_x, B_y, B_z): coefficients of the laboratory-frame σ_x, σ_y, σ_z.
    """

    zeeman_meV: np.ndarray
    axial_momentum_per_nm: np.ndarray
    zeeman_lab_meV: np.ndarray


def surface_field_terms(field: AppliedField, field_T: float, section: CrossSection | None, perimeter_nm: float,
                        s_nm: ArrayLike) -> SurfaceFieldTerms:
    """Zeeman and perpendicular orbital terms at contour points ``s_nm`` (counterclockwise arc length, s = 0 at
    the bottom point) for the field magnitude ``field_T``.

    Parameters
    ----------
    field : AppliedField
    field_T : float
        Signed magnitude B of the applied field in T.
    section : CrossSection or None
        Contour shape (None: a circle of ``perimeter_nm``).
    perimeter_nm : float
    s_nm : array_like, shape (n,)
    """
    pts = contour_points(section, s_nm, perimeter_nm)
    b = float(field_T) * field.unit_vector()                       # (B_x, B_y, B_z)
    half_g = 0.5 * field.g_factor * BOHR_MAGNETON_MEV_PER_T
    b_s = pts.tangent @ b[1:]
    b_n = pts.normal @ b[1:]
    zeeman = half_g * np.stack([b_s, np.full_like(b_s, b[0]), b_n], axis=-1)
    a_x = pts.z_nm * b[1] - pts.y_nm * b[2]                           # T nm
    return SurfaceFieldTerms(zeeman, 2 * np.pi * a_x / FLUX_QUANTUM_T_NM2, half_g * b)


def describe_surface_terms(field: AppliedField, section: CrossSection | None,
                           circumferential_potential_meV: tuple[float, ...] | None = None,
                           rashba_meV_nm: float = 0.0) -> dict:
    """Provenance entries of a surface model's field, potential and Rashba terms (empty when all are off)."""
    out = {} if field.is_axial_orbital_only else field.describe()
    if circumferential_potential_meV is not None:
        out["circumferential_potential_meV"] = list(circumferential_potential_meV)
    if rashba_meV_nm:
        out["rashba_meV_nm"] = rashba_meV_nm
    if out and section is not None:
        out["contour"] = section.describe()
    return out
