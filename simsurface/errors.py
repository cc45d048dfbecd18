"""Exceptions that carry a message meant for the user.

Every problem caused by input (a scenario field, a data file, a command-line option) is raised as
:class:`InputError` with one sentence that names the field and what is allowed. The command line prints
that sentence, exits non-zero and shows no traceback. A run stopped by a signal raises :class:`Interrupted`
(a ``KeyboardInterrupt``); a run that lost a worker process or its Dask scheduler raises
:class:`ComputeLost`. Both say how much finished work was kept.
"""

from __future__ import annotations

import signal as _signal

__all__ = ["ComputeLost", "InputError", "IntegrityWarning", "Interrupted", "ResourceError", "SimsurfaceError",
           "ValidityWarning", "progress_text"]


class SimsurfaceError(Exception):
    """Base class for errors that are reported to the user without a traceback."""


class InputError(SimsurfaceError, ValueError):
    """Bad input: the message names the field and the allowed values."""


class ResourceError(InputError):
    """The computation would not fit this machine (memory, disk or time); the message names the field that
    drives the cost. :func:`simsurface.resources.oversize_allowed` lets it run anyway."""


class ComputeLost(SimsurfaceError):
    """A worker process or the Dask scheduler went away mid-run; finished tasks are kept.

    Attributes
    ----------
    progress : tuple (kept, total, folder) or None
        Filled in by the results store the error passes through.
    """

    progress: tuple[int, int, str] | None = None

    def __str__(self) -> str:
        return super().__str__() + progress_text(self.progress, "; ")


class Interrupted(KeyboardInterrupt):
    """The run was stopped by a signal (Ctrl-C, SIGTERM, SIGHUP); finished tasks are kept.

    Parameters
    ----------
    signal_number : int
        The signal that stopped the run (``signal.SIGINT`` for Ctrl-C).
    progress : tuple (kept, total, folder), optional
        Finished tasks kept, tasks of the sweep, and where they are kept.
    """

    def __init__(self, signal_number: int = _signal.SIGINT, progress: tuple[int, int, str] | None = None):
        super().__init__(signal_number, progress)
        self.signal_number = int(signal_number)
        self.progress = progress

    @property
    def signal_name(self) -> str:
        try:
            return _signal.Signals(self.signal_number).name
        except ValueError:
            return f"signal {self.signal_number}"

    @property
    def exit_code(self) -> int:
        """128 + the signal number, the shell's convention (130 for Ctrl-C, 143 for SIGTERM)."""
        return 128 + self.signal_number

    def __str__(self) -> str:
        return f"interrupted ({self.signal_name})" + progress_text(self.progress, "; ")


def progress_text(progress: tuple[int, int, str] | None, prefix: str = "") -> str:
    """``"N of M tasks kept in FOLDER"`` for a ``(kept, total, folder)`` tuple; empty for None."""
    if progress is None:
        return ""
    kept, total, folder = progress
    return f"{prefix}{kept} of {total} tasks kept in {folder}"


class ValidityWarning(UserWarning):
    """A requested quantity lies outside the validity window of a model."""


class IntegrityWarning(UserWarning):
    """Stored results were found damaged or belonging to another run and were set aside."""
