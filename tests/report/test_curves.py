"""Theory-curve CSV: comment lines, the fixed header, numbers that read back."""

import csv
import io

import numpy as np
import pytest

from simsurface.report.curves import HEADER, theory_csv_text, write_theory_csv


def test_csv_layout_is_comments_then_fixed_header_then_rows(tmp_path):
    b = np.linspace(0, 2, 5)
    path = tmp_path / "curve.csv"
    write_theory_csv(path, b, b * 0.5, 1 + 0.1 * b, 1 - 0.01 * b, ["a theory curve", "two\nlines"])
    lines = path.read_text().splitlines()
    assert lines[:3] == ["# a theory curve", "# two", "# lines"]
    assert lines[3] == "field_T,flux_quanta,conductance_e2h,resistance_ratio"
    rows = list(csv.DictReader(io.StringIO("\n".join(lines[3:]))))
    assert tuple(rows[0]) == HEADER and len(rows) == 5
    np.testing.assert_allclose([float(r["conductance_e2h"]) for r in rows], 1 + 0.1 * b)
    # a generic reader (numpy) finds the named columns after the comment lines
    table = np.genfromtxt(path, delimiter=",", skip_header=3, names=True)
    np.testing.assert_allclose(table["resistance_ratio"], 1 - 0.01 * b)


def test_columns_must_match():
    with pytest.raises(ValueError, match="equal length"):
        theory_csv_text(np.zeros(3), np.zeros(2), np.zeros(3), np.zeros(3))
