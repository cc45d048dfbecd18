"""What a sweep computes: the scenario, its axes, and the tasks that cover them.

A task is one (realization, flux) pair and yields the conductance at every energy of the sweep, so one
slice chain is built per task and reused for all energies. Tasks are independent: their results do not
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
from ..transport.engines import conductance
from ..transport.probes import dephased_conductance


@dataclass(frozen=True)
class Task:
    realization: int
    flux_index: int

    @property
    def key(self) -> str:
        return f"r{self.realization:06d}_f{self.flux_index:06d}"


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
        return [Task(r, i) for r in range(self.realizations) for i in range(self.flux_quanta.size)]

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
    """Conductance (e²/h) at every sweep energy for one task; shape (n_energy,).

    BLAS runs on one thread here whatever the caller's setting: threaded reductions change the last
    bits of a result, and a task must give the same numbers on any worker.
    """
    from threadpoolctl import threadpool_limits

    with threadpool_limits(1):
        return _solve(spec, task)


def _solve(spec: SweepSpec, task: Task) -> np.ndarray:
    model = spec.model()
    phi = float(spec.flux_quanta[task.flux_index])
    if isinstance(model, AnalyticTube):
        return model.conductance(spec.energies_meV, [phi])[0]
    chain = model.chain(phi, **spec.realization(task.realization).chain_kwargs(phi))
    if spec.scenario.dephasing is not None:  # Büttiker probes inside the wire (their own solver)
        eta_meV, units = probe_parameters(model, spec.energies_meV, spec.scenario.dephasing)
        return dephased_conductance(chain, spec.energies_meV, eta_meV, units)
    return conductance(chain, spec.energies_meV, spec.engine)
