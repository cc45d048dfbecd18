"""Theory over data: reading results.nc / curves CSV, flux-to-field mapping, fitted scale, offset, area."""

import numpy as np
import pytest
import xarray as xr

from simsurface.errors import InputError
from simsurface.measured.overlay import fit_overlay, measured_as, read_theory, theory_at_flux
from simsurface.measured.synthetic import dephased_conductance_e2h
from simsurface.units import RESISTANCE_QUANTUM_OHM, field_T, flux_quanta


def write_results_nc(path, flux, energies, g):
    ds = xr.Dataset({"conductance": (("realization", "flux", "energy"), g, {"units": "e^2/h"})},
                    coords={"flux": ("flux", flux, {"units": "h/e"}), "energy": ("energy", energies, {"units": "meV"})},
                    attrs={"enclosed_area_nm2": 3000.0})
    ds.to_netcdf(path)
    return path


def test_results_nc_is_averaged_over_realizations_at_the_nearest_energy(tmp_path):
    rng = np.random.default_rng(0)
    flux = np.linspace(0, 4, 81)
    g = 2 + rng.uniform(0, 1, (3, flux.size, 2))
    p = write_results_nc(tmp_path / "results.nc", flux, np.array([5.0, 10.0]), g)
    th = read_theory(p, energy_meV=9.0)
    np.testing.assert_allclose(th.values, g[:, :, 1].mean(0))
    assert th.attrs["energy_meV"] == 10.0 and th.attrs["enclosed_area_nm2"] == 3000.0
    with pytest.raises(InputError, match="--theory-energy-meV"):
        read_theory(p)


def test_curves_csv_area_comes_from_the_comment_or_the_field_to_flux_ratio(tmp_path):
    b = np.linspace(0, 5, 51)
    phi = flux_quanta(b, 2500.0)
    rows = "\n".join(f"{x:.10g},{f:.10g},{2 + np.cos(2 * np.pi * f):.10g},1" for x, f in zip(b, phi))
    header = "field_T,flux_quanta,conductance_e2h,resistance_ratio\n"
    p1 = tmp_path / "c1.csv"
    p1.write_text("# planned curve\n# enclosed_area_nm2 = 2400\n" + header + rows)
    p2 = tmp_path / "c2.csv"
    p2.write_text("# planned curve\n" + header + rows)
    assert read_theory(p1).attrs["enclosed_area_nm2"] == 2400.0
    assert read_theory(p2).attrs["enclosed_area_nm2"] == pytest.approx(2500.0, rel=1e-8)
    bad = tmp_path / "c3.csv"
    bad.write_text("a,b\n1,2\n")
    with pytest.raises(InputError, match="header lacks"):
        read_theory(bad)


def test_periodic_extension_repeats_one_flux_period(small_curve):
    one = xr.DataArray(small_curve.values, coords={"flux_quanta": small_curve["flux_quanta"].values}, dims="flux_quanta")
    one = xr.concat([one, one.isel(flux_quanta=[0]).assign_coords(flux_quanta=[1.0])], "flux_quanta")
    phi = np.array([0.3, 1.3, 7.3, 2.0])
    g = theory_at_flux(one, phi, periodic=True)
    assert g[0] == pytest.approx(g[1]) and g[0] == pytest.approx(g[2])
    assert np.isnan(theory_at_flux(one, phi)[1])


def smooth_theory(small_curve, small_sample, n_quanta=14.0):
    flux = np.linspace(0, n_quanta, 1401)
    g = dephased_conductance_e2h(small_curve, flux, small_sample.perimeter_nm, 500.0)
    return xr.DataArray(g, coords={"flux_quanta": flux}, dims="flux_quanta", attrs={"source": "model"})


@pytest.mark.parametrize("quantity", ["G", "R"])
def test_overlay_recovers_known_scale_offset_and_area(small_curve, small_sample, quantity):
    # data built from the theory with known scale, offset and a 3 % larger area than the start value
    theory = smooth_theory(small_curve, small_sample)
    rng = np.random.default_rng(4)
    area_true = 1.03 * small_sample.area_nm2
    b = np.sort(rng.uniform(0.1, float(field_T(10.0, area_true)), 900))
    g_th = theory_at_flux(theory, flux_quanta(b, area_true))
    if quantity == "G":
        scale, offset, noise = 0.45, 11.0, 0.01
        y = scale * g_th + offset
    else:
        scale, offset, noise = 0.8, 400.0, 20.0
        y = scale * RESISTANCE_QUANTUM_OHM / g_th + offset
    y = y + rng.normal(0, noise, b.size)
    fit = fit_overlay(theory, b, y, quantity, small_sample.area_nm2, fit_area=True)
    assert fit.area_nm2 == pytest.approx(area_true, rel=2e-3)
    assert fit.scale == pytest.approx(scale, rel=0.03)
    assert fit.offset == pytest.approx(offset, abs=4 * fit.offset_uncertainty + 0.02 * abs(offset))
    assert fit.rms_residual == pytest.approx(noise, rel=0.2)
    assert abs(fit.area_nm2 - area_true) < 5 * fit.area_uncertainty_nm2


def test_detrended_overlay_ignores_a_smooth_background(small_curve, small_sample):
    theory = smooth_theory(small_curve, small_sample)
    b = np.linspace(0.0, float(field_T(12.0, small_sample.area_nm2)), 1000)
    g = 0.5 * theory_at_flux(theory, flux_quanta(b, small_sample.area_nm2)) + 20 / (1 + (0.1 * b) ** 2)
    period = float(field_T(1.0, small_sample.area_nm2))
    fit = fit_overlay(theory, b, g, "G", small_sample.area_nm2, detrend_window_T=5 * period)
    assert fit.detrended and fit.scale == pytest.approx(0.5, rel=0.03)
    raw = fit_overlay(theory, b, g, "G", small_sample.area_nm2)
    assert raw.rms_residual > 5 * fit.rms_residual


def test_relative_resistance_change_is_measured_from_the_lowest_field():
    b = np.array([0.0, 1.0, 2.0])
    np.testing.assert_allclose(measured_as(b, np.array([2.0, 1.0, 4.0]), "dR/R"), [0.0, 1.0, -0.5])


def test_theory_that_covers_too_little_flux_is_refused(small_curve, small_sample):
    theory = smooth_theory(small_curve, small_sample, n_quanta=1.5)
    b = np.linspace(0, float(field_T(8.0, small_sample.area_nm2)), 400)
    with pytest.raises(InputError, match="covers only"):
        fit_overlay(theory, b, np.ones(b.size), "G", small_sample.area_nm2)
