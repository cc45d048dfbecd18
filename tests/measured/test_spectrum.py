"""Lomb–Scargle against scipy, FFT amplitude, harmonic fit, bootstrap."""

import numpy as np
import pytest
import scipy.signal

from simsurface.measured import spectrum


def test_lomb_scargle_matches_scipy_on_uneven_points():
    # reference library: scipy.signal.lombscargle (unnormalized, no floating mean, angular frequencies)
    rng = np.random.default_rng(4)
    x = np.sort(rng.uniform(0, 9, 523))
    y = 0.4 * np.cos(2 * np.pi * 1.3 * x + 0.3) + 0.1 * np.sin(2 * np.pi * 2.6 * x) + rng.normal(0, 0.2, x.size)
    y -= y.mean()
    f = np.linspace(0.03, 25, 997)
    ours = spectrum.lomb_scargle_power(x, y, f)
    ref = scipy.signal.lombscargle(x, y, 2 * np.pi * f, precenter=False, normalize=False)
    np.testing.assert_allclose(ours, ref, rtol=1e-9, atol=1e-12 * ref.max())


@pytest.mark.parametrize("method,x", [("lombscargle", np.sort(np.random.default_rng(5).uniform(0, 8, 800))),
                                      ("fft", np.linspace(0, 8, 801))])
def test_amplitude_spectrum_peaks_at_the_sine_frequency_with_its_amplitude(method, x):
    # Lomb–Scargle power N a^2 / 4 for a sinusoid (scipy.signal.lombscargle docs); FFT with Hann window 2|X|/Σw
    y = 0.25 * np.cos(2 * np.pi * x / 0.62 + 1.0)
    spec = spectrum.amplitude_spectrum(x, y, method=method)
    i = int(np.argmax(spec.values))
    assert spec.attrs["method"] == method
    assert float(spec["frequency_per_T"][i]) == pytest.approx(1 / 0.62, rel=0.01)
    assert float(spec[i]) == pytest.approx(0.25, rel=0.03)


def test_auto_method_chooses_fft_only_for_even_steps():
    x = np.linspace(0, 5, 200)
    assert spectrum.amplitude_spectrum(x, np.sin(7 * x)).attrs["method"] == "fft"
    x2 = x + np.random.default_rng(0).uniform(-0.005, 0.005, x.size)
    assert spectrum.amplitude_spectrum(np.sort(x2), np.sin(7 * x2)).attrs["method"] == "lombscargle"


def test_harmonic_fit_returns_amplitudes_and_phases_of_both_harmonics():
    x = np.linspace(0, 6, 600)
    y = 1.0 + 0.3 * np.cos(2 * np.pi * 1.5 * x - 0.4) + 0.1 * np.cos(2 * np.pi * 3.0 * x - 1.1)
    fit = spectrum.fit_harmonics(x, y, 1.5, (1, 2))
    np.testing.assert_allclose(fit.amplitudes, [0.3, 0.1], atol=1e-12)
    np.testing.assert_allclose(fit.phases_rad, [0.4, 1.1], atol=1e-12)
    assert fit.offset == pytest.approx(1.0)
    assert spectrum.refine_frequency(x, y, 1.52, (1, 2)) == pytest.approx(1.5, rel=1e-6)


def test_peak_in_band_ignores_a_rising_edge():
    f = np.linspace(0, 10, 101)
    a = np.exp(-f) + 0.5 * np.exp(-((f - 6) ** 2) / 0.1)
    assert spectrum.peak_in_band(f, a, 0.0, 10.0) in (0, 60) and spectrum.peak_in_band(f, a, 0.5, 10) == 60
    assert spectrum.peak_in_band(f, np.exp(-f), 1.0, 5.0) is None


def test_block_resample_keeps_blocks_of_neighbouring_points():
    r = np.arange(100.0)
    s = spectrum.block_resample(r, 10, np.random.default_rng(0))
    assert s.size == 100
    assert np.all(np.diff(s)[:9] == 1.0)


def test_fft_on_uneven_points_interpolates_onto_an_even_grid():
    x = np.sort(np.random.default_rng(6).uniform(0, 8, 1500))
    spec = spectrum.amplitude_spectrum(x, 0.25 * np.cos(2 * np.pi * x / 0.62), method="fft")
    i = int(np.argmax(spec.values))
    assert float(spec["frequency_per_T"][i]) == pytest.approx(1 / 0.62, rel=0.01)
    assert float(spec[i]) == pytest.approx(0.25, rel=0.05)
