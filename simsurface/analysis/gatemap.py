"""Gate map: clean conductance G(E_F, Φ) and where the h/e maxima sit as the Fermi energy crosses subbands.

A clean tube conducts with one (topological) or two (trivial, spin) e²/h per open subband
(:mod:`simsurface.models.analytic`). Subband bottoms move with flux, so at a fixed Fermi energy G(Φ) is a
staircase whose h/e component changes sign each time E_F crosses a subband bottom: the checkerboard of
G(E_F, Φ). Near the Dirac point the topological tube has its maxima at half-integer flux quanta (the gapless
subband at Φ = Φ0/2), the trivial tube at integer ones (Zhang & Vishwanath, PRL 105, 206601 (2010);
Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)). Temperature smears the staircase
(:mod:`simsurface.analysis.temperature`).
"""

from __future__ import annotations

import numpy as np
import xarray as xr
from numpy.typing import ArrayLike

from ..models import analytic
from ..units import KB_MEV_PER_K
from .harmonics import fourier_coefficients
from .temperature import DEFAULT_MARGIN_KT, energy_grid_meV, thermal_average


def clean_conductance(surface: str, perimeter_nm: float, energy_scale: float, energies_meV: ArrayLike,
                      flux_quanta: ArrayLike) -> np.ndarray:
    """Clean channel count (e²/h), shape (n_flux, n_energy); ``energy_scale`` is ħv (meV nm) or m*/m_e."""
    if surface == "topological":
        return analytic.dirac_channel_count(energies_meV, flux_quanta, perimeter_nm, energy_scale).astype(float)
    return analytic.parabolic_channel_count(energies_meV, flux_quanta, perimeter_nm, energy_scale).astype(float)


def gate_map(surface: str, perimeter_nm: float, energy_scale: float, fermi_energies_meV: ArrayLike,
             temperature_K: float, flux_points: int = 48) -> xr.Dataset:
    """Thermally smeared clean G over Fermi energy and one flux period, and its h/e harmonic.

    Parameters
    ----------
    surface : {"topological", "trivial"}
    perimeter_nm : float
        Surface-state contour.
    energy_scale : float
        ħv in meV nm (topological) or m*/m_e (trivial).
    fermi_energies_meV : array_like, shape (n_E,)
    temperature_K : float
    flux_points : int
        Points on [0, 1) h/e.

    Returns
    -------
    Dataset with ``conductance`` (energy, flux) in e²/h, ``he_cosine`` (energy) — the cosine coefficient of
    the h/e harmonic (> 0: maxima at integer flux quanta, < 0: at half-integer ones), ``he_amplitude``.
    """
    e_f = np.asarray(fermi_energies_meV, float)
    phi = np.arange(flux_points) / flux_points
    kt = temperature_K * KB_MEV_PER_K
    if kt > 0:
        # resolve both the Fermi window and the steps: a fraction of k_BT, at most the output spacing
        step = kt / 4
        if e_f.size > 1:
            step = min(step, float(np.min(np.diff(e_f))))
        step = max(step, (np.ptp(e_f) + 10 * kt) / 20_000)  # bounded memory at very low T
        fine = energy_grid_meV(e_f, temperature_K, step, DEFAULT_MARGIN_KT)
        g = thermal_average(fine, clean_conductance(surface, perimeter_nm, energy_scale, fine, phi), e_f,
                            temperature_K)
    else:
        g = clean_conductance(surface, perimeter_nm, energy_scale, e_f, phi)
    g = g.T                                                          # (energy, flux)
    _, a, b = fourier_coefficients(phi, g, (1,))
    return xr.Dataset(
        {"conductance": (("energy", "flux"), g, {"units": "e^2/h", "long_name": "clean conductance"}),
         "he_cosine": (("energy",), a[:, 0], {"units": "e^2/h",
                                              "long_name": "h/e cosine coefficient (>0: maxima at integer flux)"}),
         "he_amplitude": (("energy",), np.hypot(a[:, 0], b[:, 0]), {"units": "e^2/h"})},
        coords={"energy": ("energy", e_f, {"units": "meV"}), "flux": ("flux", phi, {"units": "h/e"})},
        attrs={"surface": surface, "perimeter_nm": perimeter_nm, "energy_scale": energy_scale,
               "temperature_K": temperature_K})
