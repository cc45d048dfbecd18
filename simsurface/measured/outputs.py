"""Atomic file output: every file is written to a temporary file in its folder and moved into place.

A failed or interrupted run therefore never leaves a truncated file under the final name.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path
from typing import Any, Callable

import numpy as np


def atomic_write(path: str | Path, write: Callable[[Path], None]) -> Path:
    """Call ``write(tmp_path)`` on a temporary file next to ``path``, then ``os.replace`` it into place."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        write(Path(tmp))
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; give the file the usual permissions
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_text(path: str | Path, text: str) -> Path:
    """Write UTF-8 text atomically."""
    return atomic_write(path, lambda p: p.write_text(text, encoding="utf-8"))


def _plain(value: Any) -> Any:
    """JSON-ready copy: numpy scalars/arrays to Python, non-finite floats to None."""
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, np.ndarray):
        return _plain(value.tolist())
    if isinstance(value, (np.bool_,)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        v = float(value)
        return v if math.isfinite(v) else None
    if isinstance(value, Path):
        return str(value)
    return value


def json_text(data: dict[str, Any]) -> str:
    """A JSON document (NaN and inf become null, numpy values plain Python)."""
    return json.dumps(_plain(data), indent=2, ensure_ascii=False) + "\n"


def table_text(columns: dict[str, np.ndarray], comments: list[str] = (), delimiter: str = ",",
               fmt: str = "{:.10g}") -> str:
    """Delimited table with ``#`` comment lines, a header of the column names, one row per point."""
    names = list(columns)
    data = [np.asarray(columns[n]) for n in names]
    lines = [f"# {c}" if c else "#" for c in comments]
    lines.append(delimiter.join(names))
    for row in zip(*data):
        lines.append(delimiter.join("nan" if (isinstance(v, float) and math.isnan(v)) else fmt.format(v)
                                    for v in row))
    return "\n".join(lines) + "\n"

