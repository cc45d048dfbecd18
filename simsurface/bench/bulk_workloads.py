"""Benchmark workloads of the 3D four-band wire for ``simsurface bench`` (registered on import).

``bulk-20x20``: a disordered Bi2Se3 wire (Zhang et al. 2009 parameters, from memory) of 20 × 20 sites
(10 nm × 10 nm at a = 0.5 nm, 1600 orbitals per slice), the size class the issue asks the fast engine to
handle. ``bulk-quick``: the same model on 8 × 8 sites for a run of seconds.
"""

from __future__ import annotations

import warnings

import numpy as np

from ..errors import ValidityWarning
from .runner import Workload, WorkloadCase, register_workload
from ..models.bulk import BulkWire
from ..models.bulk_params import PRESETS

__all__ = ["bulk_case", "SPACING_NM"]

SPACING_NM = 0.5


def bulk_case(n_sites: int, n_slices: int, n_points: int, *, energy_meV: float, anderson_width_meV: float = 100.0,
              seed: int = 2025) -> WorkloadCase:
    """Disordered Bi2Se3 wire of n_sites × n_sites at ``n_points`` flux values in [0, 1] h/e.

    Anderson disorder: on-site energies uniform in [−W/2, W/2] (W = ``anderson_width_meV``, full width) on every site,
    one realization (``seed``); matched leads; energy measured from the z-facet Dirac point.
    """
    size_nm = n_sites * SPACING_NM
    with warnings.catch_warnings():  # small wires hybridize; irrelevant for timing
        warnings.simplefilter("ignore", ValidityWarning)
        wire = BulkWire.from_geometry("rectangle", size_nm, size_nm, n_slices * SPACING_NM,
                                      PRESETS["Bi2Se3_zhang2009"], spacing_nm=SPACING_NM)
    potential = wire.random_potential_meV(anderson_width_meV, seed)
    fluxes = np.linspace(0.0, 1.0, n_points) if n_points > 1 else np.array([0.25])
    desc = (f"3D four-band Bi2Se3 wire (Zhang 2009 set), {n_sites} x {n_sites} sites x {n_slices} slices, "
            f"4 orbitals per site (slice size n = {wire.orbitals_per_slice}), spacing {SPACING_NM} nm; "
            f"E = {energy_meV:g} meV from the z-facet Dirac point; Anderson disorder uniform in "
            f"+-{anderson_width_meV / 2:g} meV (seed {seed}); {n_points} flux points in [0, 1] h/e; matched leads")
    return WorkloadCase(desc, energy_meV, tuple(f"flux_quanta={f:.3f}" for f in fluxes),
                        lambda i: wire.chain(float(fluxes[i]), potential),
                        orbitals_per_site=4, constant_couplings=True)


register_workload(Workload(
    "bulk-20x20", "disordered 3D Bi2Se3 wire, 20 x 20 sites (1600 orbitals per slice) x 10 slices, 2 flux points",
    lambda n_slices=None, n_points=None: bulk_case(20, n_slices or 10, n_points or 2, energy_meV=90.0),
    scaling_slices=(5, 10, 20)))
register_workload(Workload(
    "bulk-quick", "disordered 3D Bi2Se3 wire, 8 x 8 sites (256 orbitals per slice) x 10 slices, 3 flux points",
    lambda n_slices=None, n_points=None: bulk_case(8, n_slices or 10, n_points or 3, energy_meV=-300.0),
    scaling_slices=(5, 10, 20)))
