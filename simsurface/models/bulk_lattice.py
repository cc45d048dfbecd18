"""The four-band model on a cubic lattice: real-space blocks, Bloch bands, slabs and validity window.

Discretization on a cubic lattice of spacing a (same in x, y, z)::

    k_i -> sin(k_i a) / a,        k_i² -> 2 (1 − cos k_i a) / a²

which in real space is an on-site block and one hopping block per direction,

    H_0   = [C + 2(2 D2 + D1)/a²] + [M0 − 2(2 B2 + B1)/a²] τ_z
    T_i   = ⟨r| H |r + a e_i⟩ = −D_i/a² + (B_i/a²) τ_z + (A_i / 2ia) Γ_i,
    Γ_x = τ_x s_x,  Γ_y = τ_x s_y,  Γ_z = τ_x s_z

(matrix convention of :mod:`simsurface.models.bulk_params`). The B terms act as the Wilson mass that
keeps the fermion doublers at the zone edge out of the low-energy window: at a zone-edge point the
mass is M0 − 4 B_i/a² < 0 (normal ordering), so the lattice has the band inversion at Γ only when
a < 2 (B_i / M0)^(1/2) for every direction (:func:`max_spacing_nm`).

Validity window (the rule used to choose a): the lattice band structure is trusted for energies at
which every bulk state, of the lattice model and of the continuum model alike, has |k_i a| ≤ κ in every
direction (κ = 0.6: sin(κ)/κ = 0.94 and 2(1 − cos κ)/κ² = 0.97, i.e. lattice k and k² within 6 % and 3 %
of the continuum). :func:`validity_window_meV` computes that window on a k grid.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from .bulk_params import BulkParameters

#: |k a| below which the lattice reproduces the continuum dispersion (see module docstring)
VALIDITY_KAPPA = 0.6
AXES = ("x", "y", "z")

_S = {
    0: np.eye(2, dtype=complex),
    "x": np.array([[0, 1], [1, 0]], dtype=complex),
    "y": np.array([[0, -1j], [1j, 0]], dtype=complex),
    "z": np.array([[1, 0], [0, -1]], dtype=complex),
}
#: τ_z and the three Γ_i = τ_x s_i as 4x4 matrices, index = 2 * spin + orbital
TAU_Z = np.kron(_S[0], _S["z"])
GAMMA = {axis: np.kron(_S[axis], _S["x"]) for axis in AXES}
IDENTITY = np.eye(4, dtype=complex)


def onsite_block(params: BulkParameters, spacing_nm: float) -> np.ndarray:
    """H_0 of one site, shape (4, 4), meV."""
    a2 = spacing_nm**2
    eps = params.C_meV + 2.0 * (2.0 * params.D2_meV_nm2 + params.D1_meV_nm2) / a2
    mass = params.M0_meV - 2.0 * (2.0 * params.B2_meV_nm2 + params.B1_meV_nm2) / a2
    return eps * IDENTITY + mass * TAU_Z


def hopping_block(params: BulkParameters, spacing_nm: float, axis: str) -> np.ndarray:
    """T_axis = ⟨r|H|r + a e_axis⟩, shape (4, 4), meV."""
    d, b, a_coef = params.along(axis)
    a = spacing_nm
    return (-d / a**2) * IDENTITY + (b / a**2) * TAU_Z + (a_coef / (2j * a)) * GAMMA[axis]


def bloch_hamiltonian_meV(params: BulkParameters, k_per_nm: np.ndarray, spacing_nm: float | None) -> np.ndarray:
    """Bulk H(k), shape ``k.shape[:-1] + (4, 4)``.

    Parameters
    ----------
    k_per_nm : ndarray, shape (..., 3)
        (k_x, k_y, k_z) in 1/nm.
    spacing_nm : float or None
        Lattice spacing; ``None`` gives the continuum k·p Hamiltonian. The lattice version is the
        Fourier transform of :func:`onsite_block` and :func:`hopping_block`, i.e. of the real-space
        model that the wire is built from.
    """
    k = np.asarray(k_per_nm, dtype=float)
    h = np.zeros(k.shape[:-1] + (4, 4), dtype=complex)
    if spacing_nm is None:
        h += params.C_meV * IDENTITY + params.M0_meV * TAU_Z
        for i, axis in enumerate(AXES):
            d, b, a_coef = params.along(axis)
            ki = k[..., i, None, None]
            h += ki**2 * (d * IDENTITY - b * TAU_Z) + a_coef * ki * GAMMA[axis]
        return h
    h += onsite_block(params, spacing_nm)
    for i, axis in enumerate(AXES):
        t = hopping_block(params, spacing_nm, axis)
        phase = np.exp(1j * k[..., i] * spacing_nm)[..., None, None]
        h += phase * t + np.conj(phase) * t.conj().T
    return h


def max_spacing_nm(params: BulkParameters) -> float:
    """Largest a with the band inversion at Γ only: a < 2 (min B_i / M0)^(1/2)."""
    return 2.0 * math.sqrt(min(params.B1_meV_nm2, params.B2_meV_nm2) / params.M0_meV)


@lru_cache(maxsize=256)
def validity_window_meV(params: BulkParameters, spacing_nm: float, kappa: float = VALIDITY_KAPPA,
                        points: int = 25) -> tuple[float, float]:
    """Energy window (lo, hi) in meV, on the model's absolute scale, where the lattice is trusted.

    Bulk states with some |k_i a| > κ (lattice or continuum) lie below ``lo`` or above ``hi``.
    The lower two bands give ``lo`` and the upper two ``hi``. Evaluated on a k grid of ``points``³
    (lattice: the Brillouin zone; continuum: |k_i| ≤ 4π/a).
    """
    lo, hi = -np.inf, np.inf
    for spacing, k_max in ((spacing_nm, math.pi / spacing_nm), (None, 4.0 * math.pi / spacing_nm)):
        axis = np.linspace(-k_max, k_max, points)
        k = np.stack(np.meshgrid(axis, axis, axis, indexing="ij"), axis=-1).reshape(-1, 3)
        outer = np.max(np.abs(k), axis=1) * spacing_nm > kappa
        bands = np.linalg.eigvalsh(bloch_hamiltonian_meV(params, k[outer], spacing))
        lo = max(lo, float(bands[:, :2].max()))
        hi = min(hi, float(bands[:, 2:].min()))
    return lo, hi


@lru_cache(maxsize=64)  # a sweep worker rebuilds its model per task; the rule is the costly part
def choose_spacing_nm(params: BulkParameters, window_meV: tuple[float, float],
                      kappa: float = VALIDITY_KAPPA) -> float:
    """Largest spacing (to 1 %) whose validity window contains ``window_meV`` (absolute energies).

    Raises ValueError when even a = 0.05 nm is not enough (the window reaches deep into the bulk bands).
    """
    lo_req, hi_req = window_meV
    top = 0.95 * max_spacing_nm(params)

    def ok(a: float) -> bool:
        lo, hi = validity_window_meV(params, a, kappa)
        return lo <= lo_req and hi >= hi_req

    if ok(top):
        return top
    bottom = 0.05
    if not ok(bottom):
        raise ValueError("energy window too far into the bulk bands for a lattice spacing >= 0.05 nm")
    while top / bottom > 1.01:  # the window shrinks as a grows
        mid = math.sqrt(top * bottom)
        if ok(mid):
            bottom = mid
        else:
            top = mid
    return bottom


def slab_hamiltonian_meV(params: BulkParameters, spacing_nm: float, normal: str, layers: int,
                         k_per_nm: tuple[float, float, float] = (0.0, 0.0, 0.0)) -> np.ndarray:
    """Lattice slab of ``layers`` sites along ``normal`` with Bloch momentum in the other two axes.

    Returns the dense Hamiltonian, shape (4 L, 4 L), meV; layer index slowest. The component of
    ``k_per_nm`` along the normal is ignored.
    """
    h0 = onsite_block(params, spacing_nm).copy()
    for i, axis in enumerate(AXES):
        if axis == normal:
            continue
        t = hopping_block(params, spacing_nm, axis)
        phase = np.exp(1j * k_per_nm[i] * spacing_nm)
        h0 += phase * t + np.conj(phase) * t.conj().T
    t_n = hopping_block(params, spacing_nm, normal)
    shift = np.eye(layers, k=1)
    h = np.kron(np.eye(layers), h0) + np.kron(shift, t_n)
    h += np.kron(shift.T, t_n.conj().T)
    return h


def slab_surface_states(params: BulkParameters, spacing_nm: float, normal: str, layers: int,
                        energy_meV: float, k_per_nm=(0.0, 0.0, 0.0), count: int = 4):
    """The ``count`` slab eigenstates closest to ``energy_meV``: (energies (count,), density (layers, count)).

    The density is summed over the four orbitals of each layer.
    """
    w, v = np.linalg.eigh(slab_hamiltonian_meV(params, spacing_nm, normal, layers, k_per_nm))
    idx = np.argsort(np.abs(w - energy_meV))[:count]
    dens = (np.abs(v[:, idx]) ** 2).reshape(layers, 4, count).sum(axis=1)
    return w[idx], dens


@lru_cache(maxsize=64)
def slab_mean_depth_nm(params: BulkParameters, spacing_nm: float, normal: str, layers: int = 120) -> float:
    """Mean depth of the Dirac-point surface states of a thick lattice slab.

    Depth is measured from the slab's surface, which lies half a spacing outside the outermost layer
    (each site is the centre of an a³ cell); only the half of the slab nearest that surface is used.
    """
    from .bulk_params import surface_dirac_point_meV

    _, dens = slab_surface_states(params, spacing_nm, normal, layers, surface_dirac_point_meV(params, normal))
    rho = dens.sum(axis=1)
    rho = rho[: layers // 2] + rho[::-1][: layers // 2]  # both surfaces, by inversion symmetry equal
    depth = (np.arange(layers // 2) + 0.5) * spacing_nm
    return float((depth * rho).sum() / rho.sum())
