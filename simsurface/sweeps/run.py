"""Run a scenario's flux × energy (× realization) sweep into ``OUT/results.nc``."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import xarray as xr

from ..analysis.ensemble import ensemble_summary
from ..disorder.realization import check_disorder
from ..io import write_netcdf_atomic
from ..models.registry import AnalyticTube, analytic_model
from .executor import default_workers, run_tasks
from .results import build_dataset
from .spec import SweepSpec, Task, make_spec
from .store import PartStore

RESULTS_FILE = "results.nc"


def clean_reference(scenario, spec: SweepSpec) -> np.ndarray | None:
    """Analytic clean channel count on the sweep grid, for surface models."""
    if scenario.model.kind not in ("surface_analytic", "surface_lattice", "surface_modes"):
        return None
    model = analytic_model(scenario)       # None: no closed form (tilted field, circumferential potential, Rashba)
    return None if model is None else model.conductance(spec.energies_meV, spec.flux_quanta)


def run_scenario(scenario, out_dir: str | Path, *, scenario_text: str | None = None, workers: int | None = None,
                 cluster: str | None = None, resume: bool = False, progress: bool = True,
                 engine: str | None = None) -> xr.Dataset:
    """Compute the sweep of a validated scenario and write ``out_dir/results.nc``.

    Parameters
    ----------
    scenario : Scenario
    out_dir : path
        Created if missing. Finished tasks are kept in a hidden parts folder until the end, so an
        interrupted run can continue with ``resume=True``.
    workers : int, optional
        Local processes (default: all available cores).
    cluster : str, optional
        Dask scheduler address; the tasks run there instead of on local processes.
    resume : bool
        Continue an interrupted run of the same sweep without recomputing finished tasks.
    progress : bool
        Show a progress bar with ETA on stderr.
    engine : str, optional
        Override ``[model] engine``.

    Returns
    -------
    xarray.Dataset
        The dataset written to ``results.nc``.
    """
    spec = make_spec(scenario, engine)
    model = spec.model()  # builds the lattice and validates it before anything is written
    model.check_energies(spec.energies_meV)
    check_disorder(scenario, model)
    description = model.describe()
    out = Path(out_dir)
    n_flux, n_energy = spec.flux_quanta.size, spec.energies_meV.size
    values = np.full((spec.realizations, n_flux, n_energy), np.nan)

    if isinstance(model, AnalyticTube):
        values[:] = model.conductance(spec.energies_meV, spec.flux_quanta)[None]
    else:
        values = compute_spec(spec, out, resume=resume, workers=workers, cluster=cluster, progress=progress,
                              keep_parts=True)
    ds = build_dataset(spec, description, values, scenario_text, clean_reference(scenario, spec))
    if spec.realizations > 1:
        ds = ds.merge(ensemble_summary(ds["conductance"]), combine_attrs="override")
    out.mkdir(parents=True, exist_ok=True)
    write_netcdf_atomic(ds, out / RESULTS_FILE)
    if not isinstance(model, AnalyticTube):
        PartStore(out, spec.fingerprint()).remove()  # only once results.nc is safely in place
    return ds


def compute_spec(spec: SweepSpec, out_dir: str | Path, *, resume: bool = False, workers: int | None = None,
                 cluster: str | None = None, progress: bool = True, label: str = "sweep",
                 keep_parts: bool = False) -> np.ndarray:
    """Conductance (e²/h) of every task of a lattice sweep; shape (realization, flux, energy).

    Finished tasks are stored under ``out_dir`` (see :class:`PartStore`) so that an interrupted
    computation continues with ``resume=True``; the parts are removed at the end unless ``keep_parts``.
    ``label`` names the progress bar.
    """
    out = Path(out_dir)
    values = np.full((spec.realizations, spec.flux_quanta.size, spec.energies_meV.size), np.nan)
    out.mkdir(parents=True, exist_ok=True)
    store = PartStore(out, spec.fingerprint())
    store.open(resume)
    done = store.done()
    tasks = spec.tasks()
    for task in tasks:
        if task.key in done:
            values[task.realization, task.fluxes] = store.read(task)
    todo = [t for t in tasks if t.key not in done]
    bar = _progress_bar(len(tasks), len(tasks) - len(todo), progress, label)

    def on_result(task: Task, g: np.ndarray) -> None:
        store.write(task, g)
        values[task.realization, task.fluxes] = g
        if bar is not None:
            bar.update(1)

    try:
        run_tasks(spec, todo, on_result, workers=workers or default_workers(), cluster=cluster)
    finally:
        if bar is not None:
            bar.close()
    if not keep_parts:
        store.remove()
    return values


def _progress_bar(total: int, initial: int, enabled: bool, label: str = "sweep"):
    if not enabled or total <= 1:
        return None
    from tqdm import tqdm

    return tqdm(total=total, initial=initial, unit="task", desc=label, file=sys.stderr,
                mininterval=0.5, dynamic_ncols=True)
