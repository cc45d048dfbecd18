"""Disorder ensembles through the sweep machinery: a scenario's tube, re-sized, with Anderson disorder.

The plan needs the conductance of many disorder realizations of one tube section at a few flux values and
energies. It builds a derived scenario (same material, cross-section and lattice settings; its own length and
sweep axes) and hands it to :func:`simsurface.sweeps.run.compute_spec` with an :class:`AndersonPotential`
as the sweep's ``chain_options``; so ensembles get the same workers, Dask option, progress bar and resumable
parts store as ``simsurface run``.

The potential is drawn here until the disorder models (``[disorder]`` table) are on the main branch;
realization r draws from ``numpy.random.SeedSequence([seed, r])``, the rule of every sweep.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..scenario import ModelSection, SweepSection
from ..sweeps.run import compute_spec
from ..sweeps.spec import SweepSpec


@dataclass(frozen=True)
class AndersonPotential:
    """Site energies uniform in [−W/2, W/2], independent from site to site (Anderson disorder).

    Called by a sweep worker as ``options(model, realization)``; returns keyword arguments of
    ``model.chain``. W = 0 gives the clean tube.
    """

    width_meV: float
    seed: int

    def __call__(self, model: Any, realization: int) -> dict[str, np.ndarray]:
        if self.width_meV == 0:
            return {}
        rng = np.random.default_rng(np.random.SeedSequence([self.seed, realization]))
        half = self.width_meV / 2
        return {"potential_meV": rng.uniform(-half, half, size=(model.n_along, model.n_around))}


def lattice_scenario(scenario, *, length_nm: float, energies_meV: np.ndarray, flux_quanta: np.ndarray,
                     realizations: int, spacing_nm: float | None):
    """A copy of ``scenario`` describing a surface-lattice tube of ``length_nm`` and the given sweep axes.

    ``spacing_nm`` pins the lattice so that every ensemble of one plan uses the same lattice (the
    disorder width W means something only for a given spacing).
    """
    wire = scenario.wire.model_copy(update={"length_nm": float(length_nm)})
    model = ModelSection(kind="surface_lattice", lattice_spacing_nm=spacing_nm,
                         wilson_ratio=scenario.model.wilson_ratio, engine=scenario.model.engine)
    sweep = SweepSection(flux_quanta=[float(f) for f in flux_quanta],
                         fermi_energy_meV=[float(e) for e in energies_meV], realizations=int(realizations))
    return scenario.model_copy(update={"wire": wire, "model": model, "sweep": sweep})


def run_ensemble(scenario, work_dir: str | Path, *, length_nm: float, energies_meV: np.ndarray,
                 flux_quanta: np.ndarray, realizations: int, width_meV: float, spacing_nm: float | None,
                 label: str, workers: int | None = None, cluster: str | None = None, resume: bool = False,
                 progress: bool = True, seed_offset: int = 0) -> tuple[np.ndarray, Any]:
    """Conductance (e²/h) of ``realizations`` Anderson-disordered tubes; shape (realization, flux, energy).

    Returns the values and the lattice model that produced them. ``seed_offset`` separates the random
    streams of different ensembles of one plan (calibration, main ensemble).
    """
    derived = lattice_scenario(scenario, length_nm=length_nm, energies_meV=energies_meV, flux_quanta=flux_quanta,
                               realizations=realizations, spacing_nm=spacing_nm)
    options = AndersonPotential(float(width_meV), int(scenario.seed) + int(seed_offset))
    spec = SweepSpec(derived, np.asarray(flux_quanta, float), np.asarray(energies_meV, float),
                     derived.model.engine, int(realizations), chain_options=options)
    model = spec.model()
    values = compute_spec(spec, Path(work_dir) / label.replace(" ", "-"), resume=resume, workers=workers,
                          cluster=cluster, progress=progress, label=label)
    return values, model
