"""Coherence length from the temperature dependence of the h/e and h/2e amplitudes.

Amplitude model (common practice in ring and cylinder experiments; the form is written here from
memory, no single source is pinned — other papers use exp(−P/L_phi) for h/e or add thermal-averaging
factors)::

    A_n(T) = A_n(0) · exp(−n P / (2 L_phi(T))),      L_phi(T) = L_ref · (T / T_ref)^(−p)

n = 1 is the h/e harmonic: the two interfering paths each run half the loop, P/2, so the loop of
circumference P damps it by exp(−(P/2)/L_phi) = exp(−πr/L_phi) for a circle. n = 2 is h/2e: the
time-reversed Altshuler–Aronov–Spivak paths each go once around, length P. The power law with
p = 1/2 is expected for electron–electron (Nyquist) dephasing in 2D and p = 1/3 in quasi-1D
(Altshuler, Aronov & Khmelnitsky, J. Phys. C 15, 7367 (1982)).

Assumptions and validity: one loop of circumference P (the surface-state contour); no thermal
averaging of the amplitude (valid when the thermal length exceeds the loop size or when k_BT is small
against the correlation energy); the ensemble averaging of h/e along a wire much longer than L_phi
(amplitude ∝ (L_phi/L)^(1/2)) is not modelled. Under these assumptions ln A_n is linear in T^p, and
the fit returns L_ref (at the lowest temperature T_ref), p and the A_n(0).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import least_squares

from ..errors import InputError


def harmonic_damping(harmonic: ArrayLike, perimeter_nm: float, lphi_nm: ArrayLike) -> np.ndarray:
    """Damping exp(−n P/(2 L_phi)) of harmonic n (1: h/e, 2: h/2e) of a loop of circumference P."""
    n = np.asarray(harmonic, float)
    return np.exp(-n * perimeter_nm / (2 * np.asarray(lphi_nm, float)))


def lphi_power_law_nm(temperature_K: ArrayLike, lphi_ref_nm: float, exponent: float, reference_K: float) -> np.ndarray:
    """L_phi(T) = L_ref (T/T_ref)^(−p) in nm."""
    return lphi_ref_nm * (np.asarray(temperature_K, float) / reference_K) ** (-exponent)


@dataclass(frozen=True)
class DephasingFit:
    """Result of :func:`fit_dephasing` (lengths in nm, temperatures in K)."""

    harmonics: tuple[int, ...]
    perimeter_nm: float
    reference_K: float
    lphi_ref_nm: float
    lphi_ref_uncertainty_nm: float
    exponent: float
    exponent_uncertainty: float | None  # None when the exponent was fixed
    amplitude0: np.ndarray              # A_n(0), shape (n_harmonics,)
    amplitude0_uncertainty: np.ndarray
    chi2_per_dof: float
    n_points: int
    covariance: np.ndarray              # of (ln A_n(0)..., ln L_ref[, p])

    @property
    def exponent_fixed(self) -> bool:
        return self.exponent_uncertainty is None

    def lphi_nm(self, temperature_K: ArrayLike) -> np.ndarray:
        """Fitted L_phi at the given temperatures."""
        return lphi_power_law_nm(temperature_K, self.lphi_ref_nm, self.exponent, self.reference_K)

    def lphi_uncertainty_nm(self, temperature_K: ArrayLike) -> np.ndarray:
        """1σ of the fitted L_phi (delta method on ln L = ln L_ref − p ln(T/T_ref))."""
        t = np.log(np.asarray(temperature_K, float) / self.reference_K)
        k = len(self.harmonics)
        var = self.covariance[k, k] * np.ones_like(t)
        if not self.exponent_fixed:
            var = var + t**2 * self.covariance[k + 1, k + 1] - 2 * t * self.covariance[k, k + 1]
        return self.lphi_nm(temperature_K) * np.sqrt(np.maximum(var, 0))

    def amplitude(self, temperature_K: ArrayLike, harmonic: int) -> np.ndarray:
        """Model amplitude A_n(T) of one harmonic."""
        k = self.harmonics.index(harmonic)
        return self.amplitude0[k] * harmonic_damping(harmonic, self.perimeter_nm, self.lphi_nm(temperature_K))

    def pointwise_lphi_nm(self, temperature_K: ArrayLike, amplitude: ArrayLike, amplitude_uncertainty: ArrayLike,
                          harmonic: int) -> tuple[np.ndarray, np.ndarray]:
        """L_phi from each measured amplitude, given the fitted A_n(0): n P / (2 ln(A_n(0)/A)).

        Returns L_phi and its 1σ (from the amplitude's and A_n(0)'s uncertainties); NaN where the
        amplitude is not below A_n(0).
        """
        k = self.harmonics.index(harmonic)
        a = np.asarray(amplitude, float)
        d = np.log(self.amplitude0[k]) - np.log(a)
        s_ln = np.hypot(np.asarray(amplitude_uncertainty, float) / a, np.sqrt(self.covariance[k, k]))
        with np.errstate(divide="ignore", invalid="ignore"):
            lphi = np.where(d > 0, harmonic * self.perimeter_nm / (2 * d), np.nan)
            sig = np.where(d > 0, harmonic * self.perimeter_nm / (2 * d**2) * s_ln, np.nan)
        return lphi, sig


def fit_dephasing(temperature_K: ArrayLike, amplitude: ArrayLike, amplitude_uncertainty: ArrayLike,
                  perimeter_nm: float, harmonics: tuple[int, ...] = (1, 2), exponent: float | None = None,
                  use: ArrayLike | None = None) -> DephasingFit:
    """Fit L_phi(T) = L_ref (T/T_ref)^(−p) to harmonic amplitudes (model in the module docstring).

    Parameters
    ----------
    temperature_K : array_like, shape (n_T,)
    amplitude, amplitude_uncertainty : array_like, shape (n_T, n_harmonics)
        Measured amplitudes of the harmonics and their 1σ (any consistent unit).
    perimeter_nm : float
        Circumference P of the loop.
    harmonics : tuple of int
        Harmonic number of each column (1: h/e, 2: h/2e).
    exponent : float, optional
        Fixed p; fitted when omitted.
    use : array_like of bool, shape (n_T, n_harmonics), optional
        Which amplitudes enter the fit (e.g. only those clearly above the noise).

    Notes
    -----
    Weighted least squares on ln A with σ(ln A) = σ_A/A; the covariance is scaled by χ²/dof when that
    exceeds 1 (the scatter then exceeds the stated uncertainties).
    """
    t = np.asarray(temperature_K, float)
    a = np.atleast_2d(np.asarray(amplitude, float).reshape(t.size, -1))
    s = np.asarray(amplitude_uncertainty, float).reshape(a.shape)
    k = len(harmonics)
    if a.shape[1] != k:
        raise ValueError("amplitude needs one column per harmonic")
    mask = np.ones(a.shape, bool) if use is None else np.asarray(use, bool).reshape(a.shape)
    mask &= (a > 0) & (s > 0) & np.isfinite(a) & np.isfinite(s)
    free_p = exponent is None
    n_par = k + 1 + int(free_p)
    if np.unique(t[mask.any(1)]).size < 2 or mask.sum() < n_par + 1 or (~mask.any(0)).any():
        raise InputError(
            f"temperature series: {int(mask.sum())} usable amplitudes at {np.unique(t[mask.any(1)]).size} "
            f"temperatures; fitting L_phi{' and its exponent' if free_p else ''} needs at least {n_par + 1} "
            "amplitudes clearly above the noise, at two or more temperatures for every harmonic used")
    t_ref = float(t[mask.any(1)].min())
    n = np.asarray(harmonics, float)
    rows, cols = np.nonzero(mask)
    ln_a, sig = np.log(a[rows, cols]), s[rows, cols] / a[rows, cols]
    x = t[rows] / t_ref

    def model(theta):
        p = theta[k + 1] if free_p else exponent
        return theta[cols] - n[cols] * perimeter_nm / (2 * np.exp(theta[k])) * x**p

    # start: p fixed (given or 1/2), linear least squares for ln A_n(0) and c = P/(2 L_ref)
    p0 = exponent if exponent is not None else 0.5
    design = np.zeros((rows.size, k + 1))
    design[np.arange(rows.size), cols] = 1.0
    design[:, k] = -n[cols] * x**p0
    lin = np.linalg.lstsq(design / sig[:, None], ln_a / sig, rcond=None)[0]
    if lin[k] <= 0:
        raise InputError("temperature series: the oscillation amplitudes do not decrease with temperature, "
                         "so no coherence length can be fitted (check the temperatures and the files)")
    theta0 = np.concatenate([lin[:k], [np.log(perimeter_nm / (2 * lin[k]))], [p0] if free_p else []])
    lower = np.concatenate([np.full(k, -np.inf), [np.log(1e-3)], [0.0] if free_p else []])
    upper = np.concatenate([np.full(k, np.inf), [np.log(1e9)], [5.0] if free_p else []])
    res = least_squares(lambda th: (model(th) - ln_a) / sig, theta0, bounds=(lower, upper), method="trf",
                        x_scale="jac")
    dof = max(rows.size - n_par, 1)
    chi2 = float(res.fun @ res.fun) / dof
    cov = np.linalg.pinv(res.jac.T @ res.jac) * max(1.0, chi2)
    th = res.x
    p_hat = float(th[k + 1]) if free_p else float(exponent)
    lref = float(np.exp(th[k]))
    a0 = np.exp(th[:k])
    return DephasingFit(
        harmonics=tuple(harmonics), perimeter_nm=float(perimeter_nm), reference_K=t_ref, lphi_ref_nm=lref,
        lphi_ref_uncertainty_nm=lref * float(np.sqrt(cov[k, k])), exponent=p_hat,
        exponent_uncertainty=float(np.sqrt(cov[k + 1, k + 1])) if free_p else None,
        amplitude0=a0, amplitude0_uncertainty=a0 * np.sqrt(np.diag(cov)[:k]), chi2_per_dof=chi2,
        n_points=int(rows.size), covariance=cov)
