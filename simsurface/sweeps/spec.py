"""What a sweep computes: the scenario, its axes, and the tasks that cover them.

A task is one disorder realization at a run of consecutive flux values (at most :data:`STACK_POINTS`
(flux, energy) points) and yields the conductance at every flux and energy of it: the points share one
chain structure and go to the batched engine as one stack (:mod:`simsurface.transport.batched`), with the
energy-independent parts of the chain built once (models with ``chain_stacks``, e.g. the mode tube). Tasks are independent: their results do not
depend on which worker runs them or in what order (disorder is drawn from the scenario seed and the realization index alone, :mod:`simsurface.disorder`).
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..analysis.dephasing import probe_parameters
from ..models.registry import AnalyticTube, build_model
from ..transport.batched import conductance_stack, uses_dense_path
from ..transport.engines import conductance
from ..transport.probes import dephased_conductance
from ..transport.stack import stack_chains

#: (flux, energy) points solved together by one task (bounds a task's memory: ≈ 2 MB per point on the
#: mode tube of QX-32)
STACK_POINTS = 128
#: a sweep is cut into at least this many tasks when it has enough flux values (fixed: not the worker count)
MIN_TASKS = 8


@dataclass(frozen=True)
class Task:
    """One realization at the flux indices ``flux_index … flux_stop − 1``."""

    realization: int
    flux_index: int
    flux_stop: int | None = None

    @property
    def fluxes(self) -> slice:
        """The task's flux indices as a slice of the sweep's flux axis."""
        return slice(self.flux_index, self.flux_index + 1 if self.flux_stop is None else self.flux_stop)

    @property
    def key(self) -> str:
        return f"r{self.realization:06d}_f{self.flux_index:06d}_{self.fluxes.stop:06d}"


@dataclass(frozen=True, eq=False)
class SweepSpec:
    """Everything a worker needs to compute any task (picklable, immutable)."""

    scenario: Any  # simsurface.scenario.Scenario
    flux_quanta: np.ndarray
    energies_meV: np.ndarray
    engine: str
    realizations: int
    #: fingerprint of the sweep; keys the per-process cache of the model and the current realization
    key: str = ""

    def tasks(self) -> list[Task]:
        """Realization-major tasks, each a run of consecutive fluxes (fixed by the sweep alone, so the
        numbers do not depend on the number or order of workers)."""
        n_flux = self.flux_quanta.size
        # whole stacks where they fit, but at least MIN_TASKS tasks per sweep (progress, resume, workers)
        step = max(1, min(STACK_POINTS // max(1, self.energies_meV.size),
                          -(-n_flux * self.realizations // MIN_TASKS)))
        return [Task(r, i, min(n_flux, i + step)) for r in range(self.realizations) for i in range(0, n_flux, step)]

    def fingerprint(self) -> str:
        """Hash of everything that determines the numbers (used to refuse resuming a different run)."""
        from .. import __version__

        blob = json.dumps({
            "scenario": self.scenario.model_dump(mode="json"),
            "flux": self.flux_quanta.tolist(), "energy": self.energies_meV.tolist(),
            "engine": self.engine, "realizations": self.realizations, "version": __version__,
        }, sort_keys=True)
        return hashlib.sha256(blob.encode()).hexdigest()[:24]

    @property
    def _model_cache(self) -> dict:
        """Per-process cache for this sweep: the spec is pickled with every task, the cache is not."""
        if not self.key:
            return self.__dict__.setdefault("_local_cache", {})
        if _PROCESS_CACHE.get("key") != self.key:
            _PROCESS_CACHE.clear()
            _PROCESS_CACHE["key"] = self.key
        return _PROCESS_CACHE

    def model(self):
        """The scenario's model, built once per process."""
        if "model" not in self._model_cache:
            self._model_cache["model"] = build_model(self.scenario)
        return self._model_cache["model"]

    def realization(self, index: int):
        """Disorder realization ``index`` for this scenario's model (the last one is kept per process)."""
        from ..disorder import realize

        cache = self._model_cache
        if cache.get("realization_index") != index:
            scn = self.scenario
            cache["realization"] = realize(scn.disorder.parameters(), self.model(), scn.seed, index,
                                           section=scn.wire.section())
            cache["realization_index"] = index
        return cache["realization"]

    def __getstate__(self):
        state = dict(self.__dict__)
        state.pop("_local_cache", None)
        return state

    def __setstate__(self, state):
        self.__dict__.update(state)


#: models and the current disorder realization of the sweep this process works on (one sweep at a time)
_PROCESS_CACHE: dict[str, Any] = {}


def make_spec(scenario, engine: str | None = None) -> SweepSpec:
    """Sweep specification of a validated scenario (``engine`` overrides ``[model] engine``)."""
    spec = SweepSpec(scenario, scenario.flux_values(), scenario.energy_values(),
                     engine or scenario.model.engine, scenario.sweep.realizations)
    return SweepSpec(spec.scenario, spec.flux_quanta, spec.energies_meV, spec.engine, spec.realizations,
                     key=spec.fingerprint())


def solve_task(spec: SweepSpec, task: Task) -> np.ndarray:
    """Conductance (e²/h) of one task; shape (n_flux of the task, n_energy).

    BLAS runs on one thread here whatever the caller's setting: threaded reductions change the last
    bits of a result, and a task must give the same numbers on any worker.
    """
    from threadpoolctl import threadpool_limits

    with threadpool_limits(1):
        return _solve(spec, task)


def _solve(spec: SweepSpec, task: Task) -> np.ndarray:
    model = spec.model()
    fluxes = spec.flux_quanta[task.fluxes]
    energies = spec.energies_meV
    if isinstance(model, AnalyticTube):
        return model.conductance(energies, fluxes)
    realization = spec.realization(task.realization)
    if spec.scenario.dephasing is not None:  # Büttiker probes inside the wire (their own solver)
        out = np.empty((fluxes.size, energies.size))
        for i, phi in enumerate(fluxes):
            chain = model.chain(float(phi), **realization.chain_kwargs(float(phi)))
            eta_meV, units = probe_parameters(model, energies, spec.scenario.dephasing)
            out[i] = dephased_conductance(chain, energies, eta_meV, units)
        return out
    if hasattr(model, "chain_stacks"):
        # the realization's energy-independent parts (e.g. the potential in the mode basis) built once
        kwargs = [realization.chain_kwargs(float(f)) for f in fluxes]
        shared = {k: v for k, v in kwargs[0].items() if k != "slice_flux_quanta"}
        if "slice_flux_quanta" in kwargs[0]:
            shared["slice_flux_quanta"] = np.stack([kw["slice_flux_quanta"] for kw in kwargs])
        out = np.empty((fluxes.size, energies.size))
        # the first-order form where the model has one (mode tube: half the work, no staggered channels)
        stacks = model.cayley_stacks(fluxes, energies, **shared) if spec.engine == "slices" and hasattr(
            model, "cayley_stacks") else None
        for idx, stack in stacks or model.chain_stacks(fluxes, energies, **shared):
            out[idx] = conductance_stack(stack, spec.engine).reshape(idx.size, energies.size)
        return out
    chains = [model.chain(float(f), **realization.chain_kwargs(float(f))) for f in fluxes]
    # decide on one point before stacking all of them (large slices: a stack would only cost memory)
    if spec.engine == "slices" and uses_dense_path(stack_chains(chains[:1], energies[:1])):
        stack = stack_chains([c for c in chains for _ in energies], np.tile(energies, len(chains)))
        return conductance_stack(stack).reshape(fluxes.size, energies.size)
    # large slices: one call per chain shares its prepared operators among the energies
    return np.array([conductance(c, energies, spec.engine) for c in chains])
