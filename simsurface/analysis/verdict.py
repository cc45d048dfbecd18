"""Is an oscillation visible? The rule that turns a predicted amplitude into a verdict.

A harmonic is judged in the measured quantity (resistance in Ω, or conductance in e²/h, whichever the noise
floor is given in) by two numbers: a signal-to-noise ratio and the number of periods n_p of the harmonic inside
the magnet's field range. The amplitude A is the one expected in one device (rms over the simulated devices).

**Counting the field points** (``field_points`` given). A measured trace of N field points with white noise of
rms σ per point, fitted by least squares with a cosine and a sine at the harmonic's (known) frequency, gives
each coefficient with standard deviation σ·sqrt(2/N) (the normal equations of a record that spans whole
periods: Σcos² = Σsin² = N/2; common practice, e.g. the Lomb–Scargle periodogram, Scargle, ApJ 263, 835
(1982)). The Fourier amplitude of pure noise is then Rayleigh distributed with scale

    σ_A = σ · sqrt(2/N),

so P(noise amplitude > a) = exp(−a²/(2σ_A²)). The signal-to-noise is S = A/σ_A, and

* visible      — S ≥ 3.72 (false-alarm probability ≤ 1e-3 at the predicted frequency) and n_p ≥ 3;
* marginal     — S ≥ 2.45 (false-alarm probability ≤ 0.05) and n_p ≥ 1, but not visible;
* not visible  — otherwise, and always when the sampling has 2 or fewer points per period of the harmonic
  (Nyquist: the harmonic aliases).

It assumes: white, uncorrelated Gaussian noise of the given rms per point; field points evenly spread over the
field range; the frequency known (from the predicted period); the smooth background removed without taking
power at the harmonic. An aperiodic background (universal conductance fluctuations, a bulk channel) is not
white noise and is not counted here. The noise of the amplitude falls as 1/sqrt(N): at a fixed point spacing
it falls with the square root of the number of periods recorded.

**Without a point count** (``field_points`` None) the earlier, conservative rule applies: S = A/σ (the noise
floor itself, i.e. σ_A with N = 2), visible when S ≥ 3 and n_p ≥ 3, marginal when S ≥ 1 and n_p ≥ 1 (common
practice, no source: a peak that stands out of a single trace by eye).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["VISIBLE_SNR", "VISIBLE_PERIODS", "MARGINAL_SNR", "MARGINAL_PERIODS", "VISIBLE_FALSE_ALARM",
           "MARGINAL_FALSE_ALARM", "VERDICTS", "RULE_TEXT", "amplitude_noise", "false_alarm_probability",
           "signal_to_noise", "rule_text", "verdict", "best"]

VISIBLE_SNR = 3.0
VISIBLE_PERIODS = 3.0
MARGINAL_SNR = 1.0
MARGINAL_PERIODS = 1.0
#: False-alarm probabilities (noise alone reaching the amplitude at one known frequency) of the counted rule.
VISIBLE_FALSE_ALARM = 1e-3
MARGINAL_FALSE_ALARM = 0.05
MIN_POINTS_PER_PERIOD = 2.0
VERDICTS = ("visible", "marginal", "not visible")

RULE_TEXT = (f"visible: amplitude >= {VISIBLE_SNR:g} x noise floor and >= {VISIBLE_PERIODS:g} periods in the "
             f"field range; marginal: amplitude >= {MARGINAL_SNR:g} x noise floor and >= {MARGINAL_PERIODS:g} "
             "period; not visible: otherwise. Amplitude = rms over the simulated devices of the Fourier "
             "amplitude of the measured quantity (one device).")


def _snr_threshold(false_alarm: float) -> float:
    """S at which a Rayleigh-distributed noise amplitude exceeds A with probability ``false_alarm``."""
    return math.sqrt(-2.0 * math.log(false_alarm))


def amplitude_noise(noise_floor: ArrayLike, field_points: ArrayLike) -> np.ndarray:
    """σ_A = σ·sqrt(2/N): standard deviation of each Fourier coefficient (cosine, sine) of a least-squares fit.

    Parameters
    ----------
    noise_floor : array_like
        rms white noise σ of one field point (Ω or e²/h).
    field_points : array_like
        Number N of field points in the trace (≥ 3).

    Returns
    -------
    numpy.ndarray
        σ_A in the unit of ``noise_floor``; the amplitude sqrt(a² + b²) of pure noise is Rayleigh with this scale.
    """
    n = np.asarray(field_points, dtype=float)
    if np.any(n < 3):
        raise ValueError("field_points: a cosine-and-sine fit needs at least 3 field points")
    return np.asarray(noise_floor, dtype=float) * np.sqrt(2.0 / n)


def false_alarm_probability(amplitude: ArrayLike, amplitude_noise_: ArrayLike) -> np.ndarray:
    """P(noise alone gives a Fourier amplitude ≥ ``amplitude``) = exp(−A²/(2σ_A²)) at one known frequency."""
    s = np.asarray(amplitude, dtype=float) / np.asarray(amplitude_noise_, dtype=float)
    return np.exp(-0.5 * s**2)


def signal_to_noise(amplitude: float, noise_floor: float, field_points: int | None = None) -> float:
    """A/σ (no point count) or A/σ_A with σ_A = σ·sqrt(2/N) (``field_points`` = N)."""
    if noise_floor <= 0:
        raise ValueError("noise_floor must be > 0")
    if field_points is None:
        return amplitude / noise_floor
    return amplitude / float(amplitude_noise(noise_floor, field_points))


def rule_text(field_points: int | None = None) -> str:
    """The rule in one paragraph, as printed in reports (with or without counted field points)."""
    if field_points is None:
        return RULE_TEXT
    return (f"signal-to-noise S = A/sigma_A with sigma_A = sigma*sqrt(2/N), N = {field_points} field points "
            "(white noise, least-squares cosine and sine at the predicted frequency); visible: S >= "
            f"{_snr_threshold(VISIBLE_FALSE_ALARM):.2f} (false-alarm probability <= {VISIBLE_FALSE_ALARM:g}) and "
            f">= {VISIBLE_PERIODS:g} periods in the field range; marginal: S >= "
            f"{_snr_threshold(MARGINAL_FALSE_ALARM):.2f} (false-alarm probability <= {MARGINAL_FALSE_ALARM:g}) "
            f"and >= {MARGINAL_PERIODS:g} period; not visible: otherwise or with <= "
            f"{MIN_POINTS_PER_PERIOD:g} points per period. A = rms over the simulated devices of the Fourier "
            "amplitude of the measured quantity (one device). Aperiodic backgrounds are not counted as noise.")


def verdict(amplitude: float, noise_floor: float, periods: float, field_points: int | None = None) -> str:
    """'visible', 'marginal' or 'not visible' (rule in the module docstring).

    Parameters
    ----------
    amplitude : float
        Expected Fourier amplitude of the harmonic in one device (unit of ``noise_floor``).
    noise_floor : float
        rms noise of one field point (> 0).
    periods : float
        Periods of the harmonic inside the field range.
    field_points : int, optional
        Field points of the measured trace; None keeps the conservative rule (S = A/σ).
    """
    snr = signal_to_noise(amplitude, noise_floor, field_points)
    if field_points is None:
        visible_snr, marginal_snr = VISIBLE_SNR, MARGINAL_SNR
    else:
        if periods > 0 and field_points / periods <= MIN_POINTS_PER_PERIOD:
            return "not visible"
        visible_snr = _snr_threshold(VISIBLE_FALSE_ALARM)
        marginal_snr = _snr_threshold(MARGINAL_FALSE_ALARM)
    if snr >= visible_snr and periods >= VISIBLE_PERIODS:
        return "visible"
    if snr >= marginal_snr and periods >= MARGINAL_PERIODS:
        return "marginal"
    return "not visible"


def best(verdicts: list[str]) -> str:
    """The most favourable of several verdicts."""
    return min(verdicts, key=VERDICTS.index)
