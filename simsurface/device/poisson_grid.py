"""Finite differences for the Poisson equation of a wire's cross-section on a graded rectangular grid.

Box integration (finite volumes on the dual grid, vertex-centred): with the relative permittivity ε_r constant on
each grid cell, the flux through the dual-cell face between two neighbouring nodes is the height-weighted mean of
the two adjacent cells' ε_r times the difference quotient. This is exact for interfaces that lie on grid lines
(the planar gate stack) and first order for curved ones (the wire's surface). Assembled as a weighted graph
Laplacian L (symmetric, positive semi-definite) so that, for charges Q per unit length collected at the nodes,

    L φ = (e/ε0) Q,      φ in V, lengths in nm, Q in elementary charges per nm.

Point charges and point potentials on a curve (the surface-state contour) couple to the grid through the same
bilinear weights (deposit with B, interpolate with Bᵀ), which keeps the contour-to-contour response symmetric.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy import constants as _c

__all__ = ["E_OVER_EPS0_V_NM", "graded_axis_nm", "Grid2D", "cell_permittivity", "laplacian", "bilinear_weights"]

#: e/ε0 in V nm: the potential scale of one elementary charge per nm (per unit wire length).
E_OVER_EPS0_V_NM: float = _c.e / _c.epsilon_0 * 1e9


def graded_axis_nm(breakpoints_nm: list[float], zones: list[tuple[float, float, float]], growth: float = 1.15,
                   samples: int = 4000) -> np.ndarray:
    """Grid coordinates through every breakpoint with a spacing that is fine in ``zones`` and grows outside.

    The local spacing is h(x) = min over zones (lo, hi, spacing) of spacing + (growth − 1)·dist(x, [lo, hi]),
    i.e. consecutive spacings grow by about the factor ``growth`` away from every zone; each interval between
    breakpoints holds a whole number of steps.

    Returns
    -------
    numpy.ndarray
        Sorted coordinates in nm, shape (n,), including all breakpoints.
    """
    points = sorted(set(float(b) for b in breakpoints_nm))
    out = [points[0]]
    for a, b in zip(points[:-1], points[1:]):
        x = np.linspace(a, b, samples)
        h = np.full_like(x, np.inf)
        for lo, hi, spacing in zones:
            dist = np.maximum(0.0, np.maximum(lo - x, x - hi))
            h = np.minimum(h, spacing + (growth - 1.0) * dist)
        inv_h = 1.0 / h
        u = np.concatenate([[0.0], np.cumsum(0.5 * (inv_h[1:] + inv_h[:-1]) * np.diff(x))])
        n = max(1, int(np.ceil(u[-1] - 1e-9)))
        out.extend(np.interp(np.linspace(0.0, u[-1], n + 1)[1:], u, x))
        out[-1] = b
    return np.asarray(out)


@dataclass(frozen=True)
class Grid2D:
    """Tensor grid of nodes (y_i, z_k); node index i·n_z + k."""

    y_nm: np.ndarray
    z_nm: np.ndarray

    @property
    def shape(self) -> tuple[int, int]:
        return self.y_nm.size, self.z_nm.size

    @property
    def size(self) -> int:
        return self.y_nm.size * self.z_nm.size

    def index(self, i: np.ndarray, k: np.ndarray) -> np.ndarray:
        return np.asarray(i) * self.z_nm.size + np.asarray(k)


def cell_permittivity(grid: Grid2D, permittivity: Callable[[np.ndarray, np.ndarray], np.ndarray],
                      subsamples: int = 4) -> np.ndarray:
    """Relative permittivity of every grid cell, the mean over subsamples² points inside it.

    Parameters
    ----------
    permittivity : callable
        ε_r(y_nm, z_nm) on arrays of equal shape.

    Returns
    -------
    numpy.ndarray
        Shape (n_y − 1, n_z − 1).
    """
    frac = (np.arange(subsamples) + 0.5) / subsamples
    y0, z0 = grid.y_nm[:-1], grid.z_nm[:-1]
    dy, dz = np.diff(grid.y_nm), np.diff(grid.z_nm)
    total = np.zeros((y0.size, z0.size))
    for fy in frac:
        for fz in frac:
            yy, zz = np.meshgrid(y0 + fy * dy, z0 + fz * dz, indexing="ij")
            total += permittivity(yy, zz)
    return total / subsamples**2


def laplacian(grid: Grid2D, eps_cells: np.ndarray) -> sp.csr_matrix:
    """Box-integration operator L (shape (N, N), N = n_y·n_z) with ∮ε_r ∂φ/∂n = −(L φ) per dual cell.

    Outer boundaries are insulating (zero normal flux) unless their nodes are fixed as Dirichlet nodes later.
    """
    ny, nz = grid.shape
    dy, dz = np.diff(grid.y_nm), np.diff(grid.z_nm)
    eps_z = np.zeros((ny - 1, nz + 1))
    eps_z[:, 1:-1] = eps_cells
    dz_pad = np.concatenate([[0.0], dz, [0.0]])
    # edges along y between (i, k) and (i + 1, k): dual face of height (dz[k−1] + dz[k])/2
    coef_y = 0.5 * (eps_z[:, :-1] * dz_pad[:-1] + eps_z[:, 1:] * dz_pad[1:]) / dy[:, None]
    eps_y = np.zeros((ny + 1, nz - 1))
    eps_y[1:-1, :] = eps_cells
    dy_pad = np.concatenate([[0.0], dy, [0.0]])
    coef_z = 0.5 * (eps_y[:-1, :] * dy_pad[:-1, None] + eps_y[1:, :] * dy_pad[1:, None]) / dz[None, :]
    i, k = np.meshgrid(np.arange(ny - 1), np.arange(nz), indexing="ij")
    a_y, b_y = grid.index(i, k).ravel(), grid.index(i + 1, k).ravel()
    i, k = np.meshgrid(np.arange(ny), np.arange(nz - 1), indexing="ij")
    a_z, b_z = grid.index(i, k).ravel(), grid.index(i, k + 1).ravel()
    a = np.concatenate([a_y, a_z])
    b = np.concatenate([b_y, b_z])
    w = np.concatenate([coef_y.ravel(), coef_z.ravel()])
    rows = np.concatenate([a, b, a, b])
    cols = np.concatenate([a, b, b, a])
    vals = np.concatenate([w, w, -w, -w])
    return sp.csr_matrix((vals, (rows, cols)), shape=(grid.size, grid.size))


def bilinear_weights(grid: Grid2D, y_nm: np.ndarray, z_nm: np.ndarray) -> sp.csc_matrix:
    """B (shape (N, M)): bilinear weights of M points on the four nodes of the cell that holds each point."""
    y_nm, z_nm = np.asarray(y_nm, float), np.asarray(z_nm, float)
    i = np.clip(np.searchsorted(grid.y_nm, y_nm, side="right") - 1, 0, grid.y_nm.size - 2)
    k = np.clip(np.searchsorted(grid.z_nm, z_nm, side="right") - 1, 0, grid.z_nm.size - 2)
    u = (y_nm - grid.y_nm[i]) / (grid.y_nm[i + 1] - grid.y_nm[i])
    v = (z_nm - grid.z_nm[k]) / (grid.z_nm[k + 1] - grid.z_nm[k])
    cols = np.arange(y_nm.size)
    rows = np.concatenate([grid.index(i, k), grid.index(i + 1, k), grid.index(i, k + 1), grid.index(i + 1, k + 1)])
    vals = np.concatenate([(1 - u) * (1 - v), u * (1 - v), (1 - u) * v, u * v])
    return sp.csc_matrix((vals, (rows, np.tile(cols, 4))), shape=(grid.size, y_nm.size))
