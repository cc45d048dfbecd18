"""Flux harmonics: against numpy's FFT and known synthetic curves."""

import numpy as np
import pytest
import xarray as xr

from simsurface.analysis import harmonics as hm


def test_least_squares_coefficients_equal_the_discrete_fourier_transform():
    # on a uniform grid over whole periods the least-squares fit is the DFT (numpy.fft, reference library)
    rng = np.random.default_rng(1)
    phi = np.arange(64) / 32.0  # two flux quanta, endpoint excluded
    y = rng.normal(size=(3, 64))
    c0, a, b = hm.fourier_coefficients(phi, y, harmonics=(1, 2, 3))
    spec = np.fft.rfft(y, axis=-1) / 64
    # harmonic k (cycles per Φ0) sits at FFT bin 2k for two periods
    for i, k in enumerate((1, 2, 3)):
        np.testing.assert_allclose(a[:, i] - 1j * b[:, i], 2 * spec[:, 2 * k], atol=1e-12)
    np.testing.assert_allclose(c0, spec[:, 0].real, atol=1e-12)


def test_amplitudes_and_maxima_of_a_known_curve_on_uneven_flux_points():
    rng = np.random.default_rng(2)
    phi = np.sort(rng.uniform(-1.3, 1.1, 301))
    g = 2.0 + 0.3 * np.cos(2 * np.pi * (phi - 0.5)) + 0.1 * np.cos(4 * np.pi * phi)
    _, a, b = hm.fourier_coefficients(phi, g, (1, 2))
    amp, phi_max = hm.amplitude_phase(a, b, (1, 2))
    np.testing.assert_allclose(amp, [0.3, 0.1], atol=1e-10)
    assert phi_max[0] == pytest.approx(0.5)
    assert hm.maxima_label(phi_max[0]) == "half-integer"
    assert hm.maxima_label(0.97) == "integer"


def test_random_phase_ensemble_averages_out_h_over_e_but_keeps_sample_amplitude():
    # Sample-specific h/e oscillations with random phase vanish in the ensemble average while the
    # rms per-sample amplitude stays (Aronov & Sharvin, Rev. Mod. Phys. 59, 755 (1987)); here on
    # synthetic curves to test the bookkeeping, not the physics.
    rng = np.random.default_rng(3)
    phi = np.linspace(0, 2, 81)
    phases = rng.uniform(0, 2 * np.pi, 400)
    g = 1.0 + 0.2 * np.cos(2 * np.pi * phi[None, :] + phases[:, None]) + 0.05 * np.cos(4 * np.pi * phi)[None, :]
    da = xr.DataArray(g, dims=("realization", "flux"), coords={"flux": phi}, attrs={"units": "e^2/h"})
    out = hm.ensemble_harmonics(da, harmonics=(1, 2), n_bootstrap=100)
    assert float(out["sample_rms_amplitude"].sel(harmonic=1)) == pytest.approx(0.2, rel=1e-6)
    assert float(out["ensemble_amplitude"].sel(harmonic=1)) < 0.2 * 3 / np.sqrt(400)
    assert float(out["ensemble_amplitude"].sel(harmonic=2)) == pytest.approx(0.05, rel=1e-6)
    lo, hi = float(out["ensemble_amplitude_low"].sel(harmonic=1)), float(out["ensemble_amplitude_high"].sel(harmonic=1))
    assert lo <= float(out["ensemble_amplitude"].sel(harmonic=1)) <= hi


def test_too_few_flux_points_are_refused():
    with pytest.raises(ValueError, match="cannot resolve"):
        hm.fourier_coefficients(np.linspace(0, 1, 6), np.zeros(6), (1, 2, 3))


def test_dominance_reports_the_larger_harmonic_and_its_bootstrap_confidence():
    # common practice, no source: synthetic per-device amplitudes with a clear and with no winner
    rng = np.random.default_rng(4)
    a = np.abs(rng.normal(0.3, 0.05, 200))
    b = np.abs(rng.normal(0.1, 0.05, 200))
    out = hm.dominance(a, b, n_bootstrap=500)
    assert out["a_dominates"] and out["confidence"] == 1.0
    assert out["ratio_low"] < out["ratio"] < out["ratio_high"]
    assert out["ratio"] == pytest.approx(np.sqrt(np.mean(a**2) / np.mean(b**2)))
    tie = hm.dominance(rng.rayleigh(1.0, 400), rng.rayleigh(1.0, 400), n_bootstrap=500)
    assert 0.5 <= tie["confidence"] < 0.99


def test_dominance_ratio_is_not_defined_when_the_second_harmonic_vanishes_everywhere():
    # G = 0 everywhere (an insulating wire) has no amplitude ratio: None with the reason, never inf or nan
    quiet = hm.dominance(np.zeros(8), np.zeros(8), n_bootstrap=50)
    assert quiet["ratio"] is None and quiet["ratio_low"] is None and not quiet["a_dominates"]
    assert "both amplitudes are zero" in quiet["note"]
    only_a = hm.dominance(np.ones(8), np.zeros(8), n_bootstrap=50)
    assert only_a["ratio"] is None and only_a["a_dominates"] and "second amplitude is zero" in only_a["note"]


def test_dominance_interval_stays_finite_or_says_it_is_unbounded():
    # one realization out of four carries the second harmonic: some resamples have none of it (ratio inf)
    out = hm.dominance(np.ones(4), np.array([0.0, 0.0, 0.0, 1.0]), n_bootstrap=400, seed=1)
    assert out["ratio"] == pytest.approx(2.0)  # rms 1 over rms 0.5
    assert out["ratio_low"] is not None and np.isfinite(out["ratio_low"])
    assert out["ratio_high"] is None and "not bounded" in out["note"]
