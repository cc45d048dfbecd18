"""Memory, disk and time a sweep will need, known before anything is computed.

:func:`estimate_sweep` derives the size of the problem from the model's lattice — orbitals per slice ``n``,
slices ``L``, tasks (realizations × flux points) and energies — without building any matrix, and turns it
into estimates with the cost laws below. :func:`check_fits` compares them with this machine
(:func:`machine_limits`) and raises :class:`~simsurface.errors.ResourceError` naming the scenario field that
drives the cost; :func:`oversize_allowed` lets a caller who knows better run anyway.

Cost laws (per task and energy; documented constants, not a measurement at run time). Measured on the
2-core development machine with single-threaded BLAS, 2025-12-04, at load 5-8 (other sessions running), by
timing one task of tubes of 32-686 orbitals × 23-369 slices, mode tubes of 34-526 orbitals × 19-147
slices, 3D wires of 200-800 orbitals × 22-67 slices and kwant on tubes of 84-342 orbitals; the laws follow
those timings within a factor of about 2, so estimates are good to a factor of about 3 on an idle machine:

* slice engine: ``t = 0.01 s + L (s0 + 2e-10 s n³) + lead(n)`` with ``s0`` = 2e-4 s (lattice tube, 3D
  wire) or 1e-3 s (mode tube) and the lead ``lead(n)`` = 5e-6 s × n² (lattice tube) or 2e-6 s × n² (mode
  tube) — their leads are solved in blocks of a transverse basis — or 2.5e-8 s × n³ for the 3D wire;
* kwant: ``t = 7e-6 s × L × n^1.67`` (MUMPS on a quasi-one-dimensional system, fitted for n = 84-342);
* memory of a worker: 150 MB + 40 × n² complex numbers (dense work arrays of the lead and the basis) plus
  the chain: 12 complex numbers per orbital and slice for sparse slices (lattice tube, 3D wire),
  2.5 n² per slice for the dense slices of the mode tube, 1.5 n² per slice for kwant's factorization;
* the calling process holds the result array three times over (values, dataset, ensemble summaries);
  disk: one part file per task (4 kB, a file-system block) and ``results.nc``.
"""

from __future__ import annotations

import contextlib
import contextvars
import math
import os
import shutil
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterator

import numpy as np

from .errors import ResourceError
from .models.registry import build_model

__all__ = ["MachineLimits", "ProblemSize", "ResourceEstimate", "check_fits", "estimate_spec", "estimate_sweep",
           "format_bytes", "format_seconds", "machine_limits", "oversize_allowed", "problem_size", "scenario_fields"]

COMPLEX_BYTES = 16
BASE_PROCESS_BYTES = 150e6
PART_FILE_BYTES = 4096
#: refuse runs estimated longer than this (wall time on the given workers)
DEFAULT_TIME_LIMIT_S = 7 * 24 * 3600.0

#: sizes that count as ordinary: the factor furthest above its ordinary size is named as the cost driver
ORDINARY = {"orbitals": 300.0, "slices": 500.0, "realizations": 100.0, "flux": 200.0, "energies": 100.0}

_ALLOW = contextvars.ContextVar("simsurface_oversize_allowed", default=False)


@contextlib.contextmanager
def oversize_allowed(allowed: bool = True) -> Iterator[None]:
    """Within the block, :func:`check_fits` reports but does not refuse (for those who know better)."""
    token = _ALLOW.set(bool(allowed))
    try:
        yield
    finally:
        _ALLOW.reset(token)


@dataclass(frozen=True)
class ProblemSize:
    """How large one sweep is.

    Attributes
    ----------
    model : str
        ``[model] kind``.
    engine : str
    orbitals_per_slice, slices : int
        Size of one chain (0 for the analytic model, which has none).
    realizations, flux_points, energies : int
    fields : dict
        For every factor (``orbitals``, ``slices``, ``realizations``, ``flux``, ``energies``) the scenario
        field that sets it, e.g. ``{"slices": "[wire] length_nm"}``.
    values : dict
        The value of each of those fields as the user gave it (for the message).
    """

    model: str
    engine: str
    orbitals_per_slice: int
    slices: int
    realizations: int
    flux_points: int
    energies: int
    fields: dict[str, str] = field(default_factory=dict)
    values: dict[str, Any] = field(default_factory=dict)

    @property
    def points(self) -> int:
        """(realization, flux) points; a sweep's tasks are runs of consecutive flux points."""
        return self.realizations * self.flux_points


@dataclass(frozen=True)
class ResourceEstimate:
    """Estimated needs of a sweep (see the module docstring for the laws and their accuracy).

    Attributes
    ----------
    size : ProblemSize
    workers : int
        Processes that compute at the same time.
    worker_bytes : float
        Peak memory of one worker solving one task.
    memory_bytes : float
        Peak memory of the whole run: the workers and the calling process with the results.
    disk_bytes : float
        Part files and ``results.nc``.
    cpu_seconds : float
        Single-core time of all tasks.
    wall_seconds : float
        ``cpu_seconds`` spread over ``min(workers, tasks)`` processes.
    driver : str
        The factor furthest above its ordinary size (a key of :data:`ORDINARY`).
    """

    size: ProblemSize
    workers: int
    worker_bytes: float
    memory_bytes: float
    disk_bytes: float
    cpu_seconds: float
    wall_seconds: float
    driver: str

    @property
    def driver_field(self) -> str:
        """The scenario field that sets the driving factor, e.g. ``"[wire] diameter_nm"``."""
        return self.size.fields.get(self.driver, self.driver)

    def summary(self) -> str:
        """One line: memory, time, and the size they come from."""
        s = self.size
        shape = f"{s.flux_points} flux x {s.energies} energies x {s.realizations} realization(s)"
        if s.slices:
            shape += f", {s.orbitals_per_slice} orbitals x {s.slices} slices"
        return (f"estimated {format_bytes(self.memory_bytes)} memory, {format_bytes(self.disk_bytes)} disk, "
                f"{format_seconds(self.wall_seconds)} on {self.workers} worker(s) ({shape}; {s.model}, "
                f"{s.engine}; good to a factor of about 3)")


@dataclass(frozen=True)
class MachineLimits:
    """What this machine offers: available memory, free disk under the output folder, and a time limit."""

    memory_bytes: float
    disk_bytes: float
    time_limit_s: float = DEFAULT_TIME_LIMIT_S


def machine_limits(folder: str | Path = ".", time_limit_s: float = DEFAULT_TIME_LIMIT_S) -> MachineLimits:
    """Available memory (``MemAvailable`` of /proc/meminfo, else the physical memory) and free disk space
    of the nearest existing parent of ``folder``."""
    memory = math.inf
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    memory = float(line.split()[1]) * 1024
                    break
    except OSError:
        with contextlib.suppress(ValueError, OSError, AttributeError):
            memory = float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    path = Path(folder).absolute()
    while not path.exists() and path != path.parent:
        path = path.parent
    try:
        disk = float(shutil.disk_usage(path).free)
    except OSError:
        disk = math.inf
    return MachineLimits(memory, disk, time_limit_s)


def problem_size(scenario, engine: str | None = None, *, model: Any = None,
                 fields: dict[str, str] | None = None, values: dict[str, Any] | None = None) -> ProblemSize:
    """The size of a scenario's sweep, from its model's lattice (no matrix is built).

    Parameters
    ----------
    scenario : Scenario
    engine : str, optional
        Overrides ``[model] engine``.
    model : optional
        The scenario's model if already built (``build_model`` only chooses lattices and is cheap).
    fields, values : dict, optional
        The field that sets each factor and its value, when they are not the scenario's own (a plan
        derives its sweeps from ``[plan]``; see :func:`scenario_fields`). Default: ``scenario_fields(scenario)``.
    """
    kind = scenario.model.kind
    engine = engine or scenario.model.engine
    n = slices = 0
    if kind != "surface_analytic":
        model = model if model is not None else build_model(scenario)
        n, slices = _chain_size(model)
    if fields is None:
        fields, values = scenario_fields(scenario)
    return ProblemSize(kind, engine, int(n), int(slices), int(scenario.sweep.realizations),
                       int(scenario.flux_values().size), int(scenario.energy_values().size), dict(fields),
                       dict(values or {}))


def _chain_size(model) -> tuple[int, int]:
    """Orbitals per slice and slices of a lattice model."""
    if hasattr(model, "n_around"):  # lattice tube: a spinor per site on the Dirac surface
        per_site = 2 if model.surface == "topological" else 1
        return per_site * model.n_around, model.n_along
    if hasattr(model, "max_mode"):  # mode tube: 2 spin components of up to 2L + 1 angular modes
        return 2 * (2 * model.max_mode + 1), model.n_slices
    if hasattr(model, "n_y"):  # 3D wire: 4 orbitals per site of the cross-section
        sites = model.n_y * model.n_z * (math.pi / 4 if model.shape == "circle" else 1.0)
        return max(4, round(4 * sites)), model.n_along
    raise TypeError(f"no size rule for the model {type(model).__name__}")


def scenario_fields(scenario, *, max_energy_meV: float | None = None,
                    energy_field: str = "[sweep] fermi_energy_meV") -> tuple[dict[str, str], dict[str, Any]]:
    """Which field of ``scenario`` sets each factor of the cost, and its value.

    Orbitals per slice grow with the cross-section and shrink with the lattice spacing, which is either
    given (``[model] lattice_spacing_nm``) or chosen from the largest energy; slices grow with the length
    and shrink with the spacing. Of the fields behind a factor, the one furthest above an ordinary value
    (perimeter 300 nm, length 1000 nm, spacing 1 nm, energy 100 meV) is named.

    Parameters
    ----------
    scenario : Scenario
    max_energy_meV : float, optional
        Largest |E| the model is built for (default: the ``[sweep]`` energies).
    energy_field : str
        The field those energies come from.
    """
    wire = scenario.wire
    if wire.cross_section == "circle":
        size_field, size_value = "[wire] diameter_nm", wire.diameter_nm
    else:
        size_field, size_value = max((("[wire] width_nm", wire.width_nm), ("[wire] thickness_nm", wire.thickness_nm)),
                                     key=lambda fv: fv[1])
    perimeter = wire.section().perimeter_nm
    energy = float(np.max(np.abs(scenario.energy_values()))) if max_energy_meV is None else abs(max_energy_meV)
    sweep = scenario.sweep  # None in a plan's own scenario, whose sweeps are derived
    spacing = scenario.model.lattice_spacing_nm
    lattice = ({"[model] lattice_spacing_nm": 1.0 / spacing} if spacing is not None
               else {energy_field: energy / 100.0})
    orbitals = {size_field: perimeter / 300.0, **lattice}
    slices = {"[wire] length_nm": wire.length_nm / 1000.0, **lattice}
    fields = {"orbitals": max(orbitals, key=orbitals.get), "slices": max(slices, key=slices.get),
              "realizations": "[sweep] realizations",
              "flux": "[sweep] field_T" if sweep is not None and sweep.flux_quanta is None else "[sweep] flux_quanta",
              "energies": "[sweep] fermi_energy_meV"}
    values = {size_field: size_value, "[wire] length_nm": wire.length_nm, "[model] lattice_spacing_nm": spacing,
              energy_field: energy, "[sweep] realizations": sweep.realizations if sweep is not None else None}
    return fields, values


def estimate_spec(spec, workers: int = 1, *, fields: dict[str, str] | None = None,
                  values: dict[str, Any] | None = None) -> ResourceEstimate:
    """:func:`estimate_sweep` of a :class:`~simsurface.sweeps.spec.SweepSpec` (its model is built, cheaply)."""
    model = None if spec.scenario.model.kind == "surface_analytic" else spec.model()
    return estimate_sweep(problem_size(spec.scenario, spec.engine, model=model, fields=fields, values=values),
                          workers)


def estimate_sweep(size: ProblemSize, workers: int = 1) -> ResourceEstimate:
    """Memory, disk and time of a sweep of the given size on ``workers`` processes."""
    n, L = float(size.orbitals_per_slice), float(size.slices)
    tasks, n_e = size.points, size.energies  # an upper bound on the tasks (runs of flux points)
    workers = max(1, min(int(workers), tasks))
    if n == 0:  # analytic: a formula per point
        per_energy, chain_bytes, dense_bytes = 1e-5, 0.0, 0.0
    elif size.engine == "kwant":
        per_energy = 7e-6 * L * n ** 1.67
        chain_bytes = 1.5 * L * n * n * COMPLEX_BYTES
        dense_bytes = 0.0
    else:
        modes = size.model == "surface_modes"
        per_slice = (1e-3 if modes else 2e-4) + 2e-10 * n ** 3
        lead = {"bulk_lattice": 2.5e-8 * n ** 3, "surface_modes": 2e-6 * n * n}.get(size.model, 5e-6 * n * n)
        per_energy = 0.01 + L * per_slice + lead
        chain_bytes = (2.5 * n * n if modes else 12 * n) * L * COMPLEX_BYTES
        dense_bytes = 40 * n * n * COMPLEX_BYTES
    worker_bytes = BASE_PROCESS_BYTES + dense_bytes + chain_bytes
    results_bytes = 8.0 * tasks * n_e
    main_bytes = BASE_PROCESS_BYTES + 3 * results_bytes
    memory = main_bytes + (workers * worker_bytes if n else 0.0)
    disk = (tasks * PART_FILE_BYTES if n else 0.0) + results_bytes
    cpu = tasks * n_e * per_energy
    return ResourceEstimate(size, workers, worker_bytes, memory, disk, cpu, cpu / workers, _driver(size))


def _driver(size: ProblemSize) -> str:
    factors = {"orbitals": size.orbitals_per_slice, "slices": size.slices, "realizations": size.realizations,
               "flux": size.flux_points, "energies": size.energies}
    return max(factors, key=lambda k: factors[k] / ORDINARY[k])


def check_fits(estimate: ResourceEstimate, limits: MachineLimits | None = None, *, local: bool = True) -> None:
    """Refuse an estimate that does not fit ``limits`` (default: this machine, now).

    Parameters
    ----------
    estimate : ResourceEstimate
    limits : MachineLimits, optional
    local : bool
        The tasks run here; False for a Dask cluster, where only the calling process's memory (results)
        and disk are checked.

    Raises
    ------
    ResourceError
        Naming the field that drives the cost, what is needed and what there is; not raised inside
        :func:`oversize_allowed`.
    """
    if _ALLOW.get():
        return
    limits = limits or machine_limits()
    s = estimate.size
    memory = estimate.memory_bytes if local else BASE_PROCESS_BYTES + 3 * 8.0 * s.points * s.energies
    problems = []
    if memory > limits.memory_bytes:
        problems.append(f"about {format_bytes(memory)} of memory ({format_bytes(limits.memory_bytes)} available)")
    if estimate.disk_bytes > limits.disk_bytes:
        problems.append(f"about {format_bytes(estimate.disk_bytes)} of disk ({format_bytes(limits.disk_bytes)} free)")
    if local and estimate.wall_seconds > limits.time_limit_s:
        problems.append(f"about {format_seconds(estimate.wall_seconds)} on {estimate.workers} worker(s) "
                        f"(limit {format_seconds(limits.time_limit_s)})")
    if not problems:
        return
    raise ResourceError(f"{estimate.driver_field}: {_driver_text(estimate)}; the sweep needs {' and '.join(problems)}, "
                        "estimated to a factor of about 3; reduce it or allow an oversized run")


def _driver_text(estimate: ResourceEstimate) -> str:
    s, d = estimate.size, estimate.driver
    given = s.values.get(estimate.driver_field)
    if isinstance(given, bool) or not isinstance(given, (int, float)):
        shown = ""
    else:
        shown = f"{given:,} " if isinstance(given, int) else f"{given:g} "
    what = {"orbitals": f"{s.orbitals_per_slice:,} orbitals per slice", "slices": f"{s.slices:,} slices",
            "realizations": f"{s.points:,} points", "flux": f"{s.points:,} points",
            "energies": f"{s.energies:,} energies per task"}[d]
    return f"{shown}makes {what}".strip()


def format_bytes(n: float) -> str:
    """``"1.2 GB"`` (powers of 1000)."""
    if not math.isfinite(n):
        return "unknown"
    for unit in ("B", "kB", "MB", "GB", "TB", "PB", "EB", "ZB", "YB"):
        if abs(n) < 1000:
            return f"{n:.3g} {unit}"
        n /= 1000
    return "more than 1000 YB"


def format_seconds(s: float) -> str:
    """``"3 min"``, ``"2.5 h"``, ``"41 days"``, ``"3.2 years"``."""
    if not math.isfinite(s):
        return "unknown"
    for limit, div, unit in ((120, 1, "s"), (7200, 60, "min"), (172800, 3600, "h"), (3 * 365 * 86400, 86400, "days")):
        if s < limit:
            return f"{s / div:.2g} {unit}"
    return f"{s / (365 * 86400):.3g} years"
