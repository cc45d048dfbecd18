"""The measured resistance of surface + bulk + background in two- and four-terminal readings.

Parallel conductances add, series resistances add (common practice, no source); the four-terminal part is
checked against kwant in test_four_terminal.py, the backgrounds in test_backgrounds.py / test_bulk_channel.py.
"""

import numpy as np
import pytest

from simsurface.device.backgrounds import wire_magnetoconductance_e2h
from simsurface.device.bulk_channel import parallel_channels_conductance_e2h
from simsurface.device.reading import (BulkChannel, Reading, SurfaceBackground, bulk_fluctuations_e2h,
                                       classical_factor, measured_resistance_ohm, relative_signal_factor)
from simsurface.units import RESISTANCE_QUANTUM_OHM as RQ

BULK = BulkChannel(density_per_cm3=1e18, mobility_cm2_per_V_s=300.0, area_nm2=7390.0, width_nm=100.0,
                   coherence_length_nm=300.0, thermal_length_nm=150.0)


def test_plain_readings_are_landauer_two_and_four_terminal():
    g, n = np.array([1.1, 1.2, 1.3]), 6.0
    b = np.zeros(3)
    assert np.allclose(measured_resistance_ohm(g, n, b, Reading(2, 3000.0)), RQ / g + 3000.0)
    assert np.allclose(measured_resistance_ohm(g, n, b, Reading(4)), RQ * (1 / g - 1 / n))


def test_bulk_is_a_conductance_in_parallel():
    g_b = BULK.conductance_e2h(1000.0)
    assert 0.5 < g_b < 2.0  # 1e18 cm⁻³, 300 cm²/Vs, 7390 nm², 1 µm: 0.92 e²/h
    r2 = measured_resistance_ohm(1.2, 6.0, 0.0, Reading(2, bulk=BULK))
    assert r2 == pytest.approx(RQ / (1.2 + g_b))
    r4 = measured_resistance_ohm(1.2, 6.0, 0.0, Reading(4, bulk=BULK))
    assert r4 == pytest.approx(1 / (1 / (RQ * (1 / 1.2 - 1 / 6.0)) + g_b / RQ))


@pytest.mark.parametrize("reading", [Reading(2), Reading(2, 3000.0), Reading(4), Reading(2, bulk=BULK),
                                     Reading(4, bulk=BULK)])
def test_relative_signal_factor_matches_finite_difference(reading):
    g, n, dg = 1.2, 6.0, 1e-7
    r0 = measured_resistance_ohm(g, n, 0.0, reading)
    r1 = measured_resistance_ohm(g + dg, n, 0.0, reading)
    assert -(r1 - r0) / r0 / (dg / g) == pytest.approx(relative_signal_factor(g, n, reading), rel=1e-5)


def test_four_terminal_gain_of_a_qx32_like_wire():
    # G ≈ 1.2, N ≈ 6: ΔR/R grows by 1/(1 − 0.2) = 1.25 against the two-terminal reading without series
    assert relative_signal_factor(1.2, 6.0, Reading(4)) / relative_signal_factor(1.2, 6.0, Reading(2)) == \
        pytest.approx(1.25)


def test_background_enters_the_surface_conductance():
    bg = SurfaceBackground(alpha=-0.5, coherence_length_nm=600.0, shell_thickness_nm=3.0, wire_width_nm=100.0)
    b = np.linspace(0, 2, 5)
    reading = Reading(2, field_angle_deg=10.0, background=bg)
    expected = RQ / (1.2 + wire_magnetoconductance_e2h(b, 10.0, 600.0, -0.5, 1000.0, 100.0, 3.0))
    assert np.allclose(measured_resistance_ohm(np.full(5, 1.2), 6.0, b, reading), expected)


def test_classical_factor_is_two_carrier_drude_in_the_perpendicular_component():
    bg = SurfaceBackground(-0.5, 600.0, 3.0, 100.0, mobility_m2_per_V_s=0.15)
    b = np.linspace(0, 9, 4)
    assert np.allclose(classical_factor(b, 1.2, Reading(2, field_angle_deg=0.0, background=bg, bulk=BULK)), 1.0)
    reading = Reading(2, field_angle_deg=30.0, background=bg, bulk=BULK)
    g_b = BULK.conductance_e2h(1000.0)
    expected = parallel_channels_conductance_e2h(b * 0.5, [1.2, g_b], [0.15, 0.03], [-1, -1]) / (1.2 + g_b)
    assert np.allclose(classical_factor(b, 1.2, reading), expected)
    assert np.all(np.diff(classical_factor(b, 1.2, reading)) < 0)  # positive magnetoresistance


def test_bulk_fluctuations_of_one_device_are_reproducible_and_sized():
    b = np.linspace(0, 9, 2000)
    reading = Reading(2, bulk=BULK)
    one = bulk_fluctuations_e2h(b, reading, np.random.default_rng(4))
    assert np.array_equal(one, bulk_fluctuations_e2h(b, reading, np.random.default_rng(4)))
    assert np.std(one) == pytest.approx(BULK.fluctuation_rms_e2h(1000.0), rel=0.3)
