"""Studies: several sweeps of one scenario combined into one answer (``[study]`` in a scenario).

* ``kind = "lengths"`` — mean free path and localization length (:mod:`.lengths`);
* ``kind = "tolerance"`` — h/e and h/2e amplitudes versus a disorder parameter and versus ℓ (:mod:`.tolerance`).

:func:`run_study` runs the points, then writes ``study.nc``, ``study.json`` and the study's figure
(PNG and PDF) into the output folder, each through a temporary file.
"""

from __future__ import annotations

from pathlib import Path

import xarray as xr

from ..io import write_json_atomic, write_netcdf_atomic
from . import lengths, tolerance
from .points import run_points

STUDY_FILE = "study.nc"
SUMMARY_FILE = "study.json"
KINDS = {"lengths": lengths, "tolerance": tolerance}


def run_study(scenario, out_dir: str | Path, *, scenario_text: str | None = None, workers: int | None = None,
              cluster: str | None = None, resume: bool = False, progress: bool = True,
              engine: str | None = None) -> xr.Dataset:
    """Run the study described by ``scenario.study``; write study.nc and study.json; return the dataset."""
    kind = KINDS[scenario.study.kind]
    out = Path(out_dir)
    point_list = kind.points(scenario)
    datasets = run_points(point_list, out, workers=workers, cluster=cluster, resume=resume, progress=progress,
                          engine=engine)
    ds = kind.build(scenario, point_list, datasets, seed=scenario.seed)
    if scenario_text is not None:
        ds.attrs["scenario_toml"] = scenario_text
    write_netcdf_atomic(ds, out / STUDY_FILE)
    write_json_atomic(out / SUMMARY_FILE, kind.summary(ds))
    return ds


__all__ = ["run_study", "STUDY_FILE", "SUMMARY_FILE"]
