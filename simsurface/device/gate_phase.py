"""Clean channel counts from band structures, and the h/e phase of a gated tube against gate voltage.

A clean, translation-invariant wire conducts with one e²/h per right-moving propagating mode at the Fermi
energy (Landauer). On a band structure E_b(k) sampled over a k range that holds every mode of the energy
window, each crossing of E by a band is one propagating mode, half of them right-moving, so

    N(E) = ½ · #{(b, k): E_b(k) = E}

whatever the band shapes (minima away from k = 0, as a gate's circumferential potential makes them). Crossings
are counted on the segments between k samples; a band extremum between samples (found from a parabola through
three samples) adds the two crossings a coarse grid would miss.

The gate map: for every gate voltage V, the electrostatics gives E_F(V) and U(s; V)
(:mod:`simsurface.device.electrostatics`); the clean tube with that potential gives N(E, Φ); thermal smearing
gives G(V, Φ) at E_F(V); its h/e cosine coefficient a_1(V) (> 0: maxima at integer flux) is the phase a group
measures as it sweeps the gate.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import xarray as xr
from numpy.typing import ArrayLike

from ..analysis.harmonics import fourier_coefficients
from ..analysis.temperature import energy_grid_meV, thermal_average

__all__ = ["channel_count_from_bands", "gate_phase_map"]


def channel_count_from_bands(bands_meV: ArrayLike, energies_meV: ArrayLike) -> np.ndarray:
    """N(E) = ½ × number of band crossings of E (module docstring).

    Parameters
    ----------
    bands_meV : array_like, shape (n_k, n_bands)
        Bands sampled on an increasing k grid that reaches beyond every mode of the energies asked for.
    energies_meV : array_like, shape (n_E,)
        Increasing energies.

    Returns
    -------
    numpy.ndarray
        N(E), shape (n_E,), float (half-integers only exactly at a band's sample value).
    """
    b = np.asarray(bands_meV, dtype=float)
    e = np.asarray(energies_meV, dtype=float)
    lo = np.minimum(b[:-1], b[1:]).ravel()
    hi = np.maximum(b[:-1], b[1:]).ravel()
    starts = [lo]
    ends = [hi]
    # extrema between samples: parabola through (i−1, i, i+1)
    left, mid, right = b[:-2], b[1:-1], b[2:]
    curvature = left - 2 * mid + right
    vertex = mid - (right - left) ** 2 / (8 * np.where(curvature == 0, np.inf, curvature))
    is_min = (mid < left) & (mid < right)
    is_max = (mid > left) & (mid > right)
    starts.append(vertex[is_min])
    ends.append(mid[is_min])
    starts.append(mid[is_max])
    ends.append(vertex[is_max])
    start = np.concatenate(starts)
    end = np.concatenate(ends)
    # each interval [start, end) holds one crossing on a segment (½ mode) — a missed pair counts twice (1 mode)
    weight = np.concatenate([np.full(lo.size, 0.5), np.ones(is_min.sum()), np.ones(is_max.sum())])
    count = np.zeros(e.size + 1)
    np.add.at(count, np.searchsorted(e, start, side="right"), weight)
    np.add.at(count, np.searchsorted(e, end, side="right"), -weight)
    return np.cumsum(count)[:-1]


def gate_phase_map(bands: Callable[[np.ndarray | None, float], np.ndarray], sweep: xr.Dataset,
                   temperature_K: float, flux_quanta: ArrayLike, energy_step_meV: float) -> xr.Dataset:
    """Thermally smeared clean G(V, Φ) of the gated tube and its h/e cosine coefficient against gate voltage.

    Parameters
    ----------
    bands : callable
        bands(potential_meV or None, flux_quanta) → E_b(k) on a k grid, shape (n_k, n_bands) (the model's clean
        bands with that circumferential potential).
    sweep : xarray.Dataset
        :func:`simsurface.device.electrostatics.gate_sweep` output (E_F and U(s) per gate voltage).
    temperature_K : float
    flux_quanta : array_like, shape (n_Φ,)
        Flux grid spanning one period (for the h/e coefficient).
    energy_step_meV : float
        Energy grid step for the thermal smearing (a fraction of k_BT).

    Returns
    -------
    xarray.Dataset
        ``conductance_e2h`` (gate_voltage_V, flux_quanta), ``he_cosine_e2h`` (gate_voltage_V),
        ``fermi_energy_meV`` (gate_voltage_V).
    """
    phi = np.asarray(flux_quanta, dtype=float)
    volts = sweep["gate_voltage_V"].values
    ef = sweep["fermi_energy_meV"].values
    g = np.empty((volts.size, phi.size))
    for i, (mu, profile) in enumerate(zip(ef, sweep["potential_meV"].values)):
        grid = energy_grid_meV(mu, temperature_K, energy_step_meV)
        counts = np.array([channel_count_from_bands(bands(profile, float(p)), grid) for p in phi])
        g[i] = thermal_average(grid, counts, mu, temperature_K) if grid.size > 1 else counts[:, 0]
    _, a, _ = fourier_coefficients(phi, g, (1,))
    return xr.Dataset(
        {"conductance_e2h": (("gate_voltage_V", "flux_quanta"), g, {"units": "e^2/h"}),
         "he_cosine_e2h": ("gate_voltage_V", a[:, 0], {"units": "e^2/h",
                                                       "long_name": "h/e cosine coefficient (>0: maxima at integer flux)"}),
         "fermi_energy_meV": ("gate_voltage_V", ef, {"units": "meV"})},
        coords={"gate_voltage_V": ("gate_voltage_V", volts, {"units": "V"}),
                "flux_quanta": ("flux_quanta", phi, {"units": "h/e"})},
        attrs={"temperature_K": float(temperature_K)})
