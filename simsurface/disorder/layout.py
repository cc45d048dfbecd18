"""Where a model's sites are, in the terms that disorder generation needs.

A disorder realization is generated on a regular grid in physical coordinates (nm) and then read off at
the model's sites. :class:`SiteLayout` is that grid plus the map from sites to grid points, so the
generators do not need to know which model they serve:

* the surface tube: axes (x along the wire, s around the circumference, periodic), every grid point a site;
* a three-dimensional wire: axes (x, y, z), the sites of a cross-section a subset of the (y, z) grid,
  with surface sites marked (candidates for vacancies).

A model provides its layout with a method ``disorder_layout()`` (this room imports no model).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True, eq=False)
class SiteLayout:
    """The sites of a lattice wire model as points of a regular grid.

    Attributes
    ----------
    n_slices : int
        Slices along the wire (x axis).
    spacing_nm : tuple of float
        Grid spacing along x and along each transverse axis.
    transverse_shape : tuple of int
        Grid points of one cross-section along each transverse axis.
    periodic : tuple of bool
        Which transverse axes wrap around (the circumference of a tube).
    site_index : ndarray of int, shape (S, n_transverse_axes)
        Grid coordinates of the S sites of a slice, in the model's site order.
    surface : ndarray of bool, shape (S,)
        Sites on the surface (where vacancies may occur).
    """

    n_slices: int
    spacing_nm: tuple[float, ...]
    transverse_shape: tuple[int, ...]
    periodic: tuple[bool, ...]
    site_index: np.ndarray
    surface: np.ndarray

    def __post_init__(self) -> None:
        k = len(self.transverse_shape)
        if len(self.spacing_nm) != k + 1 or len(self.periodic) != k:
            raise ValueError("spacing_nm needs one entry for x and one per transverse axis; periodic one per transverse axis")
        if self.site_index.ndim != 2 or self.site_index.shape[1] != k:
            raise ValueError("site_index must have shape (S, number of transverse axes)")
        if self.surface.shape != (self.site_index.shape[0],):
            raise ValueError("surface must have one entry per site")

    @property
    def n_sites(self) -> int:
        """Sites per slice, S."""
        return int(self.site_index.shape[0])

    @property
    def grid_shape(self) -> tuple[int, ...]:
        return (self.n_slices, *self.transverse_shape)

    @property
    def min_spacing_nm(self) -> float:
        return float(min(self.spacing_nm))

    def at_sites(self, grid_values: np.ndarray) -> np.ndarray:
        """Values of a grid array (``grid_shape``) at the sites; shape (n_slices, S)."""
        return grid_values[(slice(None), *self.site_index.T)]

    @classmethod
    def tube(cls, n_slices: int, n_around: int, spacing_nm: float) -> "SiteLayout":
        """A surface tube: square grid (x, s), periodic around, every grid point a (surface) site."""
        return cls(n_slices, (spacing_nm, spacing_nm), (n_around,), (True,),
                   np.arange(n_around)[:, None], np.ones(n_around, bool))

    @classmethod
    def from_positions(cls, n_slices: int, spacing_nm: float, transverse_nm: np.ndarray,
                       surface: np.ndarray | None = None) -> "SiteLayout":
        """A cubic-lattice cross-section given by site positions (S, k) on a grid of spacing ``spacing_nm``."""
        pos = np.asarray(transverse_nm, float)
        idx = np.rint((pos - pos.min(axis=0)) / spacing_nm).astype(int)
        if not np.allclose(idx * spacing_nm + pos.min(axis=0), pos, atol=1e-6 * spacing_nm):
            raise ValueError("site positions are not on a grid of the given spacing")
        shape = tuple(int(v) for v in idx.max(axis=0) + 1)
        surf = np.ones(pos.shape[0], bool) if surface is None else np.asarray(surface, bool)
        return cls(n_slices, (spacing_nm,) * (pos.shape[1] + 1), shape, (False,) * pos.shape[1], idx, surf)


def layout_of(model) -> SiteLayout:
    """The :class:`SiteLayout` of a lattice model: its ``disorder_layout()``."""
    if not hasattr(model, "disorder_layout"):
        raise TypeError(f"{type(model).__name__} does not describe its sites for disorder (no disorder_layout())")
    return model.disorder_layout()
