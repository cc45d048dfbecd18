"""Flux harmonics of magnetoconductance: h/e (1 cycle per Φ0), h/2e (2 cycles per Φ0) and higher.

G(Φ) is fitted by least squares with a Fourier series in the flux Φ (units of h/e)::

    G(Φ) = c0 + Σ_k [a_k cos(2πkΦ) + b_k sin(2πkΦ)],   A_k = (a_k² + b_k²)^(1/2)

which works on uneven or non-periodic flux grids; on a uniform grid covering whole periods it equals the
discrete Fourier transform (tested against ``numpy.fft``). A_1 is the h/e amplitude, A_2 the h/2e (AAS)
amplitude, both in the units of G (e²/h). The phase is reported as the flux of the harmonic's maximum:
for the h/e harmonic, Φ_max = atan2(b_1, a_1)/2π mod 1 — near 0 means maxima at integer flux quanta,
near 1/2 at half-integer ones. Two-terminal Onsager symmetry G(Φ) = G(−Φ) forces b_k = 0 ("phase
rigidity"), so Φ_max is 0 or 1/2 up to noise.

Sample-specific amplitudes are those of each realization; the ensemble amplitude is that of the
realization-averaged curve. Confidence intervals resample realizations with replacement (bootstrap).
"""

from __future__ import annotations

from typing import Sequence

import numpy as np
import xarray as xr
from numpy.typing import ArrayLike

HARMONIC_NAMES = {1: "h/e", 2: "h/2e", 3: "h/3e", 4: "h/4e"}


def fourier_coefficients(flux_quanta: ArrayLike, values: ArrayLike,
                         harmonics: Sequence[int] = (1, 2, 3, 4)) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Least-squares Fourier coefficients of ``values`` along its last axis (the flux).

    Parameters
    ----------
    flux_quanta : array_like, shape (n_Φ,)
        Flux in units of h/e; must span at least one flux quantum for the h/e harmonic to be defined.
    values : array_like, shape (..., n_Φ)
    harmonics : sequence of int
        Harmonic numbers k (cycles per Φ0).

    Returns
    -------
    c0 : ndarray, shape (...,)
    a, b : ndarray, shape (..., n_harmonics)
        Cosine and sine coefficients.
    """
    phi = np.asarray(flux_quanta, dtype=float)
    y = np.asarray(values, dtype=float)
    k = np.asarray(harmonics, dtype=float)
    if phi.ndim != 1 or y.shape[-1] != phi.size:
        raise ValueError("values must have the flux as last axis, matching flux_quanta")
    if phi.size < 2 * k.size + 1:
        raise ValueError(f"{phi.size} flux points cannot resolve {k.size} harmonics; "
                         f"need at least {2 * k.size + 1}")
    design = np.hstack([np.ones((phi.size, 1)), np.cos(2 * np.pi * np.outer(phi, k)),
                        np.sin(2 * np.pi * np.outer(phi, k))])
    flat = y.reshape(-1, phi.size).T
    coef, *_ = np.linalg.lstsq(design, flat, rcond=None)
    coef = coef.T.reshape(*y.shape[:-1], 1 + 2 * k.size)
    return coef[..., 0], coef[..., 1:1 + k.size], coef[..., 1 + k.size:]


def amplitude_phase(a: ArrayLike, b: ArrayLike, harmonics: Sequence[int]) -> tuple[np.ndarray, np.ndarray]:
    """Amplitude A_k and flux of the first maximum Φ_max ∈ [0, 1/k) of each harmonic."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    k = np.asarray(harmonics, float)
    amp = np.hypot(a, b)
    phi_max = np.mod(np.arctan2(b, a) / (2 * np.pi * k), 1.0 / k)
    return amp, phi_max


def harmonics_of(conductance: xr.DataArray, harmonics: Sequence[int] = (1, 2, 3, 4),
                 dim: str = "flux") -> xr.Dataset:
    """Amplitude, maximum position and mean of G along ``dim`` for every other coordinate.

    Returns a Dataset with ``amplitude`` and ``max_flux`` (dims ``harmonic`` + the others) and ``mean``.
    """
    g = conductance.transpose(..., dim)
    c0, a, b = fourier_coefficients(g[dim].values, g.values, harmonics)
    amp, phi_max = amplitude_phase(a, b, harmonics)
    other = [d for d in g.dims if d != dim]
    coords = {d: g[d] for d in other}
    coords["harmonic"] = ("harmonic", list(harmonics), {"long_name": "cycles per flux quantum h/e"})
    units = conductance.attrs.get("units", "")
    return xr.Dataset({
        "amplitude": ((*other, "harmonic"), amp, {"units": units, "long_name": "Fourier amplitude A_k"}),
        "max_flux": ((*other, "harmonic"), phi_max, {"units": "h/e", "long_name": "flux of the first maximum"}),
        "cosine": ((*other, "harmonic"), a, {"units": units, "long_name": "cosine coefficient a_k"}),
        "mean": (tuple(other), c0, {"units": units, "long_name": "flux-averaged conductance"}),
    }, coords=coords)


def ensemble_harmonics(conductance: xr.DataArray, harmonics: Sequence[int] = (1, 2, 3, 4),
                       n_bootstrap: int = 200, confidence: float = 0.68, seed: int = 0) -> xr.Dataset:
    """Sample-specific and ensemble-averaged harmonics with bootstrap confidence intervals.

    Parameters
    ----------
    conductance : DataArray with dims ("realization", "flux", ...)
    n_bootstrap : int
        Resamples of the realizations (with replacement); 0 disables the intervals.
    confidence : float
        Central probability of the reported intervals (0.68 ≈ ±1σ).

    Returns
    -------
    Dataset with, per harmonic and remaining coordinate:
    ``ensemble_amplitude`` — amplitude of ⟨G⟩(Φ); ``sample_rms_amplitude`` — rms over realizations of the
    per-realization amplitudes; ``ensemble_max_flux``; ``mean`` — ⟨G⟩ averaged over flux; and, when
    bootstrapping, ``*_low``/``*_high`` bounds for the two amplitudes and for ``ensemble_cosine`` (whose sign
    says where the ensemble maxima sit: a_k > 0 at Φ = 0).
    """
    g = conductance.transpose("realization", "flux", ...)
    n_real = g.sizes["realization"]
    per = harmonics_of(g, harmonics)                       # (realization, ..., harmonic)
    avg = harmonics_of(g.mean("realization"), harmonics)   # (..., harmonic)
    rms = np.sqrt((per["amplitude"] ** 2).mean("realization"))
    out = xr.Dataset({
        "ensemble_amplitude": avg["amplitude"],
        "ensemble_max_flux": avg["max_flux"],
        "ensemble_cosine": avg["cosine"],
        "sample_rms_amplitude": rms.assign_attrs(units=per["amplitude"].attrs.get("units", ""),
                                                 long_name="rms over realizations of A_k"),
        "mean": avg["mean"],
    })
    out.attrs["realizations"] = n_real
    if n_bootstrap and n_real > 1:
        rng = np.random.default_rng(seed)
        picks = rng.integers(0, n_real, size=(n_bootstrap, n_real))
        amp_sq = (per["amplitude"] ** 2).transpose("realization", ...).values
        rms_boot = np.sqrt(amp_sq[picks].mean(axis=1))
        gv = g.values
        mean_boot = gv[picks].mean(axis=1)                   # (boot, flux, ...)
        mean_boot = np.moveaxis(mean_boot, 1, -1)            # (boot, ..., flux)
        _, a, b = fourier_coefficients(g.flux.values, mean_boot, harmonics)
        ens_boot, _ = amplitude_phase(a, b, harmonics)
        lo, hi = (1 - confidence) / 2 * 100, (1 + confidence) / 2 * 100
        dims = out["ensemble_amplitude"].dims
        for name, boot in (("ensemble_amplitude", ens_boot), ("sample_rms_amplitude", rms_boot),
                           ("ensemble_cosine", a)):
            out[f"{name}_low"] = (dims, np.percentile(boot, lo, axis=0))
            out[f"{name}_high"] = (dims, np.percentile(boot, hi, axis=0))
        out.attrs.update(bootstrap_resamples=n_bootstrap, confidence=confidence)
    return out


def maxima_label(max_flux_he: ArrayLike) -> np.ndarray:
    """'integer' or 'half-integer': where the h/e maxima sit (nearest of Φ = 0 and Φ = 1/2)."""
    m = np.mod(np.asarray(max_flux_he, float), 1.0)
    near_half = np.abs(m - 0.5) < 0.25
    return np.where(near_half, "half-integer", "integer")


def dominance(amplitude_a: ArrayLike, amplitude_b: ArrayLike, n_bootstrap: int = 1000,
              confidence: float = 0.68, seed: int = 0) -> dict[str, float]:
    """Which of two harmonics is larger in a typical sample, and how sure that is.

    Parameters
    ----------
    amplitude_a, amplitude_b : array_like, shape (n_realization,)
        Per-realization amplitudes of two harmonics (e.g. h/e and h/2e) in the same units.
    n_bootstrap : int
        Resamples of the realizations (with replacement).
    confidence : float
        Central probability of the interval of the ratio.

    Returns
    -------
    dict with ``ratio`` — rms(A_a)/rms(A_b), None when A_b is zero in every realization (``note`` says
    why); ``ratio_low``, ``ratio_high`` — its bootstrap interval (an end that is not bounded is None);
    ``a_dominates`` — ratio > 1; ``confidence`` — fraction of bootstrap resamples whose ratio lies on the same
    side of 1; ``per_sample_fraction`` — fraction of realizations in which the dominant harmonic is larger.
    """
    a = np.asarray(amplitude_a, float)
    b = np.asarray(amplitude_b, float)
    if a.shape != b.shape or a.ndim != 1 or a.size < 2:
        raise ValueError("need two equal 1-D arrays of per-realization amplitudes, at least two realizations")
    def ratio_of(idx):
        num = np.sqrt(np.mean(a[idx] ** 2, axis=-1))
        den = np.sqrt(np.mean(b[idx] ** 2, axis=-1))
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(den > 0, num / np.where(den > 0, den, 1.0), np.inf)
    if not np.any(b):  # no ratio to give: say why instead of printing inf or nan
        a_dom = bool(np.any(a))
        why = ("the second amplitude is zero in every realization" if a_dom else
               "both amplitudes are zero in every realization (nothing oscillates)")
        return {"ratio": None, "ratio_low": None, "ratio_high": None, "a_dominates": a_dom,
                "confidence": 1.0 if a_dom else 0.0, "per_sample_fraction": float(np.mean(a > b)),
                "note": f"ratio not defined: {why}"}
    ratio = float(ratio_of(np.arange(a.size)))
    rng = np.random.default_rng(seed)
    boot = ratio_of(rng.integers(0, a.size, size=(n_bootstrap, a.size)))
    a_dom = ratio > 1
    # with infinite resamples, "nearest" keeps inf - inf interpolation from turning the interval into nan
    lo, hi = np.percentile(boot, [(1 - confidence) / 2 * 100, (1 + confidence) / 2 * 100],
                           method="linear" if np.all(np.isfinite(boot)) else "nearest")
    out = {
        "ratio": ratio, "ratio_low": float(lo), "ratio_high": float(hi) if np.isfinite(hi) else None,
        "a_dominates": bool(a_dom),
        "confidence": float(np.mean(boot > 1) if a_dom else np.mean(boot <= 1)),
        "per_sample_fraction": float(np.mean(a > b) if a_dom else np.mean(b >= a)),
    }
    if out["ratio_high"] is None:
        out["note"] = "upper end of the interval not bounded: the second amplitude is zero in some resamples"
    return out
