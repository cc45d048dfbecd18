"""An output folder belongs to one run at a time.

:func:`claim_folder` checks that a path can be an output folder, creates it, and takes an exclusive lock on
it for the duration of a ``with`` block:

* **lock** — ``DIR/.simsurface-lock`` is locked with ``flock`` (the kernel releases it when the process
  ends, however it ends) and names its owner (pid, host, command, start time). A second run into the same
  folder is refused with a message naming the owner. A lock left by a process that no longer exists is
  stale and taken over silently; a lock file left by a process on another host cannot be checked and is
  refused with the path of the file to delete. Claims are re-entrant within one process (a command claims
  its folder, the library functions it calls claim it again); worker processes forked while a lock is held
  drop their copy of it, so a lingering worker never keeps a folder locked.
* **outputs of earlier runs** — every file written through :mod:`simsurface.io` into a claimed folder is
  recorded in ``DIR/.simsurface-outputs.json``. When a new run (not a resume) starts to write, the files
  recorded by the previous run are deleted first, so a figure of an earlier run (say an ensemble plot the
  new run does not make) cannot survive next to the new results.
* **nothing left behind** — when the block raises and the claim created the folder, the folder is removed
  again if nothing but empty folders and this module's bookkeeping remains in it.
* **finished runs** — :meth:`FolderClaim.mark_complete` records an identity (e.g. a hash of the command and
  its inputs); :func:`completed_identity` reads it back, so a resume of a finished run can do nothing.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import fcntl
import json
import os
import socket
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterator

from .errors import InputError

__all__ = ["LOCK_FILE", "RECORD_FILE", "FolderBusy", "FolderClaim", "active_claim", "claim_folder",
           "check_output_folder", "completed_identity", "record_output"]

LOCK_FILE = ".simsurface-lock"
RECORD_FILE = ".simsurface-outputs.json"
_BOOKKEEPING = {LOCK_FILE, RECORD_FILE}


class FolderBusy(InputError):
    """The output folder is locked by another run."""


@dataclass
class FolderClaim:
    """The lock on one output folder held by this process (see :func:`claim_folder`)."""

    folder: Path
    resume: bool
    command: str
    created: bool
    fd: int
    depth: int = 1
    taken_over: bool = False
    files: list[str] = field(default_factory=list)

    def take_over(self) -> None:
        """Delete the outputs recorded by the previous run (once; never when resuming)."""
        if self.taken_over:
            return
        self.taken_over = True
        previous = _read_record(self.folder)
        if not self.resume:
            for name in previous.get("files", []):
                target = (self.folder / name).resolve()
                if target.is_file() and self.folder.resolve() in target.parents:
                    target.unlink(missing_ok=True)
                    _remove_empty_parents(target.parent, self.folder)
            previous = {}
        self.files = [f for f in previous.get("files", []) if (self.folder / f).exists()]
        self._write_record(complete=None)

    def register(self, path: Path) -> None:
        """Record ``path`` (inside the folder) as an output of this run."""
        self.take_over()
        name = os.path.relpath(path, self.folder)
        if name not in self.files:
            self.files.append(name)
            self._write_record(complete=None)

    def mark_complete(self, identity: str) -> None:
        """Record that the run identified by ``identity`` finished with every output in place."""
        self.take_over()
        self._write_record(complete=identity)

    def _write_record(self, complete: str | None) -> None:
        data = {"files": self.files, "complete": complete, "command": self.command}
        tmp = self.folder / f".{RECORD_FILE}.{os.getpid()}.tmp"
        tmp.write_text(json.dumps(data, indent=1) + "\n", encoding="utf-8")
        os.replace(tmp, self.folder / RECORD_FILE)


#: claims held by this process, by resolved folder path
_HELD: dict[Path, FolderClaim] = {}


def check_output_folder(path: str | Path, what: str = "output folder") -> Path:
    """``path`` as a folder that exists or can be created (created here); InputError otherwise."""
    if str(path).strip() == "":
        raise InputError(f"{what}: the path is empty; name a folder")
    folder = Path(path)
    if folder.exists() and not folder.is_dir():
        raise InputError(f"{what}: {str(folder)!r} exists and is not a folder")
    try:
        folder.mkdir(parents=True, exist_ok=True)
        probe = folder / f".simsurface-probe.{os.getpid()}"
        probe.write_bytes(b"")
        probe.unlink()
    except OSError as exc:
        reason = exc.strerror or type(exc).__name__
        raise InputError(f"{what}: cannot write to {str(folder)!r} ({reason})") from None
    return folder


@contextlib.contextmanager
def claim_folder(path: str | Path, *, resume: bool = False, command: str = "simsurface",
                 what: str = "output folder") -> Iterator[FolderClaim]:
    """Create ``path`` if needed and hold its lock for the duration of the block.

    Parameters
    ----------
    path : path
        The output folder.
    resume : bool
        The run continues an earlier one: its recorded outputs are kept.
    command : str
        Shown to a second run that finds the folder locked.
    what : str
        How messages name the path (the command line says ``--out``).

    Raises
    ------
    InputError
        The path cannot be an output folder; :class:`FolderBusy` when another run holds it.
    """
    existed = str(path).strip() != "" and Path(path).is_dir()
    folder = check_output_folder(path, what)
    key = folder.resolve()
    held = _HELD.get(key)
    if held is not None:
        held.depth += 1
        try:
            yield held
        finally:
            held.depth -= 1
        return
    try:
        fd = _lock(folder, command, what)
    except BaseException:
        if not existed:
            _remove_if_empty(folder)
        raise
    claim = FolderClaim(folder, resume, command, created=not existed, fd=fd)
    _HELD[key] = claim
    ok = False
    try:
        yield claim
        ok = True
    finally:
        del _HELD[key]
        _unlock(folder, fd)
        if not ok and claim.created:
            _remove_if_empty(folder)


def active_claim(path: str | Path) -> FolderClaim | None:
    """The innermost claim held by this process whose folder contains ``path``."""
    target = Path(path).resolve()
    best = None
    for folder, claim in _HELD.items():
        if folder == target or folder in target.parents:
            if best is None or len(folder.parts) > len(best.folder.resolve().parts):
                best = claim
    return best


def record_output(path: str | Path) -> None:
    """Record ``path`` as an output of the run that holds its folder (no-op outside a claim)."""
    claim = active_claim(Path(path).parent)
    if claim is not None:
        claim.register(Path(path).resolve())


def completed_identity(path: str | Path) -> str | None:
    """The identity recorded by :meth:`FolderClaim.mark_complete` in ``path``, or None."""
    folder = Path(path)
    if not folder.is_dir():
        return None
    return _read_record(folder).get("complete")


# --- the lock -----------------------------------------------------------------------------------------
def _lock(folder: Path, command: str, what: str) -> int:
    path = folder / LOCK_FILE
    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_CLOEXEC, 0o644)
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            owner = _owner_text(_read_owner(fd))
            os.close(fd)
            raise FolderBusy(f"{what}: {str(folder)!r} is in use by another run ({owner}); wait for it "
                             "to end or choose another folder") from None
        try:
            same = os.stat(path).st_ino == os.fstat(fd).st_ino
        except FileNotFoundError:
            same = False
        if same:
            break
        os.close(fd)  # the previous holder removed the file between our open and flock: try again
    previous = _read_owner(fd)
    if previous and previous.get("host") != socket.gethostname():
        os.close(fd)
        raise FolderBusy(
            f"{what}: {str(folder)!r} is locked by a run on another host ({_owner_text(previous)}), "
            f"which cannot be checked from here; if that run has ended, delete {str(path)!r}")
    owner = {"pid": os.getpid(), "host": socket.gethostname(), "command": command,
             "started_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")}
    os.ftruncate(fd, 0)
    os.pwrite(fd, (json.dumps(owner) + "\n").encode(), 0)
    return fd


def _unlock(folder: Path, fd: int) -> None:
    with contextlib.suppress(OSError):
        # remove the file while still holding the lock; a waiting opener sees the inode change and retries
        if os.stat(folder / LOCK_FILE).st_ino == os.fstat(fd).st_ino:
            os.unlink(folder / LOCK_FILE)
    os.close(fd)


def _read_owner(fd: int) -> dict:
    try:
        return json.loads(os.pread(fd, 4096, 0).decode() or "{}")
    except (OSError, ValueError):
        return {}


def _owner_text(owner: dict) -> str:
    if not owner:
        return "owner unknown"
    return (f"pid {owner.get('pid')} on host {owner.get('host')}, {owner.get('command')}, "
            f"started {owner.get('started_utc')}")


def _close_inherited_locks() -> None:
    # a forked worker must not keep its parent's folder locked if it outlives the parent
    for claim in list(_HELD.values()):
        with contextlib.suppress(OSError):
            os.close(claim.fd)
    _HELD.clear()


os.register_at_fork(after_in_child=_close_inherited_locks)


# --- bookkeeping ----------------------------------------------------------------------------------------
def _read_record(folder: Path) -> dict:
    try:
        data = json.loads((folder / RECORD_FILE).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return data if isinstance(data, dict) else {}


def _remove_if_empty(folder: Path) -> None:
    """Remove ``folder`` if it holds nothing but empty folders and bookkeeping files."""
    for root, dirs, files in os.walk(folder):
        if any(name not in _BOOKKEEPING for name in files):
            return
    for root, dirs, files in os.walk(folder, topdown=False):
        for name in files:
            with contextlib.suppress(OSError):
                os.unlink(os.path.join(root, name))
        with contextlib.suppress(OSError):
            os.rmdir(root)


def _remove_empty_parents(start: Path, stop: Path) -> None:
    current = start
    while current != stop and stop in current.parents:
        try:
            current.rmdir()
        except OSError:
            return
        current = current.parent
