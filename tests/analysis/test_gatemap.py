"""Gate map of clean tubes: the h/e phase flips each time the Fermi energy crosses a subband bottom."""

import math

import numpy as np
import pytest

from simsurface.analysis.gatemap import gate_map


def test_topological_checkerboard_flips_phase_at_every_half_subband_spacing():
    # Dirac tube: subband bottoms ħv|l + 1/2 − Φ|·2π/P; below ε/2 (ε = 2πħv/P) only Φ0/2 conducts
    # (maxima at half-integer flux), between ε/2 and ε the Φ = 0 pair wins (Zhang & Vishwanath, PRL 105,
    # 206601 (2010); Bardarson, Brouwer & Moore, PRL 105, 156803 (2010))
    hv, perimeter = 329.0, 100.0
    eps = 2 * math.pi * hv / perimeter
    energies = np.array([0.25, 0.75, 1.25, 1.75]) * eps
    ds = gate_map("topological", perimeter, hv, energies, temperature_K=0.0, flux_points=64)
    np.testing.assert_array_equal(np.sign(ds["he_cosine"].values), [-1, 1, -1, 1])


def test_trivial_tube_has_integer_maxima_at_the_band_bottom():
    # parabolic tube, no Berry phase: l = 0 is lowest at Φ = 0
    mass, perimeter = 0.023, 100.0
    ds = gate_map("trivial", perimeter, mass, np.array([0.3, 1.0]), temperature_K=0.0, flux_points=64)
    assert ds["he_cosine"].values[0] > 0


def test_temperature_smears_the_checkerboard():
    hv, perimeter = 329.0, 100.0
    eps = 2 * math.pi * hv / perimeter
    e = np.array([0.25 * eps])
    cold = gate_map("topological", perimeter, hv, e, temperature_K=0.5)
    hot = gate_map("topological", perimeter, hv, e, temperature_K=60.0)
    assert abs(float(hot["he_cosine"][0])) < 0.8 * abs(float(cold["he_cosine"][0]))
