"""Sweeps with disorder: identical numbers for any worker count, task order and ensemble size."""

from __future__ import annotations

import tomllib

import numpy as np

from simsurface.scenario import parse_scenario
from simsurface.sweeps import make_spec
from simsurface.sweeps.executor import run_tasks
from simsurface.sweeps.spec import solve_task

DISORDER = {"anderson_width_meV": 40.0, "puddle_rms_meV": 8.0, "puddle_correlation_nm": 4.0,
            "roughness_rms_nm": 0.6, "roughness_correlation_nm": 12.0, "vacancy_fraction": 0.03}


def disordered(text, realizations):
    data = tomllib.loads(text)
    data["disorder"] = DISORDER
    data["sweep"].update(realizations=realizations, flux_quanta=[0.0, 0.3, 0.5], fermi_energy_meV=[20.0, 35.0])
    return parse_scenario(data)


def test_disordered_tasks_give_identical_numbers_on_two_workers_in_shuffled_order(tiny_scenario_text):
    spec = make_spec(disordered(tiny_scenario_text, 3))
    tasks = spec.tasks()
    serial = {t.key: solve_task(spec, t) for t in tasks}
    shuffled = [tasks[i] for i in np.random.default_rng(1).permutation(len(tasks))]
    parallel = {}
    run_tasks(spec, shuffled, lambda t, g: parallel.__setitem__(t.key, g), workers=2)
    assert serial.keys() == parallel.keys()
    for key in serial:
        np.testing.assert_array_equal(serial[key], parallel[key])
    # the realizations really differ (otherwise the check above would be empty)
    first = {t.realization: t.key for t in reversed(tasks)}
    assert not np.array_equal(serial[first[0]], serial[first[1]])


def test_a_realization_does_not_depend_on_the_size_of_the_ensemble(tiny_scenario_text):
    small, large = make_spec(disordered(tiny_scenario_text, 2)), make_spec(disordered(tiny_scenario_text, 5))
    for task in small.tasks():
        np.testing.assert_array_equal(solve_task(small, task), solve_task(large, task))


def test_stacked_tasks_equal_point_by_point_solutions_of_the_mode_tube(tiny_scenario_text, monkeypatch):
    # a task solves a realization at several fluxes and all energies as stacks; the same numbers (to 1e-10)
    # come from building every flux's chain and solving it energy by energy, and from one flux per task
    import simsurface.sweeps.spec as spec_mod
    from simsurface.transport.engines import conductance

    data = tomllib.loads(tiny_scenario_text)
    data["model"] = {"kind": "surface_modes"}
    data["disorder"] = {"anderson_width_meV": 40.0, "roughness_rms_nm": 0.6, "roughness_correlation_nm": 12.0}
    data["sweep"].update(realizations=2, flux_quanta=[0.0, 0.21, 0.5], fermi_energy_meV=[12.0, 30.0])
    spec = make_spec(parse_scenario(data))
    monkeypatch.setattr(spec_mod, "MIN_TASKS", 1)             # one task per realization
    tasks = spec.tasks()
    assert len(tasks) == 2 and tasks[1].fluxes == slice(0, 3)
    stacked = solve_task(spec, tasks[1])
    model, real = spec.model(), spec.realization(1)
    for i, phi in enumerate(spec.flux_quanta):
        chain = model.chain(float(phi), **real.chain_kwargs(float(phi)))
        np.testing.assert_allclose(stacked[i], conductance(chain, spec.energies_meV), rtol=0, atol=1e-10)
    monkeypatch.setattr(spec_mod, "STACK_POINTS", 1)
    single = np.vstack([solve_task(spec, t) for t in spec.tasks() if t.realization == 1])
    np.testing.assert_allclose(single, stacked, rtol=0, atol=1e-10)
