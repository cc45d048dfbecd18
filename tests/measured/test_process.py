"""Symmetrization (Onsager / Büttiker reciprocity) and the local polynomial background filter."""

import numpy as np
import pytest

from simsurface.errors import InputError
from simsurface.measured import process


def even(b):
    return 100 + 3 * b**2 + 2 * np.cos(2 * np.pi * b / 0.6)


def odd(b):
    return 7 * b + 0.5 * np.sin(2 * np.pi * b / 0.6)


def test_field_even_part_removes_odd_pickup_on_uneven_points():
    # two-terminal R(B) = R(-B) (Onsager; Büttiker, PRL 57, 1761 (1986)): the odd part is not physical
    rng = np.random.default_rng(0)
    b = np.concatenate([np.sort(rng.uniform(-4, 4, 3000)), np.sort(rng.uniform(-4, 4, 3000))[::-1]])
    f, y = process.symmetrize(b, even(b) + odd(b))
    assert f.min() >= 0 and f.max() <= 4 and np.all(np.diff(f) >= 0)
    # the partner value is linearly interpolated: error ~ (step^2/8) y'' ≈ 1e-4 here
    np.testing.assert_allclose(y, even(f), atol=2e-3)


def test_reciprocal_four_terminal_pair_gives_field_even_part():
    # R_ij,kl(B) = R_kl,ij(-B) (Büttiker 1986): measuring both configurations at +B gives the even part
    rng = np.random.default_rng(1)
    b1 = np.sort(rng.uniform(0, 5, 2000))
    b2 = np.sort(rng.uniform(0, 5, 2000))
    r1 = even(b1) + odd(b1)
    r2 = even(-b2) + odd(-b2)
    f, y = process.symmetrize_reciprocal(b1, r1, b2, r2)
    # linear interpolation of the partner between random points: error ~ step² y''/8, up to ~5e-3 here
    np.testing.assert_allclose(y, even(f), atol=1e-2)


def test_reciprocity_deviation_is_small_for_a_reciprocal_pair_and_large_otherwise():
    b = np.linspace(-3, 3, 1201)
    r1 = even(b) + odd(b)
    assert process.reciprocity_deviation(b, r1, b, even(-b) + odd(-b)) < 1e-9
    assert process.reciprocity_deviation(b, r1, b, even(b) + odd(b)) > 1.0
    assert process.reciprocity_deviation(b[b > 0], r1[b > 0], b[b > 0], r1[b > 0]) is None


def test_one_sign_only_cannot_be_symmetrized():
    with pytest.raises(InputError, match="only one sign"):
        process.symmetrize(np.linspace(0, 1, 10), np.ones(10))


def test_duplicates_are_averaged_and_sorted():
    f, v = process.merge_duplicates(np.array([1.0, 0.0, 1.0, 2.0]), np.array([3.0, 1.0, 5.0, 7.0]))
    np.testing.assert_array_equal(f, [0, 1, 2])
    np.testing.assert_array_equal(v, [1, 4, 7])


def test_local_quadratic_background_reproduces_any_quadratic_exactly():
    # a local polynomial fit of degree 2 is exact for polynomials of degree <= 2 (common practice, no source)
    rng = np.random.default_rng(2)
    b = np.sort(rng.uniform(0, 9, 800))
    y = 5 - 0.3 * b + 0.02 * b**2
    np.testing.assert_allclose(process.local_quadratic_background(b, y, 3.0), y, atol=1e-10)


def test_background_filter_keeps_the_h_e_oscillation_for_a_window_of_five_periods():
    # the documented window rule: 98-105 % of a sinusoid within 0.8 ... 1.25 of the period passes
    rng = np.random.default_rng(3)
    for n_periods in (4, 10, 20):
        b = np.sort(rng.uniform(0, n_periods * 0.7, 150 * n_periods))
        for ratio in (0.8, 1.0, 1.25):
            assert 0.98 < process.background_transfer(b, 5 * 0.7, 0.7 * ratio) < 1.055
    # a window of one period removes most of the oscillation: the rule matters
    assert process.background_transfer(b, 0.7, 0.7) < 0.5


def test_background_removal_recovers_oscillation_on_smooth_magnetoresistance():
    b = np.linspace(0, 9, 900)
    smooth = 20 / (1 + (0.08 * b) ** 2) + 0.1 * b
    osc = 0.2 * np.cos(2 * np.pi * b / 0.9)
    resid = smooth + osc - process.local_quadratic_background(b, smooth + osc, 4.5)
    inner = (b > 1) & (b < 8)
    assert np.sqrt(np.mean((resid - osc)[inner] ** 2)) < 0.01
