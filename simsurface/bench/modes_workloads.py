"""Benchmark workloads of the mode tube for ``simsurface bench`` (registered on import).

``modes-reference`` is the geometry of ``tube-reference`` (perimeter 250 nm, 1.25 µm, E = 20 meV,
ħv = 330 meV nm, 21 flux points in [0, 1] h/e, matched leads) described by the mode tube with its default
rules (κ_q = 3, k_F a = 0.5). Its Anderson disorder is uniform on the potential grid with the box width that
gives the same white-noise strength W² a_x a_s / 12 as the ±40 meV on-site disorder of the 3.125 nm lattice
tube (invented values, one realization). ``modes-quick`` is a short version for a run of seconds.
"""

from __future__ import annotations

import math

import numpy as np

from .runner import Workload, WorkloadCase, register_workload
from ..models.modes import ModeTube

__all__ = ["modes_case", "REFERENCE_NOISE_MEV2_NM2"]

#: white-noise strength of the tube-reference disorder: box width 80 meV on 3.125 nm × 3.125 nm cells
REFERENCE_NOISE_MEV2_NM2 = 80.0**2 / 12 * 3.125**2


def modes_case(length_nm: float, n_points: int, *, energy_meV: float = 20.0, perimeter_nm: float = 250.0,
               hbar_v_meV_nm: float = 330.0, noise_meV2_nm2: float = REFERENCE_NOISE_MEV2_NM2,
               seed: int = 2024) -> WorkloadCase:
    """Disordered mode tube at ``n_points`` flux values in [0, 1] h/e, solved at ``energy_meV``.

    The chains are the plain chains of E P − H at that energy; their transmission includes the
    decoupled staggered channels, which the benchmark subtracts.
    """
    tube = ModeTube.from_geometry(perimeter_nm, perimeter_nm**2 / (4 * math.pi), length_nm,
                                  hbar_v_meV_nm=hbar_v_meV_nm, max_energy_meV=energy_meV)
    cell_nm2 = tube.spacing_nm * perimeter_nm / tube.n_grid
    width = math.sqrt(12 * noise_meV2_nm2 / cell_nm2)
    potential = np.random.default_rng(seed).uniform(-width / 2, width / 2, (tube.n_cells, tube.n_grid))
    fluxes = np.linspace(0.0, 1.0, n_points) if n_points > 1 else np.array([0.25])
    desc = (f"mode tube (transverse modes, tangent axial discretization), {tube.max_mode} modes on each side "
            f"(slice size n = {4 * tube.max_mode} or {4 * tube.max_mode + 2}), {tube.n_slices} slices; perimeter "
            f"{perimeter_nm:g} nm, axial spacing {tube.spacing_nm:.4g} nm, length {tube.modelled_length_nm:.0f} nm, "
            f"hbar*v = {hbar_v_meV_nm:g} meV nm; E = {energy_meV:g} meV; Anderson disorder uniform in "
            f"+-{width / 2:.3g} meV on {tube.n_cells} x {tube.n_grid} grid points (white-noise strength "
            f"{noise_meV2_nm2:.0f} meV^2 nm^2, seed {seed}); {n_points} flux points in [0, 1] h/e; matched leads")
    return WorkloadCase(desc, energy_meV, tuple(f"flux_quanta={f:.3f}" for f in fluxes),
                        lambda i: tube.chain(float(fluxes[i]), potential_meV=potential).at_energy(energy_meV),
                        orbitals_per_site=None,     # one kwant site per slice: the modes mix densely
                        make_stacks=lambda: tube.cayley_stacks(fluxes, [energy_meV], potential_meV=potential))


register_workload(Workload(
    "modes-reference", "disordered mode tube in the geometry of tube-reference (250 nm around x 1.25 um), 21 flux points",
    lambda n_slices=None, n_points=None: modes_case(1250.0 if n_slices is None else n_slices * 8.25,
                                                    n_points or 21),
    scaling_slices=(76, 152, 304, 608)))
register_workload(Workload(
    "modes-quick", "short disordered mode tube (250 nm around x 200 nm), 5 flux points",
    lambda n_slices=None, n_points=None: modes_case(200.0 if n_slices is None else n_slices * 8.25, n_points or 5),
    scaling_slices=(12, 24, 48)))
