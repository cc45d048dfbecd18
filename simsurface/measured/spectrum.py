"""Spectrum of an oscillating curve, the h/e peak, and the period with its uncertainty.

Frequencies are in cycles per tesla (``frequency_per_T``); the h/e peak sits at f = A/(h/e) = 1/period
and the h/2e (Altshuler–Aronov–Spivak) peak at 2f.

* Uneven field points: the Lomb–Scargle periodogram (Lomb, Astrophys. Space Sci. 39, 447 (1976);
  Scargle, Astrophys. J. 263, 835 (1982)) of the mean-free data, in the unnormalized convention of
  ``scipy.signal.lombscargle`` (power N a²/4 for a sinusoid of amplitude a), shown as the amplitude
  a = (4P/N)^(1/2).
* Evenly spaced points: an FFT with a Hann window, zero-padded 8 times; amplitude 2|X|/Σw.

The period is then refined by a least-squares fit of both harmonics, y = c + Σ_n a_n cos(2πnfB) +
b_n sin(2πnfB) for n = 1 (h/e) and 2 (h/2e), with the common frequency f found by minimizing the
residual over f (the amplitudes enter linearly). Its uncertainty is the standard deviation of f over a
moving-block bootstrap of the fit residuals (blocks one period long, so correlated residuals such as
aperiodic fluctuations keep their correlation; Künsch, Ann. Stat. 17, 1217 (1989)). The spectral
resolution (Rayleigh limit, Δf = 1/field range) is reported as well; it is the width of the peak, not
the uncertainty of its centre.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import xarray as xr
from scipy.optimize import minimize_scalar

from ..analysis.harmonics import fourier_coefficients

#: default spacing of the Lomb–Scargle grid, in units of the Rayleigh resolution 1/range
OVERSAMPLE = 10
FFT_PADDING = 8


def lomb_scargle_power(x: np.ndarray, y: np.ndarray, frequency: np.ndarray, chunk: int = 256) -> np.ndarray:
    """Classical Lomb–Scargle periodogram (scipy's unnormalized convention).

    Parameters
    ----------
    x : ndarray, shape (n,)
        Sample positions (e.g. field in T).
    y : ndarray, shape (n,)
        Values; the mean is *not* removed here.
    frequency : ndarray, shape (m,)
        Frequencies in cycles per unit of ``x`` (not angular).

    Returns
    -------
    ndarray, shape (m,)
        P(f) = ½ {[Σ y cos ω(x−τ)]² / Σ cos² ω(x−τ) + [Σ y sin ω(x−τ)]² / Σ sin² ω(x−τ)}, ω = 2πf,
        tan 2ωτ = Σ sin 2ωx / Σ cos 2ωx.
    """
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    omega = 2 * np.pi * np.asarray(frequency, float)
    out = np.empty(omega.shape)
    for s in range(0, omega.size, chunk):
        w = omega[s:s + chunk, None]
        tau = np.arctan2(np.sin(2 * w * x).sum(1), np.cos(2 * w * x).sum(1))[:, None] / (2 * w)
        arg = w * (x - tau)
        c, sn = np.cos(arg), np.sin(arg)
        out[s:s + chunk] = 0.5 * ((c @ y) ** 2 / (c**2).sum(1) + (sn @ y) ** 2 / (sn**2).sum(1))
    return out


def is_uniform(field_T: np.ndarray, rtol: float = 0.01) -> bool:
    """True when sorted, distinct fields are evenly spaced to within ``rtol`` of the step."""
    d = np.diff(np.sort(field_T))
    return d.size > 1 and d.min() > 0 and float(np.ptp(d)) <= rtol * float(np.median(d))


def frequency_grid(field_T: np.ndarray, f_max: float, oversample: int = OVERSAMPLE) -> np.ndarray:
    """Frequencies step … f_max in steps of 1/(oversample × field range) (zero left out)."""
    span = float(np.ptp(field_T))
    step = 1.0 / (oversample * span)
    return np.arange(step, f_max + 0.5 * step, step)


def amplitude_spectrum(field_T: np.ndarray, values: np.ndarray, f_max: float | None = None,
                       method: str = "auto") -> xr.DataArray:
    """Amplitude spectrum of an oscillating curve.

    Parameters
    ----------
    field_T, values : ndarray, shape (n,)
        Sorted fields and the background-subtracted signal.
    f_max : float, optional
        Highest frequency in 1/T; default half the inverse median spacing.
    method : {"auto", "fft", "lombscargle"}
        ``auto`` uses the FFT on evenly spaced points and Lomb–Scargle otherwise. ``fft`` on uneven
        points first interpolates linearly onto an even grid with the median spacing.

    Returns
    -------
    xarray.DataArray
        ``amplitude`` (units of ``values``) on coordinate ``frequency_per_T``; attribute ``method``.
    """
    x = np.asarray(field_T, float)
    y = np.asarray(values, float) - np.mean(values)
    step = float(np.median(np.diff(x)))
    if f_max is None:
        f_max = 0.5 / step
    if method == "auto":
        method = "fft" if is_uniform(x) else "lombscargle"
    if method == "lombscargle":
        f = frequency_grid(x, f_max)
        amp = np.sqrt(4 * np.maximum(lomb_scargle_power(x, y, f), 0) / x.size)
    elif method == "fft":
        grid = np.arange(x[0], x[-1] + 0.5 * step, step)
        yy = np.interp(grid, x, y)
        yy -= yy.mean()
        win = np.hanning(grid.size)
        n_pad = int(2 ** np.ceil(np.log2(FFT_PADDING * grid.size)))
        spec = np.fft.rfft(yy * win, n_pad)
        f = np.fft.rfftfreq(n_pad, step)
        amp = 2 * np.abs(spec) / win.sum()
        keep = f <= f_max
        f, amp = f[keep], amp[keep]
    else:
        raise ValueError(f"unknown spectrum method {method!r}")
    return xr.DataArray(amp, coords={"frequency_per_T": ("frequency_per_T", f, {"units": "1/T"})},
                        dims="frequency_per_T", name="amplitude", attrs={"method": method})


def peak_in_band(frequency: np.ndarray, amplitude: np.ndarray, lo: float, hi: float) -> int | None:
    """Index of the largest local maximum with lo ≤ f ≤ hi, or None when the band has none.

    A maximum at the edge of the band that keeps rising outside it is not a peak.
    """
    inside = np.flatnonzero((frequency >= lo) & (frequency <= hi))
    if inside.size == 0:
        return None
    best = None
    for i in inside[np.argsort(amplitude[inside])[::-1]]:
        if 0 < i < frequency.size - 1 and amplitude[i] >= amplitude[i - 1] and amplitude[i] >= amplitude[i + 1]:
            best = int(i)
            break
    return best


@dataclass(frozen=True)
class HarmonicFit:
    """Least-squares fit of harmonics n·f of one fundamental frequency f (in 1/T).

    ``amplitudes[k]`` and ``phases_rad[k]`` belong to ``harmonics[k]``: y ≈ offset +
    Σ a_k cos(2π n_k f B − φ_k).
    """

    frequency_per_T: float
    harmonics: tuple[int, ...]
    amplitudes: np.ndarray
    phases_rad: np.ndarray
    offset: float
    model: np.ndarray
    residual: np.ndarray

    @property
    def rss(self) -> float:
        return float(self.residual @ self.residual)


def fit_harmonics(field_T: np.ndarray, values: np.ndarray, frequency_per_T: float,
                  harmonics: tuple[int, ...] = (1, 2)) -> HarmonicFit:
    """Linear least-squares amplitudes and phases of the harmonics at a fixed fundamental frequency.

    The same Fourier-series fit as :func:`simsurface.analysis.harmonics.fourier_coefficients`, with the
    flux counted in periods of the fundamental, Φ = f·B.
    """
    phase_of_field = frequency_per_T * np.asarray(field_T, float)
    c0, a, b = fourier_coefficients(phase_of_field, values, harmonics)
    arg = 2 * np.pi * np.outer(phase_of_field, harmonics)
    model = c0 + np.cos(arg) @ a + np.sin(arg) @ b
    return HarmonicFit(float(frequency_per_T), tuple(harmonics), np.hypot(a, b), np.arctan2(b, a),
                       float(c0), model, values - model)


def refine_frequency(field_T: np.ndarray, values: np.ndarray, frequency_per_T: float,
                     harmonics: tuple[int, ...] = (1, 2), half_width: float | None = None) -> float:
    """Frequency that minimizes the residual of :func:`fit_harmonics` within ±half_width.

    ``half_width`` defaults to half the Rayleigh resolution, 0.5/range, which contains one minimum
    around a spectral peak.
    """
    if half_width is None:
        half_width = 0.5 / float(np.ptp(field_T))
    lo, hi = frequency_per_T - half_width, frequency_per_T + half_width
    res = minimize_scalar(lambda f: fit_harmonics(field_T, values, f, harmonics).rss, bounds=(lo, hi),
                          method="bounded", options={"xatol": 1e-9 * frequency_per_T})
    return float(res.x)


def block_resample(residual: np.ndarray, block: int, rng: np.random.Generator) -> np.ndarray:
    """Moving-block bootstrap copy of ``residual`` (random blocks of length ``block``, same length)."""
    n = residual.size
    block = int(min(max(block, 1), n))
    starts = rng.integers(0, n - block + 1, size=int(np.ceil(n / block)))
    return np.concatenate([residual[s:s + block] for s in starts])[:n]


def bootstrap_fit(field_T: np.ndarray, fit: HarmonicFit, n_resamples: int, block: int,
                  rng: np.random.Generator, refine: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies and amplitudes refitted on ``n_resamples`` block-bootstrap copies of the data.

    Returns
    -------
    frequency : ndarray, shape (n_resamples,)
    amplitudes : ndarray, shape (n_resamples, n_harmonics)
    """
    freqs = np.empty(n_resamples)
    amps = np.empty((n_resamples, len(fit.harmonics)))
    for k in range(n_resamples):
        y = fit.model + block_resample(fit.residual, block, rng)
        f = refine_frequency(field_T, y, fit.frequency_per_T, fit.harmonics) if refine else fit.frequency_per_T
        freqs[k] = f
        amps[k] = fit_harmonics(field_T, y, f, fit.harmonics).amplitudes
    return freqs, amps


def noise_floor(spectrum: xr.DataArray, lo: float, hi: float, exclude: list[float], resolution: float) -> float:
    """Median amplitude in lo … hi away (by 2 resolutions) from the ``exclude`` frequencies."""
    f = spectrum["frequency_per_T"].values
    a = spectrum.values
    keep = (f >= lo) & (f <= hi)
    for fx in exclude:
        keep &= np.abs(f - fx) > 2 * resolution
    if keep.sum() < 5:
        keep = (f >= lo) & (f <= hi)
    return float(np.median(a[keep])) if keep.any() else float("nan")
