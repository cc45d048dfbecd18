"""Benchmark of the slice engine against kwant on named workloads.

A *workload* is a family of chains (one per "point", e.g. one flux value) solved at one energy. The
benchmark solves every point with both engines in the same process, one after the other, and reports
per-point end-to-end times (building the chain from the model plus solving it), the largest deviation in
transmission, the slice engine's time versus chain length and its memory versus length.

Fairness rules (stated in ``docs/engine.md``): both engines run single-process with every BLAS library
pinned to one thread (threadpoolctl, plus the ``*_NUM_THREADS`` variables in the memory subprocesses);
kwant's system is finalized once per workload and every point only passes new values through
``params`` (its build time is reported but not counted per point); kwant solves with its default
solver (MUMPS when installed) through ``kwant.smatrix``.

New workloads are added with :func:`register_workload` in a module of :mod:`simsurface.bench` (imported by
the package's ``__init__``); the reference one is ``tube-reference``.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..errors import InputError
from ..transport import kwant_engine, slices
from ..transport.leads import clear_lead_cache
from ..transport.chain import SliceChain
from ..transport.batched import transmission_stack, uses_dense_path
from ..transport.stack import ChainStack, stack_chains

__all__ = ["POINT_HEADER", "WORKLOADS", "BenchResult", "PointResult", "Workload", "WorkloadCase", "get_workload",
           "memory_in_subprocess", "memory_probe", "register_workload", "run_benchmark"]


@dataclass(frozen=True)
class WorkloadCase:
    """One instance of a workload: the chains to solve and how kwant should see them.

    Attributes
    ----------
    description : str
        What is solved (model, size, energy, disorder), printed by the benchmark.
    energy_meV : float
    point_labels : tuple of str
        One label per point, e.g. ``"flux_quanta=0.05"``.
    make_chain : callable
        ``make_chain(i)`` returns the :class:`SliceChain` of point i (this time is counted per point).
    orbitals_per_site : int or None
        Orbitals grouped into one kwant site (what a kwant user would choose for the model); None: the
        chain's ``info["orbitals_per_site"]``.
    constant_couplings : bool
        True when no point changes the couplings between slices (kwant then stores them as constants).
    make_stacks : callable, optional
        ``make_stacks()`` returns every point as :class:`ChainStack` s for the batched engine, as a list of
        (point indices, stack) — what a sweep would build for one disorder realization (counted). Default:
        the chains of all points stacked as they are (:func:`stack_chains`).
    """

    description: str
    energy_meV: float
    point_labels: tuple[str, ...]
    make_chain: Callable[[int], SliceChain]
    orbitals_per_site: int | None = 1
    constant_couplings: bool = False
    make_stacks: Callable[[], list] | None = None

    def stacks(self) -> list[tuple[np.ndarray, ChainStack]]:
        """All points as stacks for the batched engine (see ``make_stacks``)."""
        if self.make_stacks is not None:
            return self.make_stacks()
        idx = np.arange(len(self.point_labels))
        chains = [self.make_chain(i) for i in idx]
        energies = np.full(idx.size, self.energy_meV)
        if not uses_dense_path(stack_chains(chains[:1], energies[:1])):
            # large slices: the batched engine solves point by point anyway (as the sweeps do), so a stack
            # of all points would only cost memory
            return [(idx[i:i + 1], stack_chains(chains[i:i + 1], energies[i:i + 1])) for i in idx]
        return [(idx, stack_chains(chains, energies))]


@dataclass(frozen=True)
class Workload:
    """A named workload; ``build(n_slices=None, n_points=None)`` returns a :class:`WorkloadCase`.

    ``scaling_slices`` are the chain lengths used for the time- and memory-versus-length tables.
    """

    name: str
    summary: str
    build: Callable[..., WorkloadCase]
    scaling_slices: tuple[int, ...]


#: registry of workloads by name
WORKLOADS: dict[str, Workload] = {}


def register_workload(workload: Workload) -> None:
    """Add ``workload`` to :data:`WORKLOADS` (a later registration of the same name replaces it)."""
    WORKLOADS[workload.name] = workload


def get_workload(name: str) -> Workload:
    try:
        return WORKLOADS[name]
    except KeyError:
        raise InputError(f"workload {name!r} is not known; use one of {', '.join(WORKLOADS)}") from None


# --- running -------------------------------------------------------------------------------------------
@dataclass
class PointResult:
    label: str
    transmission_slices: float
    transmission_kwant: float
    seconds_slices: float
    seconds_kwant: float


@dataclass
class BenchResult:
    """Everything the benchmark measured (times in s, memory in MB)."""

    workload: str
    description: str
    kwant_solver: str
    kwant_build_s: float
    points: list[PointResult]
    batched_s: float = float("nan")                                   # batched engine, s per point
    batched_max_abs_dev: float = float("nan")                         # its largest |T − T_kwant|
    scaling: list[tuple[int, float]] = field(default_factory=list)   # (n_slices, s per point)
    memory: list[dict] = field(default_factory=list)                # per n_slices, see memory_probe

    @property
    def mean_slices_s(self) -> float:
        return float(np.mean([p.seconds_slices for p in self.points]))

    @property
    def mean_kwant_s(self) -> float:
        return float(np.mean([p.seconds_kwant for p in self.points]))

    @property
    def speedup(self) -> float:
        """Total kwant time over total slice-engine time (end to end, per point)."""
        return self.mean_kwant_s / self.mean_slices_s

    @property
    def batched_speedup(self) -> float:
        """Mean kwant time per point over the batched engine's time per point (the whole stack / P)."""
        return self.mean_kwant_s / self.batched_s

    @property
    def max_abs_dev(self) -> float:
        return float(max(abs(p.transmission_slices - p.transmission_kwant) for p in self.points))


def _pinned_blas():
    """Load every BLAS user first (numpy, scipy, kwant/MUMPS), then pin them all to one thread."""
    import kwant  # noqa: F401
    import kwant.linalg.mumps  # noqa: F401
    import scipy.linalg  # noqa: F401
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=1)


def run_benchmark(name: str, *, n_points: int | None = None, scaling: bool = True, memory: bool = True,
                  report: Callable[[str], None] = lambda line: None) -> BenchResult:
    """Run workload ``name`` with both engines; ``report`` receives each point's line as it is measured."""
    import kwant

    workload = get_workload(name)
    case = workload.build(n_points=n_points)
    with _pinned_blas():
        # one finalized kwant system per chain pattern (the mode tube changes its slice size with flux);
        # with constant couplings every point shares the pattern of point 0
        systems: dict[str, object] = {}
        build_s = 0.0
        for i in range(1 if case.constant_couplings else len(case.point_labels)):
            chain = case.make_chain(i)
            key = kwant_engine._pattern_key(chain)
            if key not in systems:
                t0 = time.perf_counter()
                systems[key] = kwant_engine.build_kwant_system(chain, case.orbitals_per_site,
                                                               constant_couplings=case.constant_couplings)
                build_s += time.perf_counter() - t0
        solver = type(kwant.solvers.default.smatrix.__self__).__module__.rsplit(".", 1)[-1]
        result = BenchResult(name, case.description, solver, build_s, [])
        energy = [case.energy_meV]
        # one untimed solve per engine first, so that no point pays for first-call imports
        chain = case.make_chain(0)
        slices.transmission(chain, energy)
        kwant_engine.transmission(chain, energy, system=systems[kwant_engine._pattern_key(chain)])
        batched_before_s, _ = _batched_pass(case)     # once before and once after the per-point loop
        for i, label in enumerate(case.point_labels):
            # decoupled channels (staggered solutions of the mode tube) are not physical: subtracted.
            # The lead cache is emptied so that every point solves its leads, as kwant does.
            clear_lead_cache()
            t0 = time.perf_counter()
            chain = case.make_chain(i)
            t_ours = slices.transmission(chain, energy)[0] - chain.decoupled_channels
            t1 = time.perf_counter()
            system = systems[kwant_engine._pattern_key(chain)]             # look-up, not timed
            t1b = time.perf_counter()
            chain = case.make_chain(i)
            t_kwant = kwant_engine.transmission(chain, energy, system=system)[0] - chain.decoupled_channels
            t2 = time.perf_counter()
            point = PointResult(label, float(t_ours), float(t_kwant), t1 - t0, t2 - t1b)
            result.points.append(point)
            report(_point_line(i, point))
        _time_batched(case, result, batched_before_s)
        if scaling:
            for n_slices in workload.scaling_slices:
                sub = workload.build(n_slices=n_slices, n_points=3)
                times = []
                for i in range(len(sub.point_labels)):
                    clear_lead_cache()
                    t0 = time.perf_counter()
                    slices.transmission(sub.make_chain(i), [sub.energy_meV])
                    times.append(time.perf_counter() - t0)
                result.scaling.append((n_slices, float(np.mean(times))))
    if memory:
        for n_slices in workload.scaling_slices:
            result.memory.append(memory_in_subprocess(name, n_slices))
    return result


def _batched_pass(case: WorkloadCase) -> tuple[float, np.ndarray]:
    """Build and solve all points as stacks with the batched engine (lead cache emptied first): (s, T)."""
    clear_lead_cache()
    t0 = time.perf_counter()
    found = np.empty(len(case.point_labels))
    for idx, stack in case.stacks():
        found[idx] = transmission_stack(stack)
    return time.perf_counter() - t0, found


def _time_batched(case: WorkloadCase, result: BenchResult, before_s: float) -> None:
    """Second batched pass after the per-point loop; the mean of the passes before and after it brackets the
    load the per-point engines saw."""
    after_s, found = _batched_pass(case)
    result.batched_s = (before_s + after_s) / 2 / found.size
    result.batched_max_abs_dev = float(np.max(np.abs(found - [p.transmission_kwant for p in result.points])))


def _point_line(i: int, p: PointResult) -> str:
    return (f"{i:5d}  {p.label:>18s}  {p.transmission_slices:12.8f}  {p.transmission_kwant:12.8f}  "
            f"{abs(p.transmission_slices - p.transmission_kwant):9.2e}  {p.seconds_slices:9.4f}  "
            f"{p.seconds_kwant:9.4f}")


POINT_HEADER = (f"{'point':>5s}  {'label':>18s}  {'T_slices':>12s}  {'T_kwant':>12s}  {'|dev|':>9s}  "
                f"{'s_slices':>9s}  {'s_kwant':>9s}")


# --- memory -------------------------------------------------------------------------------------------
def memory_probe(name: str, n_slices: int) -> dict:
    """Solve point 0 of ``name`` at ``n_slices`` once and measure memory (run it in a fresh process).

    Returns ``n_slices``; ``chain_MB`` (the chain's arrays: the input description, ∝ length);
    ``solver_peak_MB`` (peak of the memory allocated during the solve, traced by tracemalloc: the
    engine's working memory); ``process_peak_rss_MB`` (peak resident memory of the whole process,
    including the interpreter, the libraries and the chain).
    """
    import tracemalloc

    case = get_workload(name).build(n_slices=n_slices, n_points=1)
    chain = case.make_chain(0)
    arrays = [chain.onsite_values, chain.coupling_values, chain.left.onsite, chain.left.hopping]
    chain_mb = sum(a.nbytes for a in arrays) / 2**20
    tracemalloc.start()
    slices.transmission(chain, [case.energy_meV])
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    rss_kb = _peak_rss_kb()
    return {"n_slices": n_slices, "chain_MB": round(chain_mb, 2), "solver_peak_MB": round(peak / 2**20, 2),
            "process_peak_rss_MB": round(rss_kb / 1024, 1)}


def _peak_rss_kb() -> float:
    """Peak resident memory of this process image in kB: VmHWM (reset by exec) where Linux provides it;
    ``ru_maxrss`` elsewhere (on Linux it can keep the forking parent's peak, hence not the first choice)."""
    import resource

    try:
        with open("/proc/self/status") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return float(line.split()[1])
    except OSError:
        pass
    return float(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)


def memory_in_subprocess(name: str, n_slices: int) -> dict:
    """:func:`memory_probe` in a fresh interpreter with one BLAS thread."""
    import simsurface

    root = os.path.dirname(os.path.dirname(os.path.abspath(simsurface.__file__)))
    env = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1", MKL_NUM_THREADS="1",
               PYTHONPATH=os.pathsep.join([root, os.environ.get("PYTHONPATH", "")]))
    code = ("import json; from simsurface.bench import memory_probe; "
            f"print(json.dumps(memory_probe({name!r}, {int(n_slices)})))")
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])

