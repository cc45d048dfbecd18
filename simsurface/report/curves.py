"""Theory curves as CSV, the layout the measured-data overlay reads.

Layout: lines starting with ``#`` (free comments: what the curve is, units, provenance), then the header
``field_T,flux_quanta,conductance_e2h,resistance_ratio`` and one row per field value. ``resistance_ratio`` is
R(B)/R(0) of the measured configuration (series resistance included for a 2-terminal measurement).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Sequence

import numpy as np

from ..io import write_text_atomic

HEADER = ("field_T", "flux_quanta", "conductance_e2h", "resistance_ratio")


def theory_csv_text(field_T: np.ndarray, flux_quanta: np.ndarray, conductance_e2h: np.ndarray,
                    resistance_ratio: np.ndarray, comments: Sequence[str] = ()) -> str:
    """CSV text of a theory curve (see the module docstring for the layout)."""
    cols = [np.asarray(c, float) for c in (field_T, flux_quanta, conductance_e2h, resistance_ratio)]
    if len({c.shape for c in cols}) != 1 or cols[0].ndim != 1:
        raise ValueError("the four columns must be 1-D arrays of equal length")
    buf = io.StringIO()
    for line in comments:
        for part in str(line).splitlines() or [""]:
            buf.write(f"# {part}\n")
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(HEADER)
    for row in zip(*cols):
        writer.writerow([f"{v:.10g}" for v in row])
    return buf.getvalue()


def write_theory_csv(path: str | Path, field_T: np.ndarray, flux_quanta: np.ndarray, conductance_e2h: np.ndarray,
                     resistance_ratio: np.ndarray, comments: Sequence[str] = ()) -> None:
    """Write a theory curve atomically."""
    write_text_atomic(path, theory_csv_text(field_T, flux_quanta, conductance_e2h, resistance_ratio, comments))
