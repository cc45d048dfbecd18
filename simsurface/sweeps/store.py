"""Resumable results store: one small file per finished task, tagged with its sweep and written atomically.

Finished tasks land in ``OUT/.simsurface-parts/`` as ``<task key>.npz`` holding the conductances, the task
key and the fingerprint of the sweep (:func:`sweep_fingerprint`: scenario without its title and ``[plots]``,
axes, engine, realizations, version). Every part is checked on read: a part of another sweep, of another
task, or a damaged one is set aside and computed again (:class:`~simsurface.errors.IntegrityWarning`).
The manifest ``manifest.json`` holds the sweep's identity, so a resume of a changed sweep is refused with
a message that says what changed.

Nothing is written before the first task finishes: a run that fails before (bad cluster address, refused
size) leaves the folder as it was. The first write of a fresh run removes the parts and the recorded
outputs of the run before it (:mod:`simsurface.outdir`). Removal at the end goes part files first and the
manifest last, so a kill at any moment leaves either a resumable store or a finished ``results.nc``.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import shutil
import warnings
from pathlib import Path
from typing import Any, Iterator

import numpy as np
import xarray as xr

from .. import __version__
from ..errors import ComputeLost, InputError, IntegrityWarning, Interrupted
from ..io import atomic_path, write_json_atomic
from ..outdir import active_claim, claim_folder
from .spec import SweepSpec, Task

__all__ = ["MANIFEST", "PARTS_DIR", "PART_SUFFIX", "PartStore", "describe_changes", "finished_dataset", "sweep_fingerprint",
           "sweep_identity"]

PARTS_DIR = ".simsurface-parts"
MANIFEST = "manifest.json"
PART_SUFFIX = ".npz"
#: scenario tables that shape figures and labels only, never a number; a resume may change them
COSMETIC = ("title", "plots")


def sweep_identity(spec: SweepSpec) -> dict[str, Any]:
    """Everything that determines the numbers of a sweep, as JSON-ready data."""
    scenario = spec.scenario.model_dump(mode="json")
    for key in COSMETIC:
        scenario.pop(key, None)
    return {"scenario": scenario, "flux_quanta": spec.flux_quanta.tolist(),
            "energies_meV": spec.energies_meV.tolist(), "engine": spec.engine,
            "realizations": int(spec.realizations), "version": __version__}


def sweep_fingerprint(spec: SweepSpec) -> str:
    """Short hash of :func:`sweep_identity` (24 hex digits)."""
    blob = json.dumps(sweep_identity(spec), sort_keys=True)
    return hashlib.sha256(blob.encode()).hexdigest()[:24]


def describe_changes(old: dict[str, Any], new: dict[str, Any], limit: int = 4) -> str:
    """The differences between two sweep identities, e.g. ``"[wire] diameter_nm 60.0 -> 80.0"``."""
    changes: list[str] = []

    def label(path: tuple[str, ...]) -> str:
        if path[0] == "scenario" and len(path) >= 3:
            return f"[{'.'.join(path[1:-1])}] {path[-1]}"
        if path[0] == "scenario" and len(path) == 2:
            return path[1]
        return {"flux_quanta": "flux axis", "energies_meV": "energy axis", "engine": "engine",
                "realizations": "realizations", "version": "simsurface version"}.get(path[0], ".".join(path))

    def walk(a: Any, b: Any, path: tuple[str, ...]) -> None:
        if isinstance(a, dict) and isinstance(b, dict):
            for key in sorted(set(a) | set(b), key=str):
                walk(a.get(key), b.get(key), path + (str(key),))
        elif a != b:
            if isinstance(a, list) or isinstance(b, list):
                n_a = len(a) if isinstance(a, list) else 0
                n_b = len(b) if isinstance(b, list) else 0
                changes.append(f"{label(path)} changed ({n_a} -> {n_b} values)" if n_a != n_b
                               else f"{label(path)} changed")
            else:
                changes.append(f"{label(path)} {a!r} -> {b!r}")

    walk(old, new, ())
    shown = changes[:limit] + ([f"and {len(changes) - limit} more"] if len(changes) > limit else [])
    return ", ".join(shown) if shown else "no difference found"


def finished_dataset(path: str | Path, spec: SweepSpec) -> xr.Dataset | None:
    """The results file at ``path`` loaded, if it holds this sweep (its ``sweep_fingerprint`` attribute)."""
    try:
        with xr.open_dataset(path) as ds:
            return ds.load() if ds.attrs.get("sweep_fingerprint") == sweep_fingerprint(spec) else None
    except (OSError, ValueError):
        return None


class PartStore:
    """Task results of one sweep under ``out_dir`` (see the module docstring).

    Parameters
    ----------
    out_dir : path
        The folder that holds ``.simsurface-parts/``.
    spec : SweepSpec
        The sweep; its identity tags every part.
    """

    def __init__(self, out_dir: str | Path, spec: SweepSpec):
        self.out_dir = Path(out_dir)
        self.folder = self.out_dir / PARTS_DIR
        self.spec = spec
        self.identity = sweep_identity(spec)
        self.fingerprint = sweep_fingerprint(spec)
        self._ready = False
        self._kept = 0
        self._total = 0

    # --- a session: lock, resume, interrupts ---------------------------------------------------------
    @contextlib.contextmanager
    def session(self, tasks: list[Task], resume: bool = False) -> Iterator[dict[str, np.ndarray]]:
        """Hold the folder (:func:`~simsurface.outdir.claim_folder`) and yield the valid finished parts.

        With ``resume`` the parts of the same sweep are kept (a different sweep raises InputError naming
        what changed); otherwise the store starts empty and the earlier parts are removed at the first
        write. An interrupt or a lost worker leaving the block is told how many tasks were kept.
        """
        with claim_folder(self.out_dir, resume=resume, command="sweep"):
            kept = self._open(resume, tasks)
            self._kept, self._total = len(kept), len(tasks)
            try:
                yield kept
            except Interrupted as exc:
                if exc.progress is None:
                    exc.progress = self.progress()
                raise
            except KeyboardInterrupt as exc:
                raise Interrupted(progress=self.progress()) from exc
            except ComputeLost as exc:
                exc.progress = self.progress()
                raise

    def progress(self) -> tuple[int, int, str]:
        """(tasks kept, tasks of the sweep, folder) of the current session."""
        return self._kept, self._total, str(self.out_dir)

    def _open(self, resume: bool, tasks: list[Task]) -> dict[str, np.ndarray]:
        manifest = self.folder / MANIFEST
        if not (resume and manifest.is_file()):
            self._ready = False
            return {}
        try:
            found = json.loads(manifest.read_text(encoding="utf-8"))
        except (OSError, ValueError):
            found = {}
        if found.get("fingerprint") != self.fingerprint:
            old = found.get("identity")
            what = describe_changes(old, self.identity) if isinstance(old, dict) else \
                "they were written by an earlier version of simsurface"
            raise InputError(f"cannot resume in {str(self.out_dir)!r}: its finished tasks belong to a different "
                             f"sweep ({what}); start afresh without resuming, or choose another output folder")
        for tmp in self.folder.glob(".*.tmp"):
            tmp.unlink(missing_ok=True)
        self._ready = True
        return self._load(tasks)

    def _load(self, tasks: list[Task]) -> dict[str, np.ndarray]:
        kept: dict[str, np.ndarray] = {}
        bad = []
        n_energy = self.spec.energies_meV.size
        for task in tasks:
            shape = (task.fluxes.stop - task.fluxes.start, n_energy)
            path = self.folder / f"{task.key}{PART_SUFFIX}"
            if not path.is_file():
                continue
            try:
                with np.load(path, allow_pickle=False) as part:
                    ok = (str(part["fingerprint"]) == self.fingerprint and str(part["task"]) == task.key)
                    values = np.array(part["values"], dtype=float)
                ok = ok and values.shape == shape
            except (OSError, ValueError, KeyError, EOFError):
                ok = False
            if ok:
                kept[task.key] = values
            else:
                bad.append(path.name)
        if bad:
            warnings.warn(f"{len(bad)} finished task file(s) in {str(self.folder)!r} belong to another sweep or "
                          f"are damaged (first: {bad[0]}); they are computed again", IntegrityWarning, stacklevel=3)
        return kept

    # --- writing --------------------------------------------------------------------------------------
    def write(self, task: Task, values: np.ndarray) -> None:
        """Store the conductances (e²/h; shape (n_flux of the task, n_energy)) of a finished task."""
        if not self._ready:
            self._start()
        with atomic_path(self.folder / f"{task.key}{PART_SUFFIX}", suffix=".npz.tmp", record=False) as tmp:
            with open(tmp, "wb") as fh:
                np.savez(fh, values=np.asarray(values, dtype=float), task=np.array(task.key),
                         fingerprint=np.array(self.fingerprint))
        self._kept += 1

    def _start(self) -> None:
        """First write of a fresh store: outputs and parts of the run before go, the manifest comes."""
        claim = active_claim(self.out_dir)
        if claim is not None:
            claim.take_over()
        if self.folder.exists():
            self._remove_tree()
        self.folder.mkdir(parents=True, exist_ok=True)
        write_json_atomic(self.folder / MANIFEST, {"fingerprint": self.fingerprint, "identity": self.identity},
                          record=False)
        self._ready = True

    def remove(self) -> None:
        """Delete the parts folder: part files first, the manifest last (a kill leaves a resumable store)."""
        if self.folder.is_dir():
            self._remove_tree()

    def _remove_tree(self) -> None:
        for path in self.folder.iterdir():
            if path.name != MANIFEST:
                if path.is_dir() and not path.is_symlink():
                    shutil.rmtree(path, ignore_errors=True)
                else:
                    path.unlink(missing_ok=True)
        (self.folder / MANIFEST).unlink(missing_ok=True)
        with contextlib.suppress(OSError):
            os.rmdir(self.folder)
