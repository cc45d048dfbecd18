"""Exceptions that carry a message meant for the user.

Every problem caused by input (a scenario field, a data file, a command-line option) is raised as
:class:`InputError` with one sentence that names the field and what is allowed. The command line prints
that sentence, exits non-zero and shows no traceback.
"""

from __future__ import annotations


class SimsurfaceError(Exception):
    """Base class for errors that are reported to the user without a traceback."""


class InputError(SimsurfaceError, ValueError):
    """Bad input: the message names the field and the allowed values."""


class ValidityWarning(UserWarning):
    """A requested quantity lies outside the validity window of a model."""
