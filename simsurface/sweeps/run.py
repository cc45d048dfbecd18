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
from ..outdir import claim_folder
from ..resources import check_fits, estimate_spec, machine_limits
from .executor import default_workers, run_tasks
from .results import build_dataset
from .spec import SweepSpec, Task, make_spec
from .store import PartStore, finished_dataset, sweep_fingerprint
from .validity import check_sweep_window

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
    out = Path(out_dir)
    check_size(spec, out, workers=workers, cluster=cluster, progress=progress)  # before any matrix is built
    model = spec.model()  # builds the lattice and validates it before anything is written
    model.check_energies(spec.energies_meV)
    check_disorder(scenario, model)
    check_sweep_window(scenario, model, spec.energies_meV)
    description = model.describe()
    n_flux, n_energy = spec.flux_quanta.size, spec.energies_meV.size
    values = np.full((spec.realizations, n_flux, n_energy), np.nan)

    with claim_folder(out, resume=resume, command="sweep"):
        finished = finished_dataset(out / RESULTS_FILE, spec) if resume else None
        if finished is not None:  # killed after results.nc was written: nothing to compute
            if progress:
                print(f"sweep: {out / RESULTS_FILE} already holds this sweep; nothing recomputed", file=sys.stderr)
            PartStore(out, spec).remove()
            return finished
        if isinstance(model, AnalyticTube):
            values[:] = model.conductance(spec.energies_meV, spec.flux_quanta)[None]
        else:
            values = compute_spec(spec, out, resume=resume, workers=workers, cluster=cluster, progress=progress,
                                  keep_parts=True, check_resources=False)
        ds = build_dataset(spec, description, values, scenario_text, clean_reference(scenario, spec))
        if spec.realizations > 1:
            ds = ds.merge(ensemble_summary(ds["conductance"]), combine_attrs="override")
        ds.attrs["sweep_fingerprint"] = sweep_fingerprint(spec)
        write_netcdf_atomic(ds, out / RESULTS_FILE)
        PartStore(out, spec).remove()  # only once results.nc is safely in place
    return ds


def check_size(spec: SweepSpec, out_dir: str | Path, *, workers: int | None = None, cluster: str | None = None,
               progress: bool = True, label: str = "sweep", fields: dict | None = None,
               values: dict | None = None) -> None:
    """Print the estimated memory, disk and time of a sweep; refuse one that does not fit this machine.

    See :mod:`simsurface.resources`; ``fields``/``values`` name the scenario fields behind the sizes when
    the sweep was derived from another table.
    """
    estimate = estimate_spec(spec, 1 if cluster else (workers or default_workers()), fields=fields, values=values)
    if progress:
        print(f"{label}: {estimate.summary()}", file=sys.stderr, flush=True)
    check_fits(estimate, machine_limits(out_dir), local=cluster is None)


def compute_spec(spec: SweepSpec, out_dir: str | Path, *, resume: bool = False, workers: int | None = None,
                 cluster: str | None = None, progress: bool = True, label: str = "sweep",
                 keep_parts: bool = False, check_resources: bool = True, fields: dict | None = None,
                 values: dict | None = None) -> np.ndarray:
    """Conductance (e²/h) of every task of a lattice sweep; shape (realization, flux, energy).

    Finished tasks are stored under ``out_dir`` (see :class:`PartStore`) so that an interrupted
    computation continues with ``resume=True``; the parts are removed at the end unless ``keep_parts``.
    ``label`` names the progress bar. Unless ``check_resources`` is False the sweep's size is checked
    first (:func:`check_size`, with ``fields``/``values``).
    """
    out = Path(out_dir)
    if check_resources:
        check_size(spec, out, workers=workers, cluster=cluster, progress=progress, label=label, fields=fields,
                   values=values)
    result = np.full((spec.realizations, spec.flux_quanta.size, spec.energies_meV.size), np.nan)
    tasks = spec.tasks()
    store = PartStore(out, spec)
    with store.session(tasks, resume) as kept:
        for task in tasks:
            if task.key in kept:
                result[task.realization, task.fluxes] = kept[task.key]
        todo = [t for t in tasks if t.key not in kept]
        bar = _progress_bar(len(tasks), len(tasks) - len(todo), progress, label)

        def on_result(task: Task, g: np.ndarray) -> None:
            store.write(task, g)
            result[task.realization, task.fluxes] = g
            if bar is not None:
                bar.update(1)

        try:
            run_tasks(spec, todo, on_result, workers=workers or default_workers(), cluster=cluster)
        finally:
            if bar is not None:
                bar.close()
        if not keep_parts:
            store.remove()
    return result


def _progress_bar(total: int, initial: int, enabled: bool, label: str = "sweep"):
    if not enabled or total <= 1:
        return None
    from tqdm import tqdm

    return tqdm(total=total, initial=initial, unit="task", desc=label, file=sys.stderr,
                mininterval=0.5, dynamic_ncols=True)
