"""Script entry point: theory curve -> synthetic measured file -> analyze_files (area and harmonic ratio)."""

import numpy as np
import pytest

from simsurface.measured import AnalysisOptions, analyze_files
from simsurface.measured.outputs import table_text
from simsurface.measured.overlay import read_theory
from simsurface.measured.synthetic import (Background, dephased_conductance_e2h, resistance_from_theory_ohm,
                                           uneven_fields_T, write_theory_curve)
from simsurface.units import period_he_T


def test_theory_curve_to_synthetic_file_to_analysis_recovers_area_and_harmonic_ratio(tmp_path, small_curve,
                                                                                       small_sample):
    # the ratio is that of the theory's own Fourier harmonics; the area is the one used to map flux to field
    period = float(period_he_T(small_sample.area_nm2))
    theory = read_theory(write_theory_curve(tmp_path, small_curve, small_sample, field_max_T=9 * period))
    rng = np.random.default_rng(5)
    b = uneven_fields_T(0.0, 8.5 * period, 900, rng)
    r = resistance_from_theory_ohm(theory, b, area_nm2=small_sample.area_nm2,
                                   background=Background(series_resistance_ohm=0.0), noise_ohm=0.5, rng=rng)
    data = tmp_path / "TT-1_synthetic.csv"
    data.write_text(table_text({"B (T)": b, "R (Ohm)": r}, ["synthetic = true"]))
    doc = analyze_files([data], AnalysisOptions(n_bootstrap=40))
    assert doc["area_nm2"] == pytest.approx(small_sample.area_nm2, rel=0.01)
    c = np.fft.rfft(dephased_conductance_e2h(small_curve, np.arange(64) / 64, small_sample.perimeter_nm, None))
    assert doc["h2e_to_he_ratio"] == pytest.approx(abs(c[2]) / abs(c[1]), rel=0.1)
    assert doc["synthetic_input"] is True
