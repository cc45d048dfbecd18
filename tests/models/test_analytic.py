"""Clean subbands of topological and trivial tubes.

Spectrum: E = ±ħv[k² + (l + 1/2 − Φ/Φ0)²(2π/P)²]^(1/2) (Zhang & Vishwanath, PRL 105, 206601 (2010);
Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)).
"""

import numpy as np
import pytest

from simsurface.models import analytic

HBAR_V = 330.0
PERIMETER = 200.0


def test_zero_flux_topological_tube_has_gap_hbar_v_over_r():
    # circle of radius R: gap ħv/R, i.e. the l = 0, −1 pair at ±ħv/(2R)
    radius = PERIMETER / (2 * np.pi)
    gap = analytic.dirac_gap_meV(PERIMETER, HBAR_V)
    assert gap == pytest.approx(HBAR_V / radius)
    e = np.array([0.49, 0.51]) * gap
    n = analytic.dirac_channel_count(e, 0.0, PERIMETER, HBAR_V)
    assert n.tolist() == [[0, 2]]


def test_half_flux_quantum_gives_odd_channel_count_at_every_energy():
    e = np.linspace(0.01, 80.0, 500)
    n = analytic.dirac_channel_count(e, 0.5, PERIMETER, HBAR_V)[0]
    assert np.all(n % 2 == 1)


def test_zero_flux_gives_even_channel_count_at_every_energy():
    e = np.linspace(0.01, 80.0, 500)
    n = analytic.dirac_channel_count(e, 0.0, PERIMETER, HBAR_V)[0]
    assert np.all(n % 2 == 0)


def test_channel_count_is_flux_periodic_and_even_in_flux():
    # G(Φ + Φ0) = G(Φ), G(−Φ) = G(Φ) (Onsager; Büttiker, PRL 57, 1761 (1986))
    e = np.linspace(0.5, 60.0, 50)
    phi = np.linspace(-1.0, 1.0, 41)
    n = analytic.dirac_channel_count(e, phi, PERIMETER, HBAR_V)
    np.testing.assert_array_equal(n, analytic.dirac_channel_count(e, phi + 1.0, PERIMETER, HBAR_V))
    np.testing.assert_array_equal(n, analytic.dirac_channel_count(e, -phi, PERIMETER, HBAR_V))


def test_trivial_tube_has_its_maxima_where_the_topological_has_minima():
    # no Berry phase: at Φ = 0 the l = 0 subband has its bottom at E = 0; spin-degenerate
    e = np.array([1e-3])
    n_triv = analytic.parabolic_channel_count(e, [0.0, 0.5], PERIMETER, 0.023)
    n_top = analytic.dirac_channel_count(e, [0.0, 0.5], PERIMETER, HBAR_V)
    assert n_triv[:, 0].tolist() == [2, 0]
    assert n_top[:, 0].tolist() == [0, 1]


def test_dirac_subbands_match_formula():
    k = np.array([0.0, 0.03])
    e = analytic.dirac_subbands_meV(k, 0.2, PERIMETER, HBAR_V, [0, -1])
    q = 2 * np.pi * (np.array([0.5, -0.5]) - 0.2) / PERIMETER
    np.testing.assert_allclose(e, HBAR_V * np.sqrt(q[:, None] ** 2 + k[None, :] ** 2))
