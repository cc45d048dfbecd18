"""Disorder-tolerance study: how the h/e and h/2e oscillations fade as one disorder parameter grows.

For every value of ``[study] parameter`` the scenario's sweep runs with that ``[disorder]`` value. At each
Fermi energy the flux harmonics (:func:`simsurface.analysis.harmonics.ensemble_harmonics`) give

* the sample-specific amplitude — rms over realizations of each realization's A_k (what one measured
  wire shows), and
* the ensemble amplitude — A_k of the realization-averaged ⟨G⟩(Φ) (what survives averaging, e.g. over
  many wires in parallel or over the many phase-coherent sections of one long wire),

with bootstrap intervals, and the mean free path at that disorder estimated from the same wire by
inverting ⟨G⟩ = N/(1 + L/ℓ) with ⟨G⟩ averaged over realizations and flux and N the clean wire's
flux-averaged conductance (:func:`simsurface.analysis.lengths.mean_free_path_from_mean`). That estimate
assumes L below the localization length; a lengths study at one disorder value gives the proper fit.
"""

from __future__ import annotations

import json
import warnings
from typing import Any

import numpy as np
import xarray as xr

from ..analysis.harmonics import ensemble_harmonics
from ..analysis.lengths import mean_free_path_from_mean
from ..errors import InputError
from .points import StudyPoint, clean_point, derive, json_number, stack_conductance

HARMONICS = (1, 2)
UNITS = {"anderson_width_meV": "meV", "puddle_rms_meV": "meV", "puddle_correlation_nm": "nm",
         "roughness_rms_nm": "nm", "roughness_correlation_nm": "nm", "vacancy_fraction": "1"}
LABELS = {"anderson_width_meV": "Anderson box width W (meV)", "puddle_rms_meV": "puddle potential rms (meV)",
          "puddle_correlation_nm": "puddle correlation length (nm)", "roughness_rms_nm": "roughness rms (nm)",
          "roughness_correlation_nm": "roughness correlation length (nm)", "vacancy_fraction": "vacancy fraction"}


def check(scenario) -> None:
    """A tolerance study needs a flux sweep over at least one h/e period and an ensemble."""
    flux = scenario.flux_values()
    if flux.max() - flux.min() < 1.0 - 1e-9 or flux.size < 2 * len(HARMONICS) + 1:
        raise InputError(f"[sweep] flux_quanta: a tolerance study needs the flux to span at least one flux quantum "
                         f"h/e with at least {2 * len(HARMONICS) + 1} points (got {flux.min():g} … {flux.max():g}, "
                         f"{flux.size} points)")
    if scenario.sweep.realizations < 2:
        raise InputError("[sweep] realizations: a tolerance study needs at least 2 realizations (an ensemble)")


def points(scenario) -> list[StudyPoint]:
    """The clean sweep, then one disordered sweep per value that is not clean."""
    check(scenario)
    study = scenario.study
    out = [clean_point(scenario)]
    for value in study.values:
        disorder = scenario.disorder.with_value(study.parameter, value)
        if disorder.parameters().is_clean:
            continue
        out.append(StudyPoint(f"{study.parameter}_{value:g}", value,
                              derive(scenario, disorder={study.parameter: value})))
    return out


def build(scenario, point_list: list[StudyPoint], datasets: list[xr.Dataset], seed: int = 0) -> xr.Dataset:
    """Study dataset: G(value, realization, flux, energy), harmonics and mean free path per value."""
    study = scenario.study
    n_real = scenario.sweep.realizations
    by_label = {p.label: ds for p, ds in zip(point_list, datasets)}
    clean = by_label["clean"]
    ordered = []
    for value in sorted(study.values):
        label = f"{study.parameter}_{value:g}"
        ordered.append(by_label.get(label, clean))
    values = np.array(sorted(study.values), float)
    axis_attrs = {"units": UNITS[study.parameter], "long_name": f"[disorder] {study.parameter}",
                  "label": LABELS[study.parameter]}
    g = stack_conductance(ordered, "value", values, n_real, axis_attrs).assign_attrs(units="e^2/h")
    g0 = clean["conductance"].isel(realization=0, drop=True).drop_vars("field", errors="ignore")

    harm = [ensemble_harmonics(g.sel(value=v), HARMONICS, n_bootstrap=study.bootstrap_resamples, seed=seed)
            for v in values]
    h = xr.concat(harm, dim="value", coords="minimal", compat="override").assign_coords(value=g.value)
    desc = json.loads(clean.attrs["model_json"])
    length = float(desc.get("modelled_length_nm", scenario.wire.length_nm))
    n_flux_avg = g0.mean("flux")                                           # (energy,)
    g_avg = g.mean(("realization", "flux"))                                # (value, energy)
    ell = mean_free_path_from_mean(length, g_avg, n_flux_avg)
    low, high = _ell_bootstrap(g, n_flux_avg, length, study.bootstrap_resamples, seed)

    ds = xr.Dataset({
        "conductance": g,
        "clean_conductance": g0.assign_attrs(units="e^2/h"),
        "conductance_mean": g_avg.assign_attrs(units="e^2/h", long_name="mean over realizations and flux"),
        "mean_free_path_nm": (("value", "energy"), np.asarray(ell), {
            "units": "nm", "long_name": "from <G> = N/(1 + L/l) at the wire length"}),
        "mean_free_path_nm_low": (("value", "energy"), low, {"units": "nm"}),
        "mean_free_path_nm_high": (("value", "energy"), high, {"units": "nm"}),
    })
    for name in ("ensemble_amplitude", "sample_rms_amplitude"):
        for suffix in ("", "_low", "_high"):
            if name + suffix in h:
                ds[name + suffix] = h[name + suffix].assign_attrs(units="e^2/h")
    ds["ensemble_max_flux"] = h["ensemble_max_flux"]
    ds.attrs.update({
        "title": scenario.title, "simsurface_kind": "disorder tolerance study", "parameter": study.parameter,
        "realizations": n_real, "seed": scenario.seed, "modelled_length_nm": length,
        "engine": clean.attrs.get("engine", ""), "model_json": clean.attrs["model_json"],
        "scenario_json": scenario.model_dump_json(), "versions_json": clean.attrs.get("versions_json", ""),
        "bootstrap": f"{study.bootstrap_resamples} resamples of the realizations, 68 % intervals",
    })
    return ds


def _ell_bootstrap(g: xr.DataArray, n_avg: xr.DataArray, length: float, resamples: int, seed: int):
    gv = g.transpose("realization", "value", "flux", "energy").values
    n_real = gv.shape[0]
    shape = gv.shape[1:2] + gv.shape[3:]
    if resamples < 2 or n_real < 2:
        return np.full(shape, np.nan), np.full(shape, np.nan)
    rng = np.random.default_rng(seed)
    picks = rng.integers(0, n_real, (resamples, n_real))
    flux_avg = gv.mean(axis=2)                                             # (R, value, energy)
    boot = flux_avg[picks].mean(axis=1)                                    # (B, value, energy)
    ell = mean_free_path_from_mean(length, boot, n_avg.values[None, None, :])
    ell = np.where(np.isfinite(ell), ell, np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns (clean values) stay NaN
        lo, hi = np.nanpercentile(ell, [16, 84], axis=0)
    return lo, hi


def summary(ds: xr.Dataset) -> dict[str, Any]:
    """JSON-able table: per energy and value, ℓ and the h/e, h/2e amplitudes with intervals."""
    rows = []
    for e in ds.energy.values:
        for v in ds.value.values:
            p = ds.sel(energy=e, value=v)
            row = {"energy_meV": float(e), ds.attrs["parameter"]: float(v),
                   "mean_conductance_e2h": float(p.conductance_mean),
                   "mean_free_path_nm": json_number(p.mean_free_path_nm),
                   "mean_free_path_interval_nm": [json_number(p.mean_free_path_nm_low), json_number(p.mean_free_path_nm_high)]}
            for k, name in ((1, "h_e"), (2, "h_2e")):
                q = p.sel(harmonic=k)
                for kind in ("sample_rms_amplitude", "ensemble_amplitude"):
                    row[f"{name}_{kind}_e2h"] = json_number(q[kind])
                    if f"{kind}_low" in q:
                        row[f"{name}_{kind}_interval_e2h"] = [json_number(q[f"{kind}_low"]), json_number(q[f"{kind}_high"])]
            rows.append(row)
    return {"kind": "tolerance", "title": ds.attrs["title"], "parameter": ds.attrs["parameter"],
            "realizations": int(ds.attrs["realizations"]), "wire_length_nm": float(ds.attrs["modelled_length_nm"]),
            "bootstrap": ds.attrs["bootstrap"], "results": rows}

