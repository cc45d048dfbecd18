"""Wire geometry: cross-sections, surface-state depth, length and contacts.

The surface state lives a distance ``depth_nm`` below the physical surface. The contour at that depth
sets both the area that encloses the Aharonov–Bohm flux and the perimeter that quantizes the transverse
momentum. For a w × t rectangle the inward offset contour is a (w − 2d) × (t − 2d) rectangle; for a circle
of radius R it is a circle of radius R − d.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError

Shape = Literal["circle", "rectangle"]


def enclosed_area_nm2(shape: Shape, width_nm: ArrayLike, thickness_nm: ArrayLike, depth_nm: ArrayLike) -> np.ndarray:
    """Area in nm² enclosed by the contour at ``depth_nm`` below the surface.

    For ``circle`` the width is the diameter and ``thickness_nm`` is ignored.
    """
    w, t, d = (np.asarray(x, dtype=float) for x in (width_nm, thickness_nm, depth_nm))
    if shape == "circle":
        return np.pi * (w / 2 - d) ** 2
    return (w - 2 * d) * (t - 2 * d)


def perimeter_nm(shape: Shape, width_nm: ArrayLike, thickness_nm: ArrayLike, depth_nm: ArrayLike) -> np.ndarray:
    """Length in nm of the contour at ``depth_nm`` below the surface."""
    w, t, d = (np.asarray(x, dtype=float) for x in (width_nm, thickness_nm, depth_nm))
    if shape == "circle":
        return 2 * np.pi * (w / 2 - d)
    return 2 * ((w - 2 * d) + (t - 2 * d))


def square_side_nm(area_nm2: ArrayLike) -> np.ndarray:
    """Side of the square with the given area."""
    return np.sqrt(np.asarray(area_nm2, dtype=float))


def circle_diameter_nm(area_nm2: ArrayLike) -> np.ndarray:
    """Diameter of the circle with the given area."""
    return 2 * np.sqrt(np.asarray(area_nm2, dtype=float) / np.pi)


def depth_from_area_nm(shape: Shape, width_nm: float, thickness_nm: float, area_nm2: float) -> float:
    """Surface-state depth d that makes the enclosed area equal ``area_nm2``.

    Solves π(w/2 − d)² = A (circle) or (w − 2d)(t − 2d) = A (rectangle) for the root with
    0 ≤ w − 2d. A negative result means the measured area exceeds the nominal cross-section.
    """
    if shape == "circle":
        return width_nm / 2 - math.sqrt(area_nm2 / math.pi)
    # 4d² − 2(w + t)d + (wt − A) = 0, smaller root keeps both sides positive
    b = -2.0 * (width_nm + thickness_nm)
    c = width_nm * thickness_nm - area_nm2
    disc = b * b - 16.0 * c
    return (-b - math.sqrt(disc)) / 8.0


@dataclass(frozen=True)
class CrossSection:
    """A wire cross-section and the depth of its surface state.

    Attributes
    ----------
    shape : {"circle", "rectangle"}
    width_nm : float
        Diameter for a circle, width for a rectangle.
    thickness_nm : float
        Thickness of a rectangle (equal to the diameter for a circle).
    depth_nm : float
        Depth of the surface state below the physical surface.
    """

    shape: Shape
    width_nm: float
    thickness_nm: float
    depth_nm: float = 0.0

    def __post_init__(self) -> None:
        if self.shape not in ("circle", "rectangle"):
            raise InputError(f"cross_section: {self.shape!r} is not allowed; use 'circle' or 'rectangle'")
        if self.width_nm <= 0 or self.thickness_nm <= 0:
            raise InputError("cross-section sizes must be > 0 nm")
        if self.depth_nm < 0 or 2 * self.depth_nm >= min(self.width_nm, self.thickness_nm):
            raise InputError(
                f"depth_nm: {self.depth_nm} nm must be >= 0 and below half the smallest side "
                f"({min(self.width_nm, self.thickness_nm) / 2:g} nm)")

    @classmethod
    def circle(cls, diameter_nm: float, depth_nm: float = 0.0) -> "CrossSection":
        return cls("circle", diameter_nm, diameter_nm, depth_nm)

    @classmethod
    def rectangle(cls, width_nm: float, thickness_nm: float, depth_nm: float = 0.0) -> "CrossSection":
        return cls("rectangle", width_nm, thickness_nm, depth_nm)

    @property
    def area_nm2(self) -> float:
        """Area enclosed by the surface state (at ``depth_nm``)."""
        return float(enclosed_area_nm2(self.shape, self.width_nm, self.thickness_nm, self.depth_nm))

    @property
    def perimeter_nm(self) -> float:
        """Perimeter of the surface state (at ``depth_nm``)."""
        return float(perimeter_nm(self.shape, self.width_nm, self.thickness_nm, self.depth_nm))

    @property
    def geometric_area_nm2(self) -> float:
        """Area of the physical cross-section (depth zero)."""
        return float(enclosed_area_nm2(self.shape, self.width_nm, self.thickness_nm, 0.0))

    def describe(self) -> str:
        if self.shape == "circle":
            size = f"circle, diameter {self.width_nm:g} nm"
        else:
            size = f"rectangle {self.width_nm:g} nm x {self.thickness_nm:g} nm"
        return f"{size}, surface state {self.depth_nm:g} nm deep"


@dataclass(frozen=True)
class Contacts:
    """How the wire is contacted.

    ``matched``: semi-infinite clean leads that continue the same tube (same flux, same Fermi level);
    ``doped``: the same tube with its band shifted down by ``doping_meV``, a model of heavily doped
    or metal-covered contact regions that carry many channels.
    """

    kind: Literal["matched", "doped"] = "matched"
    doping_meV: float = 0.0


@dataclass(frozen=True)
class Wire:
    """A surface-conducting nanowire device."""

    section: CrossSection
    length_nm: float
    surface: Literal["topological", "trivial"] = "topological"
    contacts: Contacts = Contacts()

    def __post_init__(self) -> None:
        if self.length_nm <= 0:
            raise InputError(f"length_nm: must be > 0 nm (got {self.length_nm})")
        if self.surface not in ("topological", "trivial"):
            raise InputError(f"surface: {self.surface!r} is not allowed; use 'topological' or 'trivial'")


@dataclass(frozen=True, eq=False)
class ContourPoints:
    """Points of a surface-state contour and its local frame (cross-section plane (y, z), wire axis +x).

    Arc length s starts at the bottom point (nearest z → −∞, the back-gate side) and runs counterclockwise seen
    from +x (from the bottom towards +y). Positions are relative to the contour's centre.

    Attributes
    ----------
    s_nm, y_nm, z_nm : ndarray, shape (n,)
    tangent : ndarray, shape (n, 2)
        Unit tangent e_s (direction of increasing s) as (y, z) components.
    normal : ndarray, shape (n, 2)
        Outward unit normal n = e_s × e_x as (y, z) components.
    """

    s_nm: np.ndarray
    y_nm: np.ndarray
    z_nm: np.ndarray
    tangent: np.ndarray
    normal: np.ndarray


def _contour_yz(section: "CrossSection | None", perimeter_nm_: float, s_nm: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    p = perimeter_nm_ if section is None else section.perimeter_nm
    s = np.mod(s_nm, p)
    if section is None or section.shape == "circle":
        radius = p / (2 * np.pi)
        theta = 2 * np.pi * s / p
        return radius * np.sin(theta), -radius * np.cos(theta)
    half_w = section.width_nm / 2 - section.depth_nm
    half_t = section.thickness_nm / 2 - section.depth_nm
    # bottom centre → bottom right → top right → top left → bottom left → bottom centre
    corners_s = np.cumsum([0.0, half_w, 2 * half_t, 2 * half_w, 2 * half_t, half_w])
    corners_y = np.array([0.0, half_w, half_w, -half_w, -half_w, 0.0])
    corners_z = np.array([-half_t, -half_t, half_t, half_t, -half_t, -half_t])
    return np.interp(s, corners_s, corners_y), np.interp(s, corners_s, corners_z)


def contour_points(section: "CrossSection | None", s_nm: ArrayLike, perimeter_nm_: float | None = None) -> ContourPoints:
    """Positions, tangents and outward normals of the surface-state contour at arc lengths ``s_nm``.

    Parameters
    ----------
    section : CrossSection or None
        The cross-section (contour at its ``depth_nm``); None: a circle of perimeter ``perimeter_nm_``.
    s_nm : array_like, shape (n,)
        Arc lengths (taken modulo the perimeter).
    perimeter_nm_ : float, optional
        Required when ``section`` is None.

    Notes
    -----
    The tangent is the direction of the chord between s − h and s + h with h = 1e-6 P: at a rectangle's corner
    it is the bisector of the two sides (a lattice site on a corner sees the mean direction).
    """
    if section is None and perimeter_nm_ is None:
        raise ValueError("contour_points: give a section or a perimeter")
    s = np.asarray(s_nm, dtype=float)
    p = float(perimeter_nm_ if section is None else section.perimeter_nm)
    y, z = _contour_yz(section, p, s)
    h = 1e-6 * p
    y1, z1 = _contour_yz(section, p, s + h)
    y0, z0 = _contour_yz(section, p, s - h)
    t = np.stack([y1 - y0, z1 - z0], axis=-1)
    t /= np.linalg.norm(t, axis=-1, keepdims=True)
    normal = np.stack([t[..., 1], -t[..., 0]], axis=-1)      # e_s × e_x in the (y, z) plane
    return ContourPoints(s, y, z, t, normal)
