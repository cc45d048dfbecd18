"""What a sweep computes: the scenario, its axes, and the tasks that cover them.

A task is one (realization, flux) pair and yields the conductance at every energy of the sweep, so one
slice chain is built per task and reused for all energies. Tasks are independent: their results do not
depend on which worker runs them or in what order (disorder is drawn from the scenario seed and the realization index alone, :mod:`simsurface.disorder`).
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..models.registry import AnalyticTube, build_model
from ..transport.engines import conductance


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
    _model_cache: dict = field(default_factory=dict, repr=False, compare=False)

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
        state["_model_cache"] = {}
        return state

    def __setstate__(self, state):
        self.__dict__.update(state)


def make_spec(scenario, engine: str | None = None) -> SweepSpec:
    """Sweep specification of a validated scenario (``engine`` overrides ``[model] engine``)."""
    return SweepSpec(scenario, scenario.flux_values(), scenario.energy_values(),
                     engine or scenario.model.engine, scenario.sweep.realizations)


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
    return conductance(chain, spec.energies_meV, spec.engine)
