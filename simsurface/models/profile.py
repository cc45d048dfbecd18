"""An electrostatic potential that varies around the wire (a gate makes the bottom and the top differ).

Representation shared with the gate electrostatics (/work/coord convention, docs/fields.md): samples
U(s_j) in meV of the potential energy of an electron at s_j = j P/M, s = 0 at the contour's bottom point
(towards the back gate), s counterclockwise seen from +x; zero mean (the uniform part is the Fermi
energy). It is added to the Hamiltonian as +U(s)·1. The models evaluate it anywhere on the contour by the
Fourier series of the samples (trigonometric interpolation; exact for a profile without harmonics above M/2).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from ..errors import InputError

__all__ = ["MIN_PROFILE_SAMPLES", "checked_profile_meV", "profile_at_meV"]

#: fewest samples around the contour
MIN_PROFILE_SAMPLES = 8
#: a mean below this fraction of the largest |U| counts as zero (rounding of the producer)
_ZERO_MEAN_RTOL = 1e-9


def checked_profile_meV(samples_meV: ArrayLike, field: str = "[model] circumferential_potential_meV") -> tuple[float, ...]:
    """Validate a circumferential profile and return it as a tuple (hashable, for frozen models).

    Raises :class:`InputError` naming ``field`` for fewer than 8 samples, non-finite values or a mean that
    is not zero (the uniform part belongs to the Fermi energy).
    """
    u = np.asarray(samples_meV, dtype=float)
    if u.ndim != 1 or u.size < MIN_PROFILE_SAMPLES:
        raise InputError(f"{field}: give at least {MIN_PROFILE_SAMPLES} values (potential energy in meV at equally "
                         "spaced points around the contour, starting at the bottom)")
    if not np.all(np.isfinite(u)):
        raise InputError(f"{field}: all values must be finite numbers (meV)")
    scale = float(np.max(np.abs(u)))
    mean = float(np.mean(u))
    if abs(mean) > _ZERO_MEAN_RTOL * max(scale, 1e-300) and abs(mean) > 1e-12:
        raise InputError(f"{field}: the values must average to zero (mean {mean:.3g} meV); the uniform part "
                         "is the Fermi energy")
    return tuple(float(x) for x in u)


def profile_at_meV(samples_meV: ArrayLike, s_over_perimeter: ArrayLike) -> np.ndarray:
    """The profile at arc lengths s/P (counterclockwise from the bottom) by its Fourier series.

    Parameters
    ----------
    samples_meV : array_like, shape (M,)
        U at s_j = j P/M.
    s_over_perimeter : array_like, shape (n,)

    Returns
    -------
    ndarray, shape (n,), real
        For an even M the Nyquist harmonic is split evenly between ±M/2 (real and exact at the samples).
    """
    u = np.asarray(samples_meV, dtype=float)
    m = u.size
    coeff = np.fft.fft(u) / m
    harmonics = np.fft.fftfreq(m, 1.0 / m)
    weight = np.ones(m)
    if m % 2 == 0:
        weight[m // 2] = 0.5
        coeff = np.concatenate([coeff, coeff[m // 2:m // 2 + 1]])
        harmonics = np.concatenate([harmonics, [m // 2]])
        weight = np.concatenate([weight, [0.5]])
    x = np.asarray(s_over_perimeter, dtype=float)[..., None]
    return np.real(np.sum(weight * coeff * np.exp(2j * math.pi * harmonics * x), axis=-1))
