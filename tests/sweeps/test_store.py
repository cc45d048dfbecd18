"""Results store: parts tagged with their sweep and checked on read, what changed, clean-up order."""

from __future__ import annotations

import shutil
import tomllib
import warnings

import numpy as np
import pytest

from simsurface.errors import InputError, IntegrityWarning, Interrupted
from simsurface.scenario import parse_scenario
from simsurface.sweeps import make_spec, run_scenario
from simsurface.sweeps.store import MANIFEST, PART_SUFFIX, PARTS_DIR, PartStore, describe_changes, sweep_identity


def scenario(text, **wire):
    data = tomllib.loads(text)
    data["wire"].update(wire)
    return parse_scenario(data)


def shape(spec, task):
    return task.fluxes.stop - task.fluxes.start, spec.energies_meV.size


def fill(store, tasks, value=1.0):
    with store.session(tasks) as kept:
        assert kept == {}
        for task in tasks:
            store.write(task, np.full(shape(store.spec, task), value))


def test_part_of_another_sweep_is_set_aside_and_recomputed(tmp_path, tiny_scenario_text):
    # two runs writing into one folder (say, one that ignored the lock): the parts carry their sweep
    thin, thick = make_spec(scenario(tiny_scenario_text)), make_spec(scenario(tiny_scenario_text, diameter_nm=30.0))
    tasks = thin.tasks()
    fill(PartStore(tmp_path, thin), tasks)
    fill(PartStore(tmp_path / "other", thick), tasks[:2], value=2.0)
    for task in tasks[:2]:  # the other run's parts land in this folder under the same names
        (tmp_path / "other" / PARTS_DIR / f"{task.key}{PART_SUFFIX}").replace(
            tmp_path / PARTS_DIR / f"{task.key}{PART_SUFFIX}")
    (tmp_path / PARTS_DIR / f"{tasks[2].key}{PART_SUFFIX}").write_bytes(b"truncated")
    with pytest.warns(IntegrityWarning, match="3 finished task file"):
        with PartStore(tmp_path, thin).session(tasks, resume=True) as kept:
            assert set(kept) == {t.key for t in tasks[3:]}
            assert all(np.all(v == 1.0) for v in kept.values())


def test_resume_of_a_changed_sweep_says_what_changed(tmp_path, tiny_scenario_text):
    spec = make_spec(scenario(tiny_scenario_text))
    fill(PartStore(tmp_path, spec), spec.tasks()[:1])
    changed = make_spec(scenario(tiny_scenario_text, diameter_nm=30.0, length_nm=40.0))
    with pytest.raises(InputError, match=r"\[wire\] diameter_nm 22.0 -> 30.0, \[wire\] length_nm 30.0 -> 40.0"):
        with PartStore(tmp_path, changed).session(changed.tasks(), resume=True):
            pass


def test_title_and_plots_do_not_belong_to_the_sweep(tmp_path, tiny_scenario_text):
    spec = make_spec(scenario(tiny_scenario_text))
    relabelled = make_spec(parse_scenario({**tomllib.loads(tiny_scenario_text), "title": "renamed",
                                           "plots": {"flux_cuts_meV": [5.0]}}))
    assert sweep_identity(spec) == sweep_identity(relabelled)
    fill(PartStore(tmp_path, spec), spec.tasks()[:2])
    with PartStore(tmp_path, relabelled).session(relabelled.tasks(), resume=True) as kept:
        assert len(kept) == 2


def test_describe_changes_names_axes_and_lists(tiny_scenario_text):
    a = sweep_identity(make_spec(scenario(tiny_scenario_text)))
    b = dict(a, energies_meV=[1.0], engine="kwant")
    assert describe_changes(a, b) == "energy axis changed (3 -> 1 values), engine 'slices' -> 'kwant'"


def test_nothing_is_written_before_the_first_task_finishes(tmp_path, tiny_scenario_text):
    spec = make_spec(scenario(tiny_scenario_text))
    with pytest.raises(Interrupted) as err:
        with PartStore(tmp_path / "out", spec).session(spec.tasks()):
            raise KeyboardInterrupt
    assert err.value.progress == (0, 5, str(tmp_path / "out"))
    assert not (tmp_path / "out").exists()


def test_interrupt_reports_the_tasks_kept(tmp_path, tiny_scenario_text):
    spec = make_spec(scenario(tiny_scenario_text))
    store = PartStore(tmp_path, spec)
    with pytest.raises(Interrupted, match="interrupted \\(SIGINT\\); 2 of 5 tasks kept"):
        with store.session(spec.tasks()):
            for task in spec.tasks()[:2]:
                store.write(task, np.zeros(shape(spec, task)))
            raise KeyboardInterrupt


def test_clean_up_removes_the_manifest_last(tmp_path, tiny_scenario_text, monkeypatch):
    spec = make_spec(scenario(tiny_scenario_text))
    store = PartStore(tmp_path, spec)
    fill(store, spec.tasks())
    removed = []
    real_unlink = type(tmp_path).unlink
    monkeypatch.setattr(type(tmp_path), "unlink", lambda self, missing_ok=False: (
        removed.append(self.name), real_unlink(self, missing_ok=missing_ok)))
    store.remove()
    assert removed[-1] == MANIFEST and len(removed) == 6
    assert not (tmp_path / PARTS_DIR).exists()


@pytest.mark.parametrize("kill_at", ["parts-half-removed", "only-manifest", "empty-folder", "no-figures"])
def test_kill_at_any_step_of_the_clean_up_leaves_the_run_resumable(tmp_path, tiny_scenario_text, kill_at):
    # the states a kill can leave after results.nc is in place, made by hand: resume must finish without
    # recomputing and give the same numbers
    scn = scenario(tiny_scenario_text)
    spec = make_spec(scn)
    full = run_scenario(scn, tmp_path / "ref", workers=1, progress=False)
    out = tmp_path / "out"
    parts = PartStore(out, spec)
    fill(parts, spec.tasks(), value=-1.0)  # would be visibly wrong if read back
    shutil.copy(tmp_path / "ref" / "results.nc", out / "results.nc")
    names = sorted(p for p in (out / PARTS_DIR).iterdir() if p.name != MANIFEST)
    if kill_at == "parts-half-removed":
        for p in names[: len(names) // 2]:
            p.unlink()
    elif kill_at in ("only-manifest", "empty-folder"):
        for p in names:
            p.unlink()
        if kill_at == "empty-folder":
            (out / PARTS_DIR / MANIFEST).unlink()
    else:
        parts.remove()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        resumed = run_scenario(scn, out, workers=1, progress=False, resume=True)
    np.testing.assert_array_equal(resumed["conductance"].values, full["conductance"].values)
    assert not (out / PARTS_DIR).exists()
