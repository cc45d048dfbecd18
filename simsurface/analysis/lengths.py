"""Transport lengths of a disordered wire from its ensemble-averaged conductance.

Mean free path ℓ — the ballistic-to-diffusive interpolation ⟨G⟩ = N/(1 + L/ℓ) (e²/h), N the clean channel
count, defines ℓ (common practice; Beenakker, Rev. Mod. Phys. 69, 731 (1997), where the quasi-1D ℓ is
π/2 times the 2D transport mean free path — from memory). It holds while L is below the localization
length; fit it on lengths with ⟨G⟩ ≳ 1.

Localization length ξ — deep in the localized regime ⟨ln G⟩ = c − 2L/ξ. This is the convention in which
Beenakker's estimate ξ ≈ (βN + 2 − β)ℓ holds (Beenakker 1997; for a single channel it gives ξ = 2ℓ and
⟨ln T⟩ = −L/ℓ — from memory, checked here against the one-dimensional Anderson chain, see the tests).
Some authors write ⟨ln G⟩ = −L/ξ'; then ξ' = ξ/2.

Symmetry index β: 1 for time-reversal symmetric spin-rotation-invariant wires (the trivial tube at
integer and half-integer flux), 2 with time reversal broken (any other flux), 4 for time-reversal
symmetric wires with spin–orbit coupling (the topological tube at integer flux; N then counts Kramers
pairs). A topological tube at half-integer flux has an odd number of channels and a perfectly
transmitted channel: it does not localize (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010); Ando &
Suzuki, J. Phys. Soc. Jpn. 71, 2753 (2002)). The Wilson term of the lattice tube breaks time reversal
weakly, so on long enough wires the lattice crosses over from β = 4 to β = 2 (see the documentation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import curve_fit


#: relative deficit of ⟨G⟩ below N under which no backscattering is considered resolved
RESOLVED_BACKSCATTERING = 1e-9


@dataclass(frozen=True)
class LengthFit:
    """Result of a length fit: value, standard error (from the fit covariance) and the points used."""

    value_nm: float
    error_nm: float
    used: np.ndarray  # bool mask over the lengths
    intercept: float = math.nan  # ⟨ln G⟩ at L = 0 for the localization fit


def mean_free_path_from_mean(length_nm: ArrayLike, mean_conductance: ArrayLike, channels: ArrayLike) -> np.ndarray:
    """ℓ = L⟨G⟩/(N − ⟨G⟩), the inversion of ⟨G⟩ = N/(1 + L/ℓ) at a single length (nm).

    Infinite when ⟨G⟩ ≥ N up to rounding (relative 1e-9: no backscattering resolved); NaN when N = 0.
    """
    L, g, n = (np.asarray(x, float) for x in (length_nm, mean_conductance, channels))
    with np.errstate(divide="ignore", invalid="ignore"):
        ell = L * g / (n - g)
    return np.where(n <= 0, np.nan, np.where(g >= n * (1 - RESOLVED_BACKSCATTERING), np.inf, ell))


def interpolation_conductance(length_nm: ArrayLike, channels: ArrayLike, mean_free_path_nm: float) -> np.ndarray:
    """⟨G⟩ = N/(1 + L/ℓ) in e²/h."""
    return np.asarray(channels, float) / (1.0 + np.asarray(length_nm, float) / mean_free_path_nm)


def fit_mean_free_path(length_nm: ArrayLike, mean_conductance: ArrayLike, std_error: ArrayLike,
                       channels: ArrayLike, use: ArrayLike | None = None) -> LengthFit:
    """Weighted least-squares fit of ⟨G⟩(L) = N/(1 + L/ℓ) for ℓ (nm).

    Parameters
    ----------
    length_nm, mean_conductance, std_error, channels : array_like, shape (n_L,)
        Lengths, ⟨G⟩ (e²/h), its standard error and the clean channel count at each length.
    use : array_like of bool, optional
        Points to fit (default: those with ⟨G⟩ ≥ 1 e²/h, i.e. not localized; all if fewer than 2).
    """
    L, g, s, n = (np.asarray(x, float) for x in (length_nm, mean_conductance, std_error, channels))
    mask = np.asarray(use, bool) if use is not None else g >= 1.0
    if mask.sum() < 2:
        mask = np.ones_like(L, bool)
    sigma = np.where(np.isfinite(s) & (s > 0), s, np.nanmax(np.r_[s[np.isfinite(s)], 1e-6]))
    sigma = np.maximum(sigma, 1e-6 * np.maximum(g, 1e-12))
    start = np.nanmedian(mean_free_path_from_mean(L[mask], g[mask], n[mask]))
    if not np.isfinite(start) or start <= 0:
        start = float(L[mask].max())
    try:
        popt, pcov = curve_fit(lambda x, inv: n[mask] / (1.0 + x * inv), L[mask], g[mask], p0=[1.0 / start],
                               sigma=sigma[mask], absolute_sigma=True, bounds=(0.0, np.inf))
    except (RuntimeError, ValueError):
        return LengthFit(math.nan, math.nan, mask)
    inv, inv_err = float(popt[0]), float(math.sqrt(max(pcov[0, 0], 0.0)))
    if inv <= 0:
        return LengthFit(math.inf, math.nan, mask)
    return LengthFit(1.0 / inv, inv_err / inv**2, mask)


def fit_localization_length(length_nm: ArrayLike, mean_log_conductance: ArrayLike, std_error: ArrayLike,
                            use: ArrayLike | None = None) -> LengthFit:
    """Weighted straight-line fit ⟨ln G⟩ = c − 2L/ξ for ξ (nm).

    Parameters
    ----------
    length_nm, mean_log_conductance, std_error : array_like, shape (n_L,)
        ⟨ln(G h/e²)⟩ and its standard error.
    use : array_like of bool, optional
        Points to fit (default: the localized ones, exp⟨ln G⟩ ≤ 0.3). Fewer than two: ξ is NaN.

    Returns
    -------
    LengthFit
        ``value_nm`` is +inf when ⟨ln G⟩ does not decrease with L.
    """
    L, y, s = (np.asarray(x, float) for x in (length_nm, mean_log_conductance, std_error))
    mask = np.asarray(use, bool) if use is not None else y <= math.log(0.3)
    if mask.sum() < 2:
        return LengthFit(math.nan, math.nan, mask)
    ok = np.isfinite(s[mask]) & (s[mask] > 0)
    weight = np.where(ok, 1.0 / np.where(ok, s[mask], 1.0) ** 2, 1.0)
    design = np.column_stack([L[mask], np.ones(int(mask.sum()))])
    normal = design.T @ (weight[:, None] * design)
    cov = np.linalg.inv(normal)  # parameter covariance for known standard errors
    slope, intercept = cov @ (design.T @ (weight * y[mask]))
    if slope >= 0:
        return LengthFit(math.inf, math.nan, mask, float(intercept))
    slope_err = math.sqrt(max(cov[0, 0], 0.0)) if ok.all() else math.nan
    return LengthFit(-2.0 / slope, 2.0 * slope_err / slope**2, mask, float(intercept))


def symmetry_index(surface: str, flux_quanta: float, tol: float = 1e-9) -> int:
    """Dyson index β of the disordered tube at this flux (see the module notes)."""
    special = abs(2 * flux_quanta - round(2 * flux_quanta)) < tol
    if not special:
        return 2
    return 4 if surface == "topological" else 1


def beenakker_localization_length(mean_free_path_nm: float, channels: float, beta: int,
                                  degeneracy: int = 1) -> float:
    """ξ ≈ (βN + 2 − β)ℓ (Beenakker 1997) with N the independent channels of one symmetry block.

    ``channels`` is the clean conductance in e²/h; it is divided by ``degeneracy`` (2 for a
    spin-degenerate trivial tube) and, for β = 4, by the Kramers degeneracy 2. Returns +inf for β = 4
    with an odd channel count (perfectly transmitted channel) and NaN without channels.
    """
    n = float(channels) / degeneracy
    if n < 0.5 or not np.isfinite(mean_free_path_nm):
        return math.nan
    if beta == 4:
        if int(round(n)) % 2 == 1:
            return math.inf
        n = n / 2
    return (beta * n + 2 - beta) * mean_free_path_nm


#: the mean free path is fitted on lengths up to this fraction of the localization length
DIFFUSIVE_FRACTION_OF_XI = 0.25


def fit_transport_lengths(length_nm: ArrayLike, mean_conductance: ArrayLike, std_error: ArrayLike,
                          mean_log_conductance: ArrayLike, log_std_error: ArrayLike, channels: ArrayLike,
                          beta: int, degeneracy: int = 1, mean_free_path_max_nm: float | None = None,
                          localization_min_nm: float | None = None) -> tuple[LengthFit, LengthFit]:
    """Mean free path and localization length from one series of lengths, each on its own window.

    ξ is fitted first (on ``L >= localization_min_nm``, else on the localized lengths, see
    :func:`fit_localization_length`). ℓ is fitted on ``L <= mean_free_path_max_nm`` when given; otherwise
    on the lengths L ≤ ξ/4 — ξ the fitted value, or Beenakker's estimate from a first fit on the two
    shortest lengths when ξ is not resolved (with β = 2 when a protected channel makes it infinite) —
    always including the two shortest lengths, because ⟨G⟩ = N/(1 + L/ℓ) ignores localization. Shapes as in the two fits; returns (ℓ fit, ξ fit).
    """
    L = np.asarray(length_nm, float)
    n = np.asarray(channels, float)
    xi_use = None if localization_min_nm is None else L >= localization_min_nm
    xi = fit_localization_length(L, mean_log_conductance, log_std_error, xi_use)
    if mean_free_path_max_nm is not None:
        return fit_mean_free_path(L, mean_conductance, std_error, n, L <= mean_free_path_max_nm), xi
    shortest = np.zeros(L.size, bool)
    shortest[np.argsort(L)[:2]] = True
    first = fit_mean_free_path(L, mean_conductance, std_error, n, shortest)
    n_typical = float(np.median(n))
    if beta == 4 and beenakker_localization_length(1.0, n_typical, 4, degeneracy) == math.inf:
        # a protected channel (odd N) saturates ⟨G⟩ at 1 and a fitted ξ is only its slow decay: scale the
        # window by the other channels' localization length, taken as the unitary-class (βN + 2 − β)ℓ, β = 2
        reference = beenakker_localization_length(first.value_nm, n_typical, 2, degeneracy)
    elif np.isfinite(xi.value_nm) and xi.value_nm > 0:
        reference = xi.value_nm
    else:
        reference = beenakker_localization_length(first.value_nm, n_typical, beta, degeneracy)
    if not np.isfinite(reference):  # ℓ unresolved (no backscattering): the interpolation holds throughout
        window = np.ones(L.size, bool)
    else:
        window = (L <= DIFFUSIVE_FRACTION_OF_XI * reference) | shortest
    return fit_mean_free_path(L, mean_conductance, std_error, n, window), xi
