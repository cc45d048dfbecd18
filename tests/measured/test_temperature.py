"""Coherence length from harmonic amplitudes versus temperature."""

import numpy as np
import pytest
import xarray as xr

from simsurface.errors import InputError
from simsurface.measured.analysis import AnalysisOptions, analyze_curve, combine
from simsurface.measured.synthetic import Background, synthetic_resistance_ohm, uneven_fields_T
from simsurface.measured.temperature import fit_dephasing, harmonic_damping, lphi_power_law_nm
from simsurface.units import period_he_T

P_NM = 300.0
T = np.array([1.5, 3.0, 6.0, 12.0, 24.0])


def model_amplitudes(lref=800.0, p=0.5, a0=(0.3, 0.1)):
    lphi = lphi_power_law_nm(T, lref, p, T[0])
    return np.column_stack([a * harmonic_damping(n, P_NM, lphi) for n, a in zip((1, 2), a0)])


def test_exact_amplitudes_give_back_lphi_and_exponent():
    a = model_amplitudes()
    fit = fit_dephasing(T, a, 0.01 * a, P_NM)
    assert fit.lphi_ref_nm == pytest.approx(800.0, rel=1e-6)
    assert fit.exponent == pytest.approx(0.5, rel=1e-6)
    np.testing.assert_allclose(fit.amplitude0, [0.3, 0.1], rtol=1e-6)
    lp, _ = fit.pointwise_lphi_nm(T, a[:, 0], 0.01 * a[:, 0], 1)
    np.testing.assert_allclose(lp, lphi_power_law_nm(T, 800.0, 0.5, T[0]), rtol=1e-5)


def test_fixed_exponent_fit_agrees_with_a_straight_line_in_T_to_the_p():
    # ln A = ln A0 - (P/2L_ref)(T/T_ref)^p is a straight line in (T/T_ref)^p (numpy.polyfit as reference)
    rng = np.random.default_rng(0)
    a = model_amplitudes(p=1 / 3)[:, :1] * np.exp(rng.normal(0, 0.02, (T.size, 1)))
    fit = fit_dephasing(T, a, 0.02 * a, P_NM, harmonics=(1,), exponent=1 / 3)
    slope, _ = np.polyfit((T / T[0]) ** (1 / 3), np.log(a[:, 0]), 1)
    assert fit.lphi_ref_nm == pytest.approx(P_NM / (2 * -slope), rel=1e-6)
    assert fit.exponent_fixed and fit.exponent_uncertainty is None


def test_amplitudes_that_do_not_fall_with_temperature_are_refused():
    a = model_amplitudes()[::-1]
    with pytest.raises(InputError, match="do not decrease"):
        fit_dephasing(T, a, 0.01 * a, P_NM)


def test_too_few_amplitudes_for_a_free_exponent_are_refused():
    a = model_amplitudes()[:2, :1]
    with pytest.raises(InputError, match="needs at least"):
        fit_dephasing(T[:2], a, 0.01 * a, P_NM, harmonics=(1,))


def test_exponent_of_a_synthetic_temperature_series_is_recovered(small_sample, small_curve):
    # generator: L_phi = 600 nm (T/1.5 K)^-1/2 (2D Nyquist dephasing exponent; Altshuler, Aronov &
    # Khmelnitsky, J. Phys. C 15, 7367 (1982)), harmonics damped by exp(-n P/(2 L_phi))
    rng = np.random.default_rng(7)
    period = float(period_he_T(small_sample.area_nm2))
    curves = []
    for t in T:
        b = uneven_fields_T(0.0, 8 * period, 700, rng)
        lphi = float(lphi_power_law_nm(t, 600.0, 0.5, T[0]))
        r = synthetic_resistance_ohm(small_curve, b, area_nm2=small_sample.area_nm2, perimeter_nm=small_sample.perimeter_nm,
                                     lphi_nm=lphi, background=Background(), noise_ohm=1.0, rng=rng)
        ds = xr.Dataset({"field_T": ("point", b), "resistance_ohm": ("point", r)},
                        attrs={"source": f"{t}K", "quantity": "resistance", "metadata": {"temperature_K": float(t)}})
        curves.append(analyze_curve(ds, AnalysisOptions(n_bootstrap=60)))
    opts = AnalysisOptions(n_bootstrap=60, perimeter_nm=small_sample.perimeter_nm)
    s = combine(curves, opts)
    d = s.dephasing
    assert d is not None and 1 in d.harmonics
    assert abs(d.exponent - 0.5) < max(3 * d.exponent_uncertainty, 0.05)
    assert abs(d.exponent - 0.5) < 0.15
    assert d.lphi_ref_nm == pytest.approx(600.0, rel=0.25)
