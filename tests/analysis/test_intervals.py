"""Intervals of ensemble headline numbers: coverage on generators with known values, and scipy references.

The generators are not the code under test: per-device harmonic amplitudes are moduli of complex Gaussian
numbers (Rayleigh distributed; a Fourier coefficient of a random trace is close to complex Gaussian, common
practice, no source), optionally with a device-to-device spread of their scale (Gamma-distributed variance).
A 68 % interval must cover the known value in 55–80 % of independent ensembles.
"""

import numpy as np
import pytest
from scipy import stats

from simsurface.analysis.intervals import (Interval, devices_needed, is_converged, mean_interval, proportion_interval,
                                          rms_interval, rms_ratio_interval)

REPEATS = 2000
BAND = (0.55, 0.80)


def amplitudes(rng, n, sigma, spread_shape=None, scale=None):
    """|complex Gaussian| with E|x|² = sigma² (times a Gamma(shape) variance factor of mean 1 per device)."""
    if scale is None:
        scale = np.sqrt(rng.gamma(spread_shape, 1 / spread_shape, n)) if spread_shape else 1.0
    return np.abs(sigma * scale * (rng.normal(size=n) + 1j * rng.normal(size=n)) / np.sqrt(2))


def coverage(intervals, value):
    return np.mean([iv.low <= value <= iv.high for iv in intervals])


@pytest.mark.parametrize("n", [12, 40])
@pytest.mark.parametrize("spread_shape", [None, 2.0])
def test_rms_amplitude_interval_covers_the_known_rms_of_rayleigh_ensembles(n, spread_shape):
    rng = np.random.default_rng(n)
    ivs = [rms_interval(amplitudes(rng, n, 0.07, spread_shape)) for _ in range(REPEATS)]
    assert BAND[0] <= coverage(ivs, 0.07) <= BAND[1]


@pytest.mark.parametrize("n", [12, 40])
def test_ratio_of_rms_amplitudes_covers_the_known_ratio_with_correlated_devices(n):
    # both harmonics of one device share its scale (e.g. its own mean free path): correlated amplitudes
    rng = np.random.default_rng(100 + n)
    ivs = []
    for _ in range(REPEATS):
        scale = np.sqrt(rng.gamma(2.0, 0.5, n))
        ivs.append(rms_ratio_interval(amplitudes(rng, n, 0.03, scale=scale), amplitudes(rng, n, 0.06, scale=scale)))
    assert BAND[0] <= coverage(ivs, 0.5) <= BAND[1]


def test_mean_interval_is_students_t_interval_and_covers_the_mean_of_skewed_values():
    rng = np.random.default_rng(7)
    x = rng.exponential(1.0, 12)
    iv = mean_interval(x)
    ref = stats.t.interval(0.68, 11, loc=x.mean(), scale=stats.sem(x))      # scipy (reference library)
    assert np.allclose([iv.low, iv.high], ref, rtol=0, atol=1e-12)
    ivs = [mean_interval(rng.exponential(1.0, 12) - 0.5) for _ in range(REPEATS)]
    assert BAND[0] <= coverage(ivs, 0.5) <= BAND[1]


@pytest.mark.parametrize("successes, trials", [(0, 12), (4, 12), (12, 12), (31, 64)])
def test_proportion_interval_is_wilsons_score_interval(successes, trials):
    iv = proportion_interval(successes, trials)
    ref = stats.binomtest(successes, trials).proportion_ci(confidence_level=0.68, method="wilson")
    assert np.allclose([iv.low, iv.high], [ref.low, ref.high], rtol=0, atol=1e-12)
    assert 0 <= iv.low <= iv.value <= iv.high <= 1


def test_rms_interval_is_exact_for_the_log_scale_delta_method():
    # log rms = ½ log mean(x²): the half-width on the log scale is t · s_y / (2 √n ȳ)
    x = np.array([0.02, 0.05, 0.11, 0.03, 0.08])
    y = x**2
    iv = rms_interval(x)
    k = stats.t.ppf(0.84, 4) * y.std(ddof=1) / (np.sqrt(5) * y.mean()) / 2
    assert np.isclose(iv.value, np.sqrt(y.mean())) and np.isclose(np.log(iv.high / iv.value), k)
    assert np.isclose(np.log(iv.value / iv.low), k)


def test_bad_input_is_refused_with_the_argument_named():
    with pytest.raises(ValueError, match="values"):
        rms_interval([0.1])
    with pytest.raises(ValueError, match="same devices"):
        rms_ratio_interval([0.1, 0.2], [0.1, 0.2, 0.3])
    with pytest.raises(ValueError, match="values_b"):
        rms_ratio_interval([0.1, 0.2], [0.0, 0.0])
    with pytest.raises(ValueError, match="confidence"):
        mean_interval([1.0, 2.0], confidence=1.5)


def test_convergence_rule_and_the_devices_a_rayleigh_ensemble_needs():
    assert is_converged(Interval(0.05, 0.046, 0.054, 0.68))                    # half-width 8 % of the value
    assert not is_converged(Interval(0.05, 0.04, 0.06, 0.68))                  # 20 %
    assert is_converged(Interval(0.001, -0.003, 0.005, 0.68), absolute_floor=0.005)
    # rms of Rayleigh amplitudes: relative half-width ≈ t · 1/(2√N) (y = x² exponential, CV 1), so about
    # N ≈ (1/(2 · 0.1))² = 25 devices reach 10 %; the estimate from 12 devices must land near that
    rng = np.random.default_rng(3)
    estimates = [devices_needed(rms_interval(amplitudes(rng, 12, 0.07)), 12) for _ in range(400)]
    assert 18 <= np.median(estimates) <= 40
    with pytest.raises(ValueError, match="absolute_floor"):
        devices_needed(Interval(0.0, -0.1, 0.1, 0.68), 12)
