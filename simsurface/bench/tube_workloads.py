"""Benchmark workloads of the surface-lattice tube for ``simsurface bench`` (registered on import).

``tube-reference``: a disordered topological lattice tube (Dirac + Wilson term), 80 sites around × 400 along,
perimeter 250 nm, Anderson disorder of full width W = 80 meV (site energies uniform in ±40 meV), 21 flux points
(invented values, one realization). ``tube-quick``: a small version for a run of seconds.
"""

from __future__ import annotations

import math

import numpy as np

from ..models.tube import SurfaceTube
from .runner import Workload, WorkloadCase, register_workload

__all__ = ["tube_case"]


def tube_case(n_around: int, n_slices: int, n_points: int, *, energy_meV: float = 20.0,
              anderson_width_meV: float = 80.0, seed: int = 2024, perimeter_nm: float = 250.0,
              hbar_v_meV_nm: float = 330.0) -> WorkloadCase:
    """Disordered topological lattice tube at ``n_points`` flux values in [0, 1] h/e.

    Anderson disorder: independent on-site energies uniform in [−W/2, W/2], W = ``anderson_width_meV`` (full
    width), on every site (one realization, ``seed``). The lattice spacing is perimeter_nm / n_around.
    """
    spacing = perimeter_nm / n_around
    tube = SurfaceTube.from_geometry(
        "topological", perimeter_nm, perimeter_nm**2 / (4 * math.pi), n_slices * spacing,
        hbar_v_meV_nm=hbar_v_meV_nm, max_energy_meV=energy_meV, spacing_nm=spacing)
    if (tube.n_around, tube.n_along) != (n_around, n_slices):
        raise ValueError("lattice rounding changed the requested size")
    potential = np.random.default_rng(seed).uniform(-anderson_width_meV / 2, anderson_width_meV / 2, (n_slices, n_around))
    fluxes = np.linspace(0.0, 1.0, n_points) if n_points > 1 else np.array([0.25])
    desc = (f"topological lattice tube (Dirac + Wilson r = {tube.wilson_ratio}), {n_around} sites around x "
            f"{n_slices} along, 2 orbitals per site (slice size n = {2 * n_around}); perimeter "
            f"{perimeter_nm:g} nm, spacing {spacing:.4g} nm, hbar*v = {hbar_v_meV_nm:g} meV nm "
            f"(t = {tube.hopping_meV:.4g} meV); E = {energy_meV:g} meV; Anderson disorder uniform in "
            f"+-{anderson_width_meV / 2:g} meV (W = {anderson_width_meV:g} meV, seed {seed}); {n_points} flux points in [0, 1] h/e; matched leads")
    return WorkloadCase(desc, energy_meV, tuple(f"flux_quanta={f:.3f}" for f in fluxes),
                        lambda i: tube.chain(float(fluxes[i]), potential_meV=potential),
                        orbitals_per_site=2, constant_couplings=True)


register_workload(Workload(
    "tube-reference", "disordered topological tube, 80 sites around x 400 along, 21 flux points",
    lambda n_slices=None, n_points=None: tube_case(80, n_slices or 400, n_points or 21),
    scaling_slices=(100, 200, 400, 800)))
register_workload(Workload(
    "tube-quick", "small disordered topological tube, 24 sites around x 60 along, 5 flux points",
    lambda n_slices=None, n_points=None: tube_case(24, n_slices or 60, n_points or 5, energy_meV=10.0),
    scaling_slices=(30, 60, 120)))
