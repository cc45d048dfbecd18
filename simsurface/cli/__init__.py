"""Command line: a thin layer over the Python API.

Each subcommand lives in its own module with a ``register(subparsers)`` function that adds its parser
and sets ``func`` to a callable taking the parsed arguments and returning an exit code. User errors are
raised as :class:`~simsurface.errors.SimsurfaceError` and printed as one line, without a traceback.

What every command gets from here:

* ``--out DIR`` is checked (not empty, a folder, writable) and held for the whole command
  (:func:`~simsurface.outdir.claim_folder`): a second run into the same folder is refused, outputs of an
  earlier run are replaced, and a failed command leaves no folder it created. A ``--resume`` of a command
  that already finished with the same inputs says so and does nothing.
* Ctrl-C, SIGTERM and SIGHUP stop the command with "interrupted; N of M tasks kept" and exit code
  128 + the signal number (130, 143, 129); a second signal during the clean-up ends the process at once.
* ``--allow-oversize`` (where a command offers it) lets a run go ahead that the resource check refused.

Exit codes: 0 done, 2 bad input or a run that cannot go on (lost worker or scheduler, too large), 3 an
internal error, 128 + n after signal n.
"""

from __future__ import annotations

import argparse
import contextlib
import hashlib
import importlib
import json
import os
import signal
import sys
import time
import warnings
from pathlib import Path
from typing import Iterator

from .. import __version__
from ..errors import ComputeLost, InputError, Interrupted, ResourceError, SimsurfaceError, progress_text
from ..outdir import claim_folder, completed_identity
from ..resources import oversize_allowed

__all__ = ["SUBCOMMANDS", "build_parser", "main"]

#: modules under simsurface.cli that provide a subcommand, in the order shown by --help
SUBCOMMANDS = ("run", "plan", "materials", "analyze", "bench", "compare3d")

#: options that do not change what a command computes (left out of the identity of a finished run)
_NOT_IDENTITY = {"out", "workers", "cluster", "resume", "quiet", "debug", "func", "allow_oversize", "command"}
#: a second signal within this time is the same one delivered twice, not a second request to stop
_SAME_SIGNAL_S = 1.0
_STOP_SIGNALS = tuple(s for s in (getattr(signal, "SIGTERM", None), getattr(signal, "SIGHUP", None),
                                  signal.SIGINT) if s is not None)


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # one line, exit 2, like every other input error
        self.exit(2, f"simsurface: error: {message} (see 'simsurface --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="simsurface", description=(
        "Aharonov-Bohm magnetoconductance of surface-conducting nanowires: predict, simulate, analyse."))
    parser.add_argument("--version", action="version", version=f"simsurface {__version__}")
    parser.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for name in SUBCOMMANDS:
        importlib.import_module(f"{__name__}.{name}").register(sub)
    return parser


def _format_warning(message, category, filename, lineno, line=None) -> str:
    return f"simsurface: warning: {message}\n"


def main(argv: list[str] | None = None) -> int:
    os.environ.setdefault("MPLBACKEND", "Agg")
    warnings.formatwarning = _format_warning
    parser = build_parser()
    args = parser.parse_args(argv)
    resumable = hasattr(args, "resume")
    try:
        with _signals_interrupt():
            return _dispatch(args)
    except ResourceError as exc:
        hint = " (--allow-oversize)" if hasattr(args, "allow_oversize") else ""
        print(f"simsurface: error: {exc}{hint}", file=sys.stderr)
        return 2
    except ComputeLost as exc:
        hint = "; continue with --resume" if resumable and exc.progress else ""
        print(f"simsurface: error: {exc}{hint}", file=sys.stderr)
        return 2
    except SimsurfaceError as exc:
        print(f"simsurface: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        return _report_interrupt(exc, resumable)
    except Exception as exc:  # a bug, not bad input: short message unless --debug
        if args.debug:
            raise
        print(f"simsurface: internal error: {type(exc).__name__}: {exc} (rerun with --debug for details)",
              file=sys.stderr)
        return 3


def _dispatch(args: argparse.Namespace) -> int:
    out = getattr(args, "out", None)
    if out is None:
        return int(args.func(args) or 0)
    resume = bool(getattr(args, "resume", False))
    identity = _identity(args)
    if resume and completed_identity(out) == identity:
        print(f"simsurface: {out} already holds the finished results of this {args.command} with the same inputs; "
              "nothing to do", file=sys.stderr)
        return 0
    with claim_folder(out, resume=resume, command=f"simsurface {args.command}", what="--out") as claim, \
            oversize_allowed(bool(getattr(args, "allow_oversize", False))):
        code = int(args.func(args) or 0)
        if code == 0:
            claim.mark_complete(identity)
    return code


def _identity(args: argparse.Namespace) -> str:
    """Hash of the command and everything that shapes its results (input files by content)."""
    items = {}
    for key, value in sorted(vars(args).items()):
        if key in _NOT_IDENTITY:
            continue
        items[key] = [_content(v) for v in value] if isinstance(value, list) else _content(value)
    blob = json.dumps({"command": args.command, "args": items, "version": __version__}, sort_keys=True, default=str)
    return hashlib.sha256(blob.encode()).hexdigest()[:24]


def _content(value):
    if isinstance(value, str) and value and Path(value).is_file():
        try:
            return hashlib.sha256(Path(value).read_bytes()).hexdigest()
        except OSError:
            return value
    return value


@contextlib.contextmanager
def _signals_interrupt() -> Iterator[None]:
    """Turn SIGINT, SIGTERM and SIGHUP into :class:`Interrupted` (once; a second signal a second or more later
    ends the process at once)."""
    state = {"since": None}

    def handler(signum, frame):
        now = time.monotonic()
        if state["since"] is not None:
            # `timeout` and some schedulers deliver one SIGTERM twice (to the process and to its group)
            if now - state["since"] < _SAME_SIGNAL_S:
                return
            print(f"simsurface: {signal.Signals(signum).name} again: stopping now", file=sys.stderr, flush=True)
            os._exit(128 + signum)
        state["since"] = now
        raise Interrupted(signum)

    previous = {}
    for sig in _STOP_SIGNALS:
        with contextlib.suppress(ValueError, OSError):  # ValueError: not the main thread
            previous[sig] = signal.signal(sig, handler)
    try:
        yield
    finally:
        for sig, old in previous.items():
            signal.signal(sig, old)


def _report_interrupt(exc: KeyboardInterrupt, resumable: bool) -> int:
    signum = getattr(exc, "signal_number", signal.SIGINT)
    progress = getattr(exc, "progress", None)
    by = "" if signum == signal.SIGINT else f" by {signal.Signals(signum).name}"
    kept = progress_text(progress, "; ") if progress else "; finished work is kept"
    hint = " (continue with --resume)" if resumable else ""
    print(f"simsurface: interrupted{by}{kept}{hint}", file=sys.stderr)
    return 128 + signum
