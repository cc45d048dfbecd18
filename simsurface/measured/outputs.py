"""Text content of the measured-data outputs: JSON with NaN as null, delimited tables with comments.

Files are written through :mod:`simsurface.io` (temporary file in the target folder, then
``os.replace``), so a failed or interrupted run never leaves a truncated file under the final name.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np


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

