"""Sweeps: scenario -> tasks -> executor (local processes or Dask) -> resumable results store."""

from .spec import SweepSpec, Task, make_spec
from .run import run_scenario

__all__ = ["SweepSpec", "Task", "make_spec", "run_scenario"]
