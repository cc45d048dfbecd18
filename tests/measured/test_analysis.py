"""Period, area and harmonic amplitudes of single curves; combination of several curves."""

import numpy as np
import pytest
import xarray as xr

from simsurface.errors import InputError
from simsurface.measured.analysis import AnalysisOptions, analyze_curve, area_summary, combine
from simsurface.measured.synthetic import Background, synthetic_resistance_ohm, uneven_fields_T
from simsurface.units import period_he_T

FAST = dict(n_bootstrap=60)


def curve(field_T, values, quantity="resistance", **meta):
    name = {"resistance": "resistance_ohm", "conductance": "conductance_e2h"}[quantity]
    return xr.Dataset({"field_T": ("point", field_T), name: ("point", values),
                       "sweep": ("point", np.ones(field_T.size, np.int8))},
                      attrs={"source": "test", "quantity": quantity, "metadata": dict(meta)})


def tube_data(sample, flux_curve, field_T, seed=0, lphi_nm=400.0, noise_ohm=3.0, odd=0.0):
    rng = np.random.default_rng(seed)
    return synthetic_resistance_ohm(flux_curve, field_T, area_nm2=sample.area_nm2, perimeter_nm=sample.perimeter_nm,
                                    lphi_nm=lphi_nm, background=Background(odd_ohm_per_T=odd),
                                    noise_ohm=noise_ohm, rng=rng)


@pytest.mark.parametrize("nominal", [False, True])
def test_period_of_noisy_tube_data_on_uneven_fields_is_recovered_within_one_percent(small_sample, small_curve, nominal):
    # synthetic data with a known period: h/e = (h/e)/A (Aharonov & Bohm, Phys. Rev. 115, 485 (1959))
    true = float(period_he_T(small_sample.area_nm2))
    b = uneven_fields_T(0.0, 7 * true, 600, np.random.default_rng(11))
    opts = AnalysisOptions(**FAST, **({"shape": "rectangle", "width_nm": 100.0, "thickness_nm": 40.0} if nominal else {}))
    c = analyze_curve(curve(b, tube_data(small_sample, small_curve, b)), opts)
    assert c.spectrum.attrs["method"] == "lombscargle"
    assert c.harmonic(1).detected
    assert abs(c.period_T / true - 1) < 0.01
    assert abs(c.period_T - true) < 4 * c.period_uncertainty_T + 1e-12


def test_two_sign_sweep_with_odd_pickup_is_symmetrized_and_gives_the_period(small_sample, small_curve):
    # R(B) = R(-B) for two terminals (Büttiker, PRL 57, 1761 (1986)); the odd pickup must not matter
    true = float(period_he_T(small_sample.area_nm2))
    rng = np.random.default_rng(3)
    b = np.concatenate([uneven_fields_T(-6 * true, 6 * true, 700, rng), uneven_fields_T(6 * true, -6 * true, 700, rng)])
    c = analyze_curve(curve(b, tube_data(small_sample, small_curve, b, odd=40.0)), AnalysisOptions(**FAST))
    assert c.symmetrization.startswith("field-even")
    assert c.field_T.min() >= 0
    assert abs(c.period_T / true - 1) < 0.01


def test_fft_on_even_fields_gives_the_same_period(small_sample, small_curve):
    true = float(period_he_T(small_sample.area_nm2))
    b = np.linspace(0, 7 * true, 700)
    c = analyze_curve(curve(b, tube_data(small_sample, small_curve, b)), AnalysisOptions(**FAST))
    assert c.spectrum.attrs["method"] == "fft"
    assert abs(c.period_T / true - 1) < 0.01


def test_surface_state_depth_of_the_generator_is_recovered(small_sample, small_curve):
    # A = (w - 2d)(t - 2d) for the contour d below the surface of a w x t rectangle
    true = float(period_he_T(small_sample.area_nm2))
    b = uneven_fields_T(0.0, 8 * true, 800, np.random.default_rng(2))
    opts = AnalysisOptions(shape="rectangle", width_nm=100.0, thickness_nm=40.0, **FAST)
    c = analyze_curve(curve(b, tube_data(small_sample, small_curve, b, noise_ohm=1.0)), opts)
    s = area_summary(c.period_T, c.period_uncertainty_T, opts)
    assert s["depth_nm"] == pytest.approx(small_sample.section.depth_nm, abs=0.15)


def test_a_062_tesla_period_is_a_square_of_about_82_nm():
    # sqrt(h/e / 0.62 T) = 81.7 nm (common practice, no source)
    s = area_summary(0.62, 0.0, AnalysisOptions())
    assert s["square_side_nm"] == pytest.approx(81.7, abs=0.05)
    assert s["circle_diameter_nm"] == pytest.approx(2 * np.sqrt(s["area_nm2"] / np.pi))


def sines(b, period, a1, a2, noise, seed):
    rng = np.random.default_rng(seed)
    return (10 + 0.2 * b - 0.01 * b**2 + a1 * np.cos(2 * np.pi * b / period + 0.3)
            + a2 * np.cos(4 * np.pi * b / period + 1.2) + rng.normal(0, noise, b.size))


def test_harmonic_ratio_of_h2e_to_he_is_recovered():
    rng = np.random.default_rng(8)
    b = np.sort(rng.uniform(0, 8, 900))
    c = analyze_curve(curve(b, sines(b, 0.8, 0.2, 0.08, 0.02, 1), "conductance"), AnalysisOptions(**FAST))
    assert c.harmonic(2).amplitude / c.harmonic(1).amplitude == pytest.approx(0.4, rel=0.05)


def test_strong_h2e_peak_is_not_taken_for_h_e():
    # AAS h/2e can dominate (Altshuler, Aronov & Spivak, JETP Lett. 33, 94 (1981)); h/e sits at half its frequency
    rng = np.random.default_rng(9)
    b = np.sort(rng.uniform(0, 8, 900))
    c = analyze_curve(curve(b, sines(b, 0.8, 0.06, 0.15, 0.02, 2), "conductance"), AnalysisOptions(**FAST))
    assert c.period_T == pytest.approx(0.8, rel=0.005)
    assert any("h/2e" in n for n in c.notes)


def test_bootstrap_uncertainty_matches_the_scatter_over_noise_realizations():
    # the stated 1σ must describe the real spread of the estimate (factor-two agreement over 12 realizations)
    rng = np.random.default_rng(10)
    b = np.sort(rng.uniform(0, 6, 500))
    periods, sigmas = [], []
    for seed in range(12):
        c = analyze_curve(curve(b, sines(b, 0.7, 0.05, 0.02, 0.05, 100 + seed), "conductance"),
                          AnalysisOptions(n_bootstrap=40, seed=seed))
        periods.append(c.period_T)
        sigmas.append(c.period_uncertainty_T)
    ratio = np.std(periods, ddof=1) / np.median(sigmas)
    assert 0.5 < ratio < 2.0


def test_too_few_points_per_expected_period_is_refused():
    b = np.linspace(0, 8, 60)
    with pytest.raises(InputError, match="points per expected h/e period"):
        analyze_curve(curve(b, sines(b, 0.5, 0.1, 0, 0.01, 0), "conductance"), AnalysisOptions(expected_period_T=0.5))


def test_field_range_shorter_than_two_periods_is_refused():
    b = np.linspace(0, 1.5, 300)
    with pytest.raises(InputError, match="shorter than two expected h/e periods"):
        analyze_curve(curve(b, sines(b, 0.9, 0.1, 0, 0.01, 0), "conductance"), AnalysisOptions(expected_period_T=0.9))


def test_too_few_points_are_refused():
    b = np.linspace(0, 8, 12)
    with pytest.raises(InputError, match="at least 20"):
        analyze_curve(curve(b, sines(b, 0.9, 0.1, 0, 0.01, 0), "conductance"))


def test_combined_period_is_the_weighted_mean_of_the_curves():
    rng = np.random.default_rng(12)
    curves = []
    for k in range(2):
        b = np.sort(rng.uniform(0, 8, 700))
        curves.append(analyze_curve(curve(b, sines(b, 0.9, 0.1, 0.03, 0.03, k), "conductance"), AnalysisOptions(**FAST)))
    s = combine(curves, AnalysisOptions(**FAST))
    w = np.array([1 / c.frequency_uncertainty_per_T**2 for c in curves])
    f = np.array([c.frequency_per_T for c in curves])
    assert s.frequency_per_T == pytest.approx(np.sum(w * f) / w.sum())
    assert s.dephasing is None and s.temperature_K is None


@pytest.mark.parametrize("kwargs,field", [({"quantity": "voltage"}, "--quantity"), ({"shape": "hexagon"}, "--shape"),
                                          ({"background_periods": 1.0}, "--background-periods"),
                                          ({"shape": "rectangle", "width_nm": 50.0}, "--shape")])
def test_bad_options_name_the_option(kwargs, field):
    with pytest.raises(InputError, match=field):
        AnalysisOptions(**kwargs)


def test_depth_uncertainty_from_the_nominal_size_follows_implicit_differentiation():
    # (w - 2d)(t - 2d) = A  =>  ∂d/∂w = (t - 2d) / (2 (w - 2d + t - 2d)), ∂d/∂t likewise (common practice, no source)
    w, t, d, su = 150.0, 40.0, 4.0, 2.0
    period = float(period_he_T((w - 2 * d) * (t - 2 * d)))
    opts = AnalysisOptions(shape="rectangle", width_nm=w, thickness_nm=t, size_uncertainty_nm=su)
    s = area_summary(period, 0.0, opts)
    expected = su * np.hypot(t - 2 * d, w - 2 * d) / (2 * (w - 2 * d + t - 2 * d))
    assert s["depth_nm"] == pytest.approx(d, abs=1e-9)
    assert s["depth_uncertainty_from_size_nm"] == pytest.approx(expected, rel=1e-3)


def test_excluding_the_low_field_cusp_keeps_the_period():
    # a weak-antilocalization-like cusp at B = 0 is narrower than the background window
    rng = np.random.default_rng(13)
    b = np.sort(rng.uniform(0, 8, 900))
    g = sines(b, 0.8, 0.1, 0.03, 0.01, 3) - 0.8 * np.exp(-np.abs(b) / 0.08)
    c = analyze_curve(curve(b, g, "conductance"), AnalysisOptions(exclude_below_T=0.5, **FAST))
    assert c.field_T.min() >= 0.5
    assert c.period_T == pytest.approx(0.8, rel=0.005)
