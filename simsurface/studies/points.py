"""A study is a set of ordinary sweeps ("points") of derived scenarios, each run like ``simsurface run``.

Every point writes ``OUT/points/<label>/results.nc`` (its own provenance, readable on its own). With
``resume`` a point whose results file holds the same scenario and engine is read back instead of being
recomputed, and an interrupted point continues from its finished tasks.
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import xarray as xr

from ..scenario import Scenario
from ..sweeps import run_scenario
from ..sweeps.run import RESULTS_FILE

POINTS_DIR = "points"


@dataclass(frozen=True)
class StudyPoint:
    """One sweep of a study: a folder label, the value of the study's axis and its scenario."""

    label: str
    value: float
    scenario: Scenario


def derive(scenario: Scenario, **tables: dict[str, Any]) -> Scenario:
    """A validated copy of ``scenario`` without its ``[study]`` and with fields of some tables replaced.

    ``derive(s, wire={"length_nm": 200.0}, sweep={"realizations": 1})``; a table given as ``None`` is
    reset to its defaults.
    """
    # only the fields the user set: validators that look at which fields were given see the same ones
    data = scenario.model_dump(mode="python", exclude_unset=True)
    data.pop("study", None)
    for table, changes in tables.items():
        data[table] = {} if changes is None else {**(data.get(table) or {}), **changes}
    return Scenario.model_validate(data)


def clean_point(scenario: Scenario, label: str = "clean", value: float = 0.0, **tables) -> StudyPoint:
    """The same sweep without disorder and with a single realization."""
    return StudyPoint(label, value, derive(scenario, disorder=None, sweep={"realizations": 1}, **tables))


def run_points(points: list[StudyPoint], out_dir: Path, *, workers: int | None = None, cluster: str | None = None,
               resume: bool = False, progress: bool = True, engine: str | None = None) -> list[xr.Dataset]:
    """Run (or, with ``resume``, reuse) every point; return their result datasets in order."""
    results = []
    for i, point in enumerate(points):
        folder = Path(out_dir) / POINTS_DIR / point.label
        ds = _reusable(folder / RESULTS_FILE, point.scenario, engine) if resume else None
        if ds is None:
            if progress:
                print(f"study point {i + 1}/{len(points)}: {point.label}", file=sys.stderr, flush=True)
            ds = run_scenario(point.scenario, folder, workers=workers, cluster=cluster, resume=resume,
                              progress=progress, engine=engine)
        results.append(ds)
    return results


def _reusable(path: Path, scenario: Scenario, engine: str | None) -> xr.Dataset | None:
    if not path.is_file():
        return None
    with xr.open_dataset(path) as ds:
        same = (ds.attrs.get("scenario_json") == scenario.model_dump_json()
                and ds.attrs.get("engine") == (engine or scenario.model.engine))
        return ds.load() if same else None


def stack_conductance(datasets: list[xr.Dataset], dim: str, values: np.ndarray, realizations: int,
                      attrs: dict[str, Any]) -> xr.DataArray:
    """G of every point stacked along a new leading ``dim``; single-realization points are broadcast."""
    arrays = []
    for ds in datasets:
        g = ds["conductance"].drop_vars(["field"], errors="ignore")
        if g.sizes["realization"] == 1 and realizations > 1:
            g = g.isel(realization=[0] * realizations).assign_coords(realization=np.arange(realizations))
        arrays.append(g)
    out = xr.concat(arrays, dim=dim, coords="minimal", compat="override", join="override")
    return out.assign_coords({dim: (dim, np.asarray(values, float), attrs)})


def json_number(x) -> float | None | str:
    """A float for JSON: None for NaN, "inf" for infinity."""
    v = float(x)
    if math.isnan(v):
        return None
    if math.isinf(v):
        return "inf"
    return v
