"""Command line: a thin layer over the Python API.

Each subcommand lives in its own module with a ``register(subparsers)`` function that adds its parser
and sets ``func`` to a callable taking the parsed arguments and returning an exit code. User errors are
raised as :class:`~simsurface.errors.SimsurfaceError` and printed as one line, without a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
import warnings

from .. import __version__
from ..errors import SimsurfaceError

#: modules under simsurface.cli that provide a subcommand, in the order shown by --help
SUBCOMMANDS = ("run", "plan", "materials", "analyze", "bench", "compare3d")


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
    try:
        return int(args.func(args) or 0)
    except SimsurfaceError as exc:
        print(f"simsurface: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("simsurface: interrupted; finished work is kept (see --resume where offered)", file=sys.stderr)
        return 130
    except Exception as exc:  # a bug, not bad input: short message unless --debug
        if args.debug:
            raise
        print(f"simsurface: internal error: {type(exc).__name__}: {exc} (rerun with --debug for details)",
              file=sys.stderr)
        return 3
