"""Resumable results store: one small file per finished task, written atomically.

Finished tasks land in ``OUT/.simsurface-parts/`` as ``<task key>.npy`` (temporary file + ``os.replace``),
so an interrupted run — Ctrl-C, ``kill -9``, a lost worker — leaves only whole task files behind. A run
started with ``resume=True`` checks that the parts belong to the same sweep (a fingerprint of scenario,
axes, engine and version) and computes only the missing tasks. The final ``results.nc`` is assembled
from the parts and written atomically; then the parts folder is removed.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..io import atomic_path, write_json_atomic
from .spec import Task

PARTS_DIR = ".simsurface-parts"


class PartStore:
    """Task results of one sweep under ``out_dir``."""

    def __init__(self, out_dir: str | Path, fingerprint: str):
        self.folder = Path(out_dir) / PARTS_DIR
        self.fingerprint = fingerprint

    def open(self, resume: bool) -> None:
        """Prepare the folder; with ``resume`` keep parts of the same sweep, otherwise start empty."""
        manifest = self.folder / "manifest.json"
        if resume and self.folder.is_dir():
            try:
                found = json.loads(manifest.read_text()).get("fingerprint")
            except (OSError, ValueError):
                found = None
            if found != self.fingerprint:
                raise InputError(
                    f"--resume: {self.folder.parent} holds parts of a different sweep (scenario, axes, engine or "
                    "version changed); start without --resume or use another --out folder")
            for tmp in self.folder.glob(".*.tmp"):
                tmp.unlink(missing_ok=True)
            return
        if self.folder.exists():
            shutil.rmtree(self.folder)
        self.folder.mkdir(parents=True)
        write_json_atomic(manifest, {"fingerprint": self.fingerprint})

    def done(self) -> set[str]:
        return {p.stem for p in self.folder.glob("r*_f*.npy")}

    def write(self, task: Task, values: np.ndarray) -> None:
        with atomic_path(self.folder / f"{task.key}.npy", suffix=".npy.tmp") as tmp:
            with open(tmp, "wb") as fh:
                np.save(fh, np.asarray(values, dtype=float))

    def read(self, task: Task) -> np.ndarray:
        return np.load(self.folder / f"{task.key}.npy")

    def remove(self) -> None:
        shutil.rmtree(self.folder, ignore_errors=True)
