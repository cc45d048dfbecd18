"""Disorder ensembles for a plan, through the sweep machinery: a scenario's tube, re-sized, with Anderson disorder.

The plan needs the conductance of many disorder realizations of one tube section at a few flux values and
energies. It builds a derived scenario (same material, cross-section and lattice settings; its own length and
sweep axes) and an :class:`AndersonSweep` — a :class:`~simsurface.sweeps.spec.SweepSpec` whose realizations
carry an Anderson potential — and hands it to :func:`simsurface.sweeps.run.compute_spec`; so ensembles get
the same workers, Dask option, progress bar and resumable parts store as ``simsurface run``.

The potential is drawn here until the disorder models of the ``[disorder]`` table are wired into the plan;
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

    ``AndersonPotential(W, seed)(model, r)`` returns the keyword arguments of ``model.chain`` for
    realization r; W = 0 gives the clean tube.
    """

    width_meV: float
    seed: int

    def __call__(self, model: Any, realization: int) -> dict[str, np.ndarray]:
        if self.width_meV == 0:
            return {}
        rng = np.random.default_rng(np.random.SeedSequence([self.seed, realization]))
        half = self.width_meV / 2
        return {"potential_meV": rng.uniform(-half, half, size=(model.n_along, model.n_around))}


@dataclass(frozen=True)
class _Drawn:
    kwargs: dict

    def chain_kwargs(self, flux_quanta: float) -> dict:
        return self.kwargs


@dataclass(frozen=True, eq=False)
class AndersonSweep(SweepSpec):
    """A sweep whose realization r is the tube with :class:`AndersonPotential` draw r."""

    disorder: AndersonPotential = AndersonPotential(0.0, 0)

    def realization(self, index: int) -> _Drawn:
        return _Drawn(self.disorder(self.model(), index))

    def fingerprint(self) -> str:
        import hashlib

        return hashlib.sha256((super().fingerprint() + repr(self.disorder)).encode()).hexdigest()[:24]


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
    spec = AndersonSweep(derived, np.asarray(flux_quanta, float), np.asarray(energies_meV, float),
                         derived.model.engine, int(realizations),
                         disorder=AndersonPotential(float(width_meV), int(scenario.seed) + int(seed_offset)))
    model = spec.model()
    values = compute_spec(spec, Path(work_dir) / label.replace(" ", "-"), resume=resume, workers=workers,
                          cluster=cluster, progress=progress, label=label)
    return values, model
