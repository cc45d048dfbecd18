"""Lengths study: the scenario's sweep at several wire lengths → mean free path and localization length.

For every (flux, energy) of the sweep: ⟨G⟩(L) is fitted with N/(1 + L/ℓ) (N: the clean wire's
conductance at the same length, computed alongside) and ⟨ln G⟩(L) with c − 2L/ξ
(:mod:`simsurface.analysis.lengths`). Intervals come from resampling the realizations with replacement,
jointly at all lengths (a realization's disorder at different lengths shares its random numbers, so the
lengths are not independent samples and the fit covariance alone would be too optimistic).
"""

from __future__ import annotations

import json
import math
import warnings
from typing import Any

import numpy as np
import xarray as xr

from ..analysis import lengths as fits
from ..analysis.ensemble import LOG_FLOOR
from ..errors import InputError
from .points import StudyPoint, clean_point, derive, json_number, stack_conductance


def points(scenario) -> list[StudyPoint]:
    """Disordered and clean sweeps at every length of ``[study] lengths_nm``."""
    if scenario.sweep.realizations < 2:
        raise InputError("[sweep] realizations: a lengths study needs at least 2 realizations (ensemble "
                         "averages with error bars)")
    out = []
    for length in scenario.study.lengths_nm:
        label = f"length_{length:g}nm"
        out.append(StudyPoint(label, length, derive(scenario, wire={"length_nm": length})))
        out.append(clean_point(scenario, f"clean_{label}", length, wire={"length_nm": length}))
    return out


def build(scenario, point_list: list[StudyPoint], datasets: list[xr.Dataset], seed: int = 0) -> xr.Dataset:
    """The study dataset: G(length, realization, flux, energy), clean G, statistics and the fits."""
    study = scenario.study
    dirty = [ds for p, ds in zip(point_list, datasets) if not p.label.startswith("clean_")]
    clean = [ds for p, ds in zip(point_list, datasets) if p.label.startswith("clean_")]
    lengths = np.array([p.value for p in point_list if not p.label.startswith("clean_")])
    order = np.argsort(lengths)
    dirty, clean, lengths = [dirty[i] for i in order], [clean[i] for i in order], lengths[order]
    n_real = scenario.sweep.realizations
    length_attrs = {"units": "nm", "long_name": "requested wire length"}
    g = stack_conductance(dirty, "length", lengths, n_real, length_attrs)
    g0 = stack_conductance(clean, "length", lengths, 1, length_attrs).isel(realization=0, drop=True)
    modelled = np.array([json.loads(ds.attrs["model_json"]).get("modelled_length_nm", L)
                         for ds, L in zip(dirty, lengths)], float)
    desc = json.loads(dirty[0].attrs["model_json"])
    surface = desc.get("surface", "topological")
    degeneracy = 2 if surface == "trivial" else 1

    gv = g.transpose("realization", "length", "flux", "energy").values        # (R, nL, nF, nE)
    n_clean = g0.transpose("length", "flux", "energy").values                  # (nL, nF, nE)
    flux_values = g.flux.values
    fit = _fit_all(modelled, gv, n_clean, study, surface, flux_values)
    boot = _bootstrap(modelled, gv, n_clean, study, surface, flux_values, study.bootstrap_resamples, seed)

    logs = np.log(np.clip(gv, LOG_FLOOR, None))
    sem = gv.std(axis=0, ddof=1) / math.sqrt(n_real) if n_real > 1 else np.full(gv.shape[1:], np.nan)
    log_sem = logs.std(axis=0, ddof=1) / math.sqrt(n_real) if n_real > 1 else np.full(gv.shape[1:], np.nan)
    flux, energy = g.flux.values, g.energy.values
    beta = np.array([[fits.symmetry_index(surface, f)] * energy.size for f in flux])
    channels = np.median(n_clean, axis=0)
    beenakker = np.vectorize(fits.beenakker_localization_length)(fit["ell"], channels, beta, degeneracy)
    fe = ("flux", "energy")
    lfe = ("length", "flux", "energy")
    ds = xr.Dataset(
        {
            "conductance": g.assign_attrs(units="e^2/h", long_name="two-terminal conductance"),
            "clean_conductance": g0.assign_attrs(units="e^2/h", long_name="conductance of the clean wire"),
            "modelled_length_nm": ("length", modelled, {"units": "nm", "long_name": "lattice length used in the fits"}),
            "conductance_mean": (lfe, gv.mean(axis=0), {"units": "e^2/h"}),
            "conductance_std_error": (lfe, sem, {"units": "e^2/h"}),
            "log_conductance_mean": (lfe, logs.mean(axis=0), {"units": "1", "long_name": "mean of ln(G h/e^2)"}),
            "log_conductance_std_error": (lfe, log_sem, {"units": "1"}),
            "channels": (fe, channels, {"units": "1", "long_name": "clean conductance N (median over lengths)"}),
            "beta": (fe, beta, {"units": "1", "long_name": "Dyson symmetry index assumed for xi estimate"}),
            "mean_free_path_nm": (fe, fit["ell"], {"units": "nm", "long_name": "fit <G> = N/(1 + L/l)"}),
            "mean_free_path_fit_error_nm": (fe, fit["ell_err"], {"units": "nm"}),
            "localization_length_nm": (fe, fit["xi"], {"units": "nm", "long_name": "fit <ln G> = c - 2L/xi"}),
            "localization_length_fit_error_nm": (fe, fit["xi_err"], {"units": "nm"}),
            "log_intercept": (fe, fit["c"], {"units": "1"}),
            "mean_free_path_used": (lfe, fit["ell_used"], {"units": "1"}),
            "localization_length_used": (lfe, fit["xi_used"], {"units": "1"}),
            "beenakker_localization_length_nm": (fe, beenakker, {
                "units": "nm", "long_name": "(beta N + 2 - beta) l, Beenakker RMP 69, 731 (1997)"}),
        },
        coords={"flux": ("flux", flux, {"units": "h/e"}), "energy": ("energy", energy, {"units": "meV"})},
    )
    for name in ("ell", "xi"):
        var = "mean_free_path_nm" if name == "ell" else "localization_length_nm"
        ds[f"{var}_low"] = (fe, boot[name][0], {"units": "nm", "long_name": "bootstrap 16th percentile"})
        ds[f"{var}_high"] = (fe, boot[name][1], {"units": "nm", "long_name": "bootstrap 84th percentile"})
    ds.attrs.update(_attrs(scenario, dirty[0], n_real))
    return ds


def _fit_all(L: np.ndarray, gv: np.ndarray, n_clean: np.ndarray, study, surface: str,
             flux: np.ndarray) -> dict[str, np.ndarray]:
    _, n_l, n_f, n_e = gv.shape
    out = {k: np.full((n_f, n_e), np.nan) for k in ("ell", "ell_err", "xi", "xi_err", "c")}
    out["ell_used"] = np.zeros((n_l, n_f, n_e), bool)
    out["xi_used"] = np.zeros((n_l, n_f, n_e), bool)
    n_real = gv.shape[0]
    logs = np.log(np.clip(gv, LOG_FLOOR, None))
    mean, logm = gv.mean(axis=0), logs.mean(axis=0)
    sem = gv.std(axis=0, ddof=1) / math.sqrt(n_real) if n_real > 1 else np.full(mean.shape, np.nan)
    lsem = logs.std(axis=0, ddof=1) / math.sqrt(n_real) if n_real > 1 else np.full(mean.shape, np.nan)
    degeneracy = 2 if surface == "trivial" else 1
    for i in range(n_f):
        beta = fits.symmetry_index(surface, float(flux[i]))
        for j in range(n_e):
            f, x = fits.fit_transport_lengths(L, mean[:, i, j], sem[:, i, j], logm[:, i, j], lsem[:, i, j],
                                              n_clean[:, i, j], beta, degeneracy, study.mean_free_path_fit_max_nm,
                                              study.localization_fit_min_nm)
            out["ell"][i, j], out["ell_err"][i, j], out["ell_used"][:, i, j] = f.value_nm, f.error_nm, f.used
            out["xi"][i, j], out["xi_err"][i, j], out["xi_used"][:, i, j] = x.value_nm, x.error_nm, x.used
            out["c"][i, j] = x.intercept
    return out


def _bootstrap(L, gv, n_clean, study, surface, flux, resamples: int, seed: int) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    n_real, _, n_f, n_e = gv.shape
    nan = np.full((n_f, n_e), np.nan)
    if resamples < 2 or n_real < 2:
        return {"ell": (nan, nan), "xi": (nan, nan)}
    rng = np.random.default_rng(seed)
    ell = np.empty((resamples, n_f, n_e))
    xi = np.empty((resamples, n_f, n_e))
    for b in range(resamples):
        pick = rng.integers(0, n_real, n_real)
        f = _fit_all(L, gv[pick], n_clean, study, surface, flux)
        ell[b], xi[b] = f["ell"], f["xi"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns (no fit possible) stay NaN
        return {"ell": tuple(np.nanpercentile(np.where(np.isfinite(ell), ell, np.nan), [16, 84], axis=0)),
                "xi": tuple(np.nanpercentile(np.where(np.isfinite(xi), xi, np.nan), [16, 84], axis=0))}


def _attrs(scenario, first: xr.Dataset, n_real: int) -> dict[str, Any]:
    return {
        "title": scenario.title, "simsurface_kind": "lengths study", "realizations": n_real,
        "seed": scenario.seed, "engine": first.attrs.get("engine", ""), "model_json": first.attrs["model_json"],
        "scenario_json": scenario.model_dump_json(), "versions_json": first.attrs.get("versions_json", ""),
        "fit_conventions": "<ln G> = c - 2L/xi on lengths with exp<ln G> <= 0.3 unless [study] "
                           "localization_fit_min_nm; <G> = N/(1 + L/l) on lengths L <= xi/4 (xi fitted, or "
                           "Beenakker's estimate from the two shortest lengths) plus the two shortest, unless "
                           "[study] mean_free_path_fit_max_nm; intervals: bootstrap over realizations",
    }


def summary(ds: xr.Dataset) -> dict[str, Any]:
    """JSON-able numbers of a lengths study, one entry per (flux, energy)."""
    rows = []
    for f in ds.flux.values:
        for e in ds.energy.values:
            p = ds.sel(flux=f, energy=e)
            rows.append({
                "flux_quanta": float(f), "energy_meV": float(e), "channels": float(p.channels),
                "beta": int(p.beta),
                "mean_free_path_nm": json_number(p.mean_free_path_nm),
                "mean_free_path_interval_nm": [json_number(p.mean_free_path_nm_low), json_number(p.mean_free_path_nm_high)],
                "localization_length_nm": json_number(p.localization_length_nm),
                "localization_length_interval_nm": [json_number(p.localization_length_nm_low),
                                                    json_number(p.localization_length_nm_high)],
                "beenakker_localization_length_nm": json_number(p.beenakker_localization_length_nm),
                "lengths_used_for_mean_free_path_nm": ds.modelled_length_nm.values[p.mean_free_path_used.values].tolist(),
                "lengths_used_for_localization_length_nm":
                    ds.modelled_length_nm.values[p.localization_length_used.values].tolist(),
            })
    return {"kind": "lengths", "title": ds.attrs["title"], "realizations": int(ds.attrs["realizations"]),
            "conventions": ds.attrs["fit_conventions"], "results": rows}

