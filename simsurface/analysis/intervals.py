"""Confidence intervals for the headline numbers of an ensemble of simulated devices.

A plan reports, from N devices: the typical amplitude of a harmonic in one device (rms over devices of the
per-device amplitude), the cosine a_k of the ensemble-averaged conductance (a mean over devices), the ratio
of two rms amplitudes, and the probability that one device shows harmonic A larger than harmonic B.
The per-device amplitudes are broadly distributed (a Fourier coefficient of a random conductance trace is
close to complex Gaussian, so its modulus is close to Rayleigh distributed and its square to exponential):
percentile-bootstrap intervals over ~12 devices are then too narrow. The methods here are chosen for that:

* mean (a_k): Student's t interval, x̄ ± t_{n−1} s/√n (Student, Biometrika 6, 1 (1908));
* rms amplitude: delta method on the log scale, log rms = ½ log ȳ with y = x², standard error
  s_y/(2 √n ȳ), t quantile with n − 1 degrees of freedom; the log scale follows the right skew of ȳ
  (common practice for positive, skewed estimators, no single source);
* ratio of rms amplitudes: the same delta method for ½(log ā² − log b̄²), with the covariance of a² and b²
  of the same devices (delta method for a ratio of means, e.g. Casella & Berger, *Statistical
  Inference*, 2nd ed. 2002, §5.5.4);
* probability that one device shows A > B: Wilson's score interval for a proportion (Wilson, J. Am.
  Stat. Assoc. 22, 209 (1927)), which stays inside [0, 1] and does not collapse at 0 or N successes.

Coverage of the 68 % intervals is tested on generators with known values (tests/analysis/test_intervals.py).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy import stats

__all__ = ["Interval", "mean_interval", "rms_interval", "rms_ratio_interval", "proportion_interval",
           "is_converged", "devices_needed"]


@dataclass(frozen=True)
class Interval:
    """An estimate with its central interval at ``confidence``."""

    value: float
    low: float
    high: float
    confidence: float

    @property
    def half_width(self) -> float:
        """Half the interval's width (same units as the value)."""
        return (self.high - self.low) / 2


def _t_quantile(confidence: float, n: int) -> float:
    if not 0 < confidence < 1:
        raise ValueError(f"confidence must lie in (0, 1), got {confidence}")
    return float(stats.t.ppf((1 + confidence) / 2, n - 1))


def _samples(values: ArrayLike, name: str) -> np.ndarray:
    x = np.asarray(values, dtype=float)
    if x.ndim != 1 or x.size < 2 or not np.all(np.isfinite(x)):
        raise ValueError(f"{name}: need a 1-D array of at least two finite values")
    return x


def mean_interval(values: ArrayLike, confidence: float = 0.68) -> Interval:
    """Mean of ``values`` (shape (N,)) with Student's t interval."""
    x = _samples(values, "values")
    n = x.size
    mean = float(x.mean())
    half = _t_quantile(confidence, n) * float(x.std(ddof=1)) / math.sqrt(n)
    return Interval(mean, mean - half, mean + half, confidence)


def rms_interval(values: ArrayLike, confidence: float = 0.68) -> Interval:
    """Root mean square of ``values`` (shape (N,)) with a log-scale delta-method interval.

    All-zero values give the interval [0, 0].
    """
    y = _samples(values, "values") ** 2
    n = y.size
    mean = float(y.mean())
    if mean == 0:
        return Interval(0.0, 0.0, 0.0, confidence)
    se_log = float(y.std(ddof=1)) / (math.sqrt(n) * mean) / 2
    rms = math.sqrt(mean)
    k = _t_quantile(confidence, n) * se_log
    return Interval(rms, rms * math.exp(-k), rms * math.exp(k), confidence)


def rms_ratio_interval(values_a: ArrayLike, values_b: ArrayLike, confidence: float = 0.68) -> Interval:
    """rms(a)/rms(b) of paired values (shapes (N,), the same devices) with a log-scale delta-method interval.

    Raises ValueError when every b is zero (the ratio is undefined).
    """
    ya, yb = _samples(values_a, "values_a") ** 2, _samples(values_b, "values_b") ** 2
    if ya.size != yb.size:
        raise ValueError("values_a and values_b must come from the same devices (equal lengths)")
    n = ya.size
    ma, mb = float(ya.mean()), float(yb.mean())
    if mb == 0:
        raise ValueError("values_b: all zero, the ratio is undefined")
    if ma == 0:
        return Interval(0.0, 0.0, 0.0, confidence)
    cov = np.cov(ya, yb, ddof=1)
    var_log = (cov[0, 0] / ma**2 + cov[1, 1] / mb**2 - 2 * cov[0, 1] / (ma * mb)) / n / 4
    ratio = math.sqrt(ma / mb)
    k = _t_quantile(confidence, n) * math.sqrt(max(var_log, 0.0))
    return Interval(ratio, ratio * math.exp(-k), ratio * math.exp(k), confidence)


def proportion_interval(successes: int, trials: int, confidence: float = 0.68) -> Interval:
    """Fraction ``successes / trials`` with Wilson's score interval."""
    if trials < 1 or not 0 <= successes <= trials:
        raise ValueError("need 0 <= successes <= trials and trials >= 1")
    z = float(stats.norm.ppf((1 + confidence) / 2))
    p = successes / trials
    centre = (p + z**2 / (2 * trials)) / (1 + z**2 / trials)
    half = z / (1 + z**2 / trials) * math.sqrt(p * (1 - p) / trials + z**2 / (4 * trials**2))
    # the score interval contains p; clip the rounding of its ends at 0 and 1
    return Interval(p, min(p, max(0.0, centre - half)), max(p, min(1.0, centre + half)), confidence)


def is_converged(interval: Interval, relative: float = 0.10, absolute_floor: float = 0.0) -> bool:
    """Whether ``interval`` is narrow enough: half-width ≤ ``relative`` · |value| or ≤ ``absolute_floor``
    (same units as the value; for quantities that may be near zero, e.g. 0.005 e²/h)."""
    return interval.half_width <= max(relative * abs(interval.value), absolute_floor)


def devices_needed(interval: Interval, devices: int, relative: float = 0.10, absolute_floor: float = 0.0) -> int:
    """Devices at which ``interval`` (from ``devices`` devices) is expected to satisfy :func:`is_converged`.

    Half-widths of all intervals here shrink as 1/√N for large N, so N_needed = N (h / target)², rounded up
    (at least N); an estimate for planning the next round, not a promise.
    """
    target = max(relative * abs(interval.value), absolute_floor)
    if interval.half_width <= target:
        return int(devices)
    if target <= 0:
        raise ValueError("the value is zero and no absolute_floor is given: no width is enough")
    return int(math.ceil(devices * (interval.half_width / target) ** 2))
