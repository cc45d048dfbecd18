"""Random fields: rms and correlation function against the analytic Gaussian covariance."""

import numpy as np
import pytest
import scipy.stats

from simsurface.disorder import fields


def estimate_covariance(samples, lags, periodic_axis=1):
    """Per-sample estimates of ⟨V(x, s) V(x + dx, s + ds)⟩ (open x axis, periodic s axis); shape (n, n_lags)."""
    out = np.empty((samples.shape[0], len(lags)))
    n_x = samples.shape[1]
    for k, (dx, ds) in enumerate(lags):
        shifted = np.roll(samples, -ds, axis=periodic_axis + 1)
        out[:, k] = (samples[:, : n_x - dx] * shifted[:, dx:]).mean(axis=(1, 2))
    return out


def check_against(est, expected, rms):
    mean = est.mean(axis=0)
    sem = est.std(axis=0, ddof=1) / np.sqrt(est.shape[0])
    # 4 standard errors: the estimates at different lags are correlated, so no multiple-test correction
    np.testing.assert_array_less(np.abs(mean - expected), 4 * sem + 1e-6 * rms**2)
    return mean, sem


def test_puddle_field_on_a_tube_has_the_gaussian_covariance_and_rms():
    # covariance rms² exp(−r²/2λ²) (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010) convention) on a
    # tube whose circumference (24 sites) is much larger than λ = 2.5 sites: winding terms negligible
    rng = np.random.default_rng(11)
    rms, lam = 3.0, 2.5
    samples = np.stack([fields.gaussian_correlated_field(rng, (48, 24), (1.0, 1.0), lam, rms, (False, True))
                        for _ in range(150)])
    lags = [(0, 0), (1, 0), (0, 1), (2, 0), (0, 3), (2, 2), (4, 0), (0, 6), (6, 0)]
    expected = fields.gaussian_covariance(np.array([l[0] for l in lags]), np.array([l[1] for l in lags]), lam, rms,
                                          circumference=24.0)
    mean, sem = check_against(estimate_covariance(samples, lags), expected, rms)
    assert mean[0] == pytest.approx(rms**2, rel=0.05)   # the rms itself (sem here is ~1 %)
    assert expected[-1] / rms**2 == pytest.approx(np.exp(-36 / (2 * lam**2)), rel=1e-6)


def test_narrow_tube_covariance_wraps_around_the_circumference():
    # circumference 6 sites with λ = 3 sites: the periodic sum over windings differs strongly from the
    # planar Gaussian, and the generator must follow the periodic one
    rng = np.random.default_rng(12)
    rms, lam, per = 1.0, 3.0, 6
    samples = np.stack([fields.gaussian_correlated_field(rng, (40, per), (1.0, 1.0), lam, rms, (False, True))
                        for _ in range(200)])
    lags = [(0, 0), (0, 1), (0, 2), (0, 3), (2, 3)]
    dx, ds = np.array([l[0] for l in lags]), np.array([l[1] for l in lags])
    wrapped = fields.gaussian_covariance(dx, ds, lam, rms, circumference=float(per))
    planar = fields.gaussian_covariance(dx, ds, lam, rms)
    mean, sem = check_against(estimate_covariance(samples, lags), wrapped, rms)
    assert abs(wrapped[3] - planar[3]) > 5 * sem[3]  # the check above could tell the two apart


def test_roughness_profile_along_an_open_axis_has_the_gaussian_covariance():
    rng = np.random.default_rng(13)
    rms, lam = 0.8, 4.0
    samples = np.stack([fields.gaussian_correlated_field(rng, (200,), (1.0,), lam, rms) for _ in range(300)])
    est = np.stack([(samples[:, : 200 - d] * samples[:, d:]).mean(axis=1) for d in (0, 2, 4, 8)], axis=1)
    expected = rms**2 * np.exp(-np.array([0, 2, 4, 8]) ** 2 / (2 * lam**2))
    check_against(est, expected, rms)


def test_open_axis_does_not_wrap_the_two_ends_of_the_wire_together():
    rng = np.random.default_rng(14)
    samples = np.stack([fields.gaussian_correlated_field(rng, (30,), (1.0,), 5.0, 1.0) for _ in range(2000)])
    end_to_end = samples[:, 0] * samples[:, -1]
    assert abs(end_to_end.mean()) < 4 * end_to_end.std() / np.sqrt(samples.shape[0])


def test_anderson_box_is_uniform_with_variance_w_squared_over_12():
    rng = np.random.default_rng(15)
    v = fields.uniform_box(rng, (400, 50), 6.0)
    assert v.min() >= -3.0 and v.max() <= 3.0
    # Kolmogorov–Smirnov against scipy's uniform distribution (reference library)
    assert scipy.stats.kstest(v.ravel(), scipy.stats.uniform(loc=-3.0, scale=6.0).cdf).pvalue > 1e-3
    assert v.var() == pytest.approx(36.0 / 12.0, rel=0.02)


def test_short_field_is_the_beginning_of_a_long_one_with_the_same_stream():
    short = fields.gaussian_correlated_field(np.random.default_rng(5), (20, 8), (1.0, 1.0), 2.0, 1.0, (False, True))
    long = fields.gaussian_correlated_field(np.random.default_rng(5), (60, 8), (1.0, 1.0), 2.0, 1.0, (False, True))
    # equal away from the short wire's far end (within the kernel's reach of it they differ)
    np.testing.assert_allclose(short[:10], long[:10], atol=1e-6)


def test_correlation_length_below_the_spacing_is_explained():
    note = fields.resolution_note(0.5, 2.0)
    assert "below the lattice spacing" in note and "uncorrelated" in note
    assert fields.resolution_note(2.0, 2.0) is None
