"""Sweeps: results.nc layout, determinism across worker counts and task order, Dask, resume."""

from __future__ import annotations

import tomllib

import numpy as np
import pytest
import xarray as xr

from simsurface.errors import InputError
from simsurface.scenario import parse_scenario
from simsurface.sweeps import make_spec, run_scenario
from simsurface.sweeps.executor import run_tasks
from simsurface.sweeps.spec import solve_task
from simsurface.sweeps.store import PARTS_DIR


def scenario(text, **sweep):
    data = tomllib.loads(text)
    data["sweep"].update(sweep)
    return parse_scenario(data)


def test_results_file_has_conductance_flux_energy_and_provenance(tmp_path, tiny_scenario_text):
    ds = run_scenario(scenario(tiny_scenario_text), tmp_path, scenario_text=tiny_scenario_text,
                      workers=1, progress=False)
    on_disk = xr.open_dataset(tmp_path / "results.nc")
    assert on_disk["conductance"].dims == ("realization", "flux", "energy")
    assert on_disk["conductance"].attrs["units"] == "e^2/h"
    assert on_disk["flux"].attrs["units"] == "h/e" and on_disk["energy"].attrs["units"] == "meV"
    for key in ("scenario_toml", "versions_json", "model_json", "engine", "enclosed_area_nm2"):
        assert key in on_disk.attrs
    np.testing.assert_allclose(on_disk["conductance"], ds["conductance"])
    assert not (tmp_path / PARTS_DIR).exists()
    on_disk.close()


def test_clean_lattice_sweep_reproduces_clean_channel_count_away_from_thresholds(tmp_path, tiny_scenario_text):
    # inside the validity window and away from subband edges a clean tube conducts N(E, Φ) e²/h
    # (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010))
    ds = run_scenario(scenario(tiny_scenario_text), tmp_path, workers=1, progress=False)
    g = ds["conductance"].isel(realization=0)
    # E = 5 meV sits well inside the first subband window of this 20 nm contour (spacing ~ 52 meV)
    np.testing.assert_allclose(g.sel(energy=5.0), ds["clean_channels"].sel(energy=5.0), atol=1e-8)


def test_two_workers_and_shuffled_order_give_identical_results(tmp_path, tiny_scenario_text):
    spec = make_spec(scenario(tiny_scenario_text))
    tasks = spec.tasks()
    serial = {t.key: solve_task(spec, t) for t in tasks}
    parallel = {}
    shuffled = [tasks[i] for i in np.random.default_rng(0).permutation(len(tasks))]
    run_tasks(spec, shuffled, lambda t, g: parallel.__setitem__(t.key, g), workers=2)
    assert serial.keys() == parallel.keys()
    for key in serial:
        np.testing.assert_array_equal(serial[key], parallel[key])


def test_dask_local_cluster_equals_serial_run(tmp_path, tiny_scenario_text):
    distributed = pytest.importorskip("distributed")
    scn = scenario(tiny_scenario_text, flux_quanta=[0.0, 0.3, 0.5])
    serial = run_scenario(scn, tmp_path / "serial", workers=1, progress=False)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        remote = run_scenario(scn, tmp_path / "dask", cluster=cluster.scheduler_address, progress=False)
    np.testing.assert_array_equal(serial["conductance"].values, remote["conductance"].values)


def test_resume_skips_finished_tasks_and_refuses_a_different_sweep(tmp_path, tiny_scenario_text, monkeypatch):
    import simsurface.sweeps.run as run_mod
    import simsurface.sweeps.spec as spec_mod

    monkeypatch.setattr(spec_mod, "STACK_POINTS", 1)       # one flux value per task: several tasks
    scn = scenario(tiny_scenario_text)
    full = run_scenario(scn, tmp_path / "full", workers=1, progress=False)

    # interrupt a run after two tasks

    calls = {"n": 0}
    real = run_mod.run_tasks

    def interrupted(spec, tasks, on_result, **kw):
        def counting(task, g):
            calls["n"] += 1
            on_result(task, g)
            if calls["n"] == 2:
                raise KeyboardInterrupt
        real(spec, tasks, counting, workers=1)

    monkeypatch.setattr(run_mod, "run_tasks", interrupted)
    with pytest.raises(KeyboardInterrupt):
        run_scenario(scn, tmp_path / "part", workers=1, progress=False)
    assert not (tmp_path / "part" / "results.nc").exists()
    assert len(list((tmp_path / "part" / PARTS_DIR).glob("*.npy"))) == 2

    computed = []
    monkeypatch.setattr(run_mod, "run_tasks", lambda spec, tasks, on_result, **kw: (
        computed.extend(tasks), real(spec, tasks, on_result, workers=1)))
    with pytest.raises(InputError, match="different sweep"):
        run_scenario(scenario(tiny_scenario_text, fermi_energy_meV=[6.0]), tmp_path / "part", resume=True,
                     progress=False)
    resumed = run_scenario(scn, tmp_path / "part", resume=True, progress=False)
    assert len(computed) == len(make_spec(scn).tasks()) - 2
    np.testing.assert_array_equal(resumed["conductance"].values, full["conductance"].values)
