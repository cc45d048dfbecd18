"""The visibility rule: thresholds on signal-to-noise and period count (common practice, no source); with a
count of field points the Fourier-amplitude noise σ·sqrt(2/N), checked by least-squares fits of simulated
white noise (numpy) and scipy's Rayleigh distribution."""

import numpy as np
import pytest
from scipy import stats

from simsurface.analysis.verdict import (amplitude_noise, best, false_alarm_probability, rule_text,
                                         signal_to_noise, verdict)


@pytest.mark.parametrize("amplitude,periods,expected", [
    (3.0, 3.0, "visible"), (2.9, 10.0, "marginal"), (10.0, 2.0, "marginal"),
    (1.0, 1.0, "marginal"), (0.9, 10.0, "not visible"), (10.0, 0.5, "not visible")])
def test_verdict_thresholds(amplitude, periods, expected):
    assert verdict(amplitude, 1.0, periods) == expected


def test_best_verdict_wins():
    assert best(["not visible", "marginal"]) == "marginal"
    assert best(["visible", "not visible"]) == "visible"


# --- counting the field points -------------------------------------------------------------------------------


def _least_squares_coefficients(n_points, periods, n_traces, rng):
    """Cosine and sine coefficients (with a constant) of white-noise traces (σ = 1), fitted by numpy.linalg.lstsq."""
    x = np.linspace(0.0, periods, n_points, endpoint=False)
    design = np.column_stack([np.ones_like(x), np.cos(2 * np.pi * x), np.sin(2 * np.pi * x)])
    noise = rng.normal(0.0, 1.0, (n_points, n_traces))
    coef, *_ = np.linalg.lstsq(design, noise, rcond=None)
    return coef[1], coef[2]


@pytest.mark.parametrize("n_points,periods", [(60, 3.0), (400, 10.0), (400, 3.3)])
def test_fourier_coefficient_noise_is_sigma_sqrt_two_over_n(n_points, periods):
    # white noise, least squares (numpy's solver, not the code under test): var(a) = var(b) = 2σ²/N for a record
    # of whole periods (normal equations; common practice); 3.3 periods: non-orthogonal ends, still within 5 %
    rng = np.random.default_rng(11)
    a, b = _least_squares_coefficients(n_points, periods, 20000, rng)
    expected = float(amplitude_noise(1.0, n_points))
    assert np.std(a) == pytest.approx(expected, rel=0.05)
    assert np.std(b) == pytest.approx(expected, rel=0.05)


def test_noise_amplitude_is_rayleigh_and_false_alarms_match():
    # amplitude of pure noise ~ Rayleigh(scale σ_A) (scipy.stats), P(A > a) = exp(−a²/2σ_A²)
    rng = np.random.default_rng(5)
    a, b = _least_squares_coefficients(200, 8.0, 20000, rng)
    amp = np.hypot(a, b)
    scale = float(amplitude_noise(1.0, 200))
    assert stats.kstest(amp, stats.rayleigh(scale=scale).cdf).pvalue > 1e-3
    threshold = 2.45 * scale
    assert np.mean(amp > threshold) == pytest.approx(float(false_alarm_probability(threshold, scale)), abs=0.006)


def test_more_field_points_turn_a_marginal_harmonic_visible():
    # amplitude 0.5 σ per point: invisible in 10 points, S = 0.5·sqrt(N/2); visible from N = 2·(3.72/0.5)² ≈ 111
    assert signal_to_noise(0.5, 1.0, 200) == pytest.approx(0.5 * np.sqrt(100.0))
    assert verdict(0.5, 1.0, 5.0, field_points=10) == "not visible"
    assert verdict(0.5, 1.0, 5.0, field_points=60) == "marginal"
    assert verdict(0.5, 1.0, 5.0, field_points=120) == "visible"
    assert verdict(0.5, 1.0, 5.0) == "not visible"  # without a point count: the conservative rule


def test_undersampled_harmonic_is_not_visible():
    # two or fewer points per period alias the harmonic (Nyquist)
    assert verdict(100.0, 1.0, 20.0, field_points=40) == "not visible"
    assert verdict(100.0, 1.0, 20.0, field_points=41) == "visible"


def test_rule_text_names_the_point_count_and_the_assumption():
    text = rule_text(300)
    assert "N = 300" in text and "white noise" in text and "3.72" in text
