"""Thermal smearing of a zero-temperature conductance G(E).

At temperature T the linear-response Landauer conductance is the energy average of G(E) over the Fermi
window (Datta, *Electronic Transport in Mesoscopic Systems*, CUP 1995, ch. 2)::

    G(T, μ) = ∫ dE G(E) (−∂f/∂E),     −∂f/∂E = 1 / (4 k_B T cosh²((E − μ) / 2k_B T))

The window has unit weight and a full width at half maximum of about 3.5 k_B T. G(E) is known on an energy
grid; between grid points it is taken as linear, and the integral of that piecewise-linear G against the
exact window is done in closed form (so any T ≥ 0 works, down to T = 0 where the result is the linear
interpolation of G at μ). The weight of the window beyond the grid is unknown territory: the grid must
reach ``margin`` k_B T past every μ (5 k_B T leaves 0.7 % of the weight out on each side, and the covered
weight is renormalized to one, so a constant G stays exactly constant).

For a periodic G(E) = cos(2πE/ΔE) the average is cos(2πμ/ΔE)·x/sinh(x) with x = 2π²k_BT/ΔE — the
Fourier transform of −∂f/∂E, πk_BTq/sinh(πk_BTq) at q = 2π/ΔE (the thermal damping factor of
magnetic-oscillation theory; Shoenberg, *Magnetic Oscillations in Metals*, CUP 1984, ch. 2).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy.special import expit

from ..units import KB_MEV_PER_K

#: default reach of the energy grid beyond μ, in units of k_B T
DEFAULT_MARGIN_KT = 5.0


def fermi_window(energy_meV: ArrayLike, mu_meV: float, temperature_K: float) -> np.ndarray:
    """−∂f/∂E in 1/meV at ``energy_meV`` for chemical potential ``mu_meV`` and temperature T > 0."""
    kt = float(temperature_K) * KB_MEV_PER_K
    if kt <= 0:
        raise ValueError("fermi_window needs T > 0; at T = 0 it is a delta function")
    x = (np.asarray(energy_meV, float) - mu_meV) / (2 * kt)
    return 1.0 / (4 * kt * np.cosh(np.clip(x, -350, 350)) ** 2)


def energy_grid_meV(mu_meV: ArrayLike, temperature_K: float, spacing_meV: float,
                    margin_kT: float = DEFAULT_MARGIN_KT) -> np.ndarray:
    """Uniform energy grid that covers every μ in ``mu_meV`` plus ``margin_kT`` k_B T on both sides.

    The grid is centred on the span of μ and has spacing at most ``spacing_meV``; at T = 0 it is just
    the μ values' span (one point for one μ).
    """
    mu = np.atleast_1d(np.asarray(mu_meV, float))
    pad = margin_kT * float(temperature_K) * KB_MEV_PER_K
    lo, hi = mu.min() - pad, mu.max() + pad
    if hi - lo <= 0:
        return np.array([lo])
    n = int(np.ceil((hi - lo) / spacing_meV - 1e-9)) + 1
    return np.linspace(lo, hi, max(n, 2))


def thermal_average(energies_meV: ArrayLike, values: ArrayLike, mu_meV: ArrayLike, temperature_K: float,
                    margin_kT: float = DEFAULT_MARGIN_KT) -> np.ndarray:
    """Smear ``values`` (energy on the last axis) with the Fermi window at every μ in ``mu_meV``.

    Parameters
    ----------
    energies_meV : array_like, shape (n_E,)
        Increasing energy grid.
    values : array_like, shape (..., n_E)
        Zero-temperature quantity on the grid, e.g. G(E) in e²/h.
    mu_meV : array_like, shape (n_μ,) or scalar
        Chemical potentials at which the smeared value is wanted.
    temperature_K : float
        T ≥ 0 in kelvin.
    margin_kT : float
        Required reach of the grid beyond each μ, in k_B T (ValueError when it is shorter).

    Returns
    -------
    ndarray, shape (..., n_μ) (or (...,) for a scalar μ)
    """
    e = np.asarray(energies_meV, float)
    y = np.asarray(values, float)
    mu_in = np.asarray(mu_meV, float)
    mu = np.atleast_1d(mu_in)
    if e.ndim != 1 or y.shape[-1] != e.size:
        raise ValueError("values must have the energy as last axis, matching energies_meV")
    if e.size > 1 and np.any(np.diff(e) <= 0):
        raise ValueError("energies_meV must be strictly increasing")
    kt = float(temperature_K) * KB_MEV_PER_K
    if kt < 0:
        raise ValueError("temperature_K must be >= 0")
    pad = margin_kT * kt
    if mu.min() - pad < e[0] - 1e-9 or mu.max() + pad > e[-1] + 1e-9:
        raise ValueError(
            f"energy grid {e[0]:.4g} … {e[-1]:.4g} meV does not reach {margin_kT:g} k_BT "
            f"({pad:.3g} meV) beyond μ = {mu.min():.4g} … {mu.max():.4g} meV; extend the grid")
    if kt == 0:
        rows = y.reshape(-1, e.size)
        out = np.stack([np.interp(mu, e, row) for row in rows]).reshape(*y.shape[:-1], mu.size)
        return out if mu_in.ndim else out[..., 0]
    weights = _linear_weights(e, mu, kt)                 # (n_E, n_μ)
    out = y @ weights
    return out if mu_in.ndim else out[..., 0]


def _linear_weights(e: np.ndarray, mu: np.ndarray, kt: float) -> np.ndarray:
    """Weights w[i, m] with Σ_i G_i w[i, m] = ∫ G_lin(E) (−f′) dE over the grid, renormalized.

    On a segment [e_i, e_{i+1}] with G linear, ∫ (−f′) dE = f(e_i) − f(e_{i+1}) and
    ∫ (E − e_i)(−f′) dE = [−(E − e_i) f(E) + F(E)] with F(E) = ∫ f dE = −k_BT log(1 + e^{−(E−μ)/k_BT}).
    """
    x = (e[:, None] - mu[None, :]) / kt                 # (n_E, n_μ)
    f = expit(-x)                                       # occupation
    big_f = -kt * np.logaddexp(0.0, -x)                 # ∫ f dE (up to a constant)
    w = np.zeros_like(x)
    if e.size == 1:
        w[0] = 1.0
        return w
    h = np.diff(e)[:, None]
    p0 = f[:-1] - f[1:]                                 # ∫ (−f′) over each segment
    # ∫ (E − e_i)(−f′) dE over [e_i, e_{i+1}]
    p1 = (-h * f[1:] + big_f[1:]) - big_f[:-1]
    slope_part = p1 / h                                 # weight of (G_{i+1} − G_i)
    w[:-1] += p0 - slope_part
    w[1:] += slope_part
    total = w.sum(axis=0, keepdims=True)
    return w / total
