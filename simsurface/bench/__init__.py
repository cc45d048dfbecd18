"""Benchmarks: named workloads solved by the slice engine and by kwant side by side (``simsurface bench``).

The runner (:mod:`.runner`) knows nothing about models; each ``*_workloads`` module builds chains of one
model and registers its workloads with :func:`register_workload` when it is imported (here). Transport
itself imports no model.
"""

from . import bulk_workloads, modes_workloads, tube_workloads  # noqa: F401  (register the workloads)
from .runner import (POINT_HEADER, WORKLOADS, BenchResult, PointResult, Workload, WorkloadCase, get_workload,
                     memory_in_subprocess, memory_probe, register_workload, run_benchmark)

__all__ = ["POINT_HEADER", "WORKLOADS", "BenchResult", "PointResult", "Workload", "WorkloadCase", "get_workload",
           "memory_in_subprocess", "memory_probe", "register_workload", "run_benchmark"]
