"""Random fields on regular grids: the raw material of every disorder kind.

All functions are pure: they take a :class:`numpy.random.Generator` and return arrays in the units of
their amplitude argument (meV for potentials, nm for roughness profiles). Which generator a disorder kind
receives is decided in :mod:`simsurface.disorder.realization`.

Gaussian-correlated field
-------------------------
Covariance ⟨V(r) V(r')⟩ = rms² exp(−|r − r'|² / (2 λ²)), λ the correlation length (the convention of
Bardarson, Brouwer & Moore, PRL 105, 156803 (2010) for smooth disorder on a topological-insulator
surface). It is made by convolving unit white noise on the grid with the kernel k(r) ∝ exp(−r²/λ²),
whose self-convolution is the Gaussian above; the kernel is normalized to Σ k² = 1 so that the field
variance is rms² exactly (in expectation) on the lattice. The convolution runs by FFT. Axes marked
periodic (the circumference of a tube) wrap: the covariance is then the periodic sum
Σ_m exp(−(Δs + mP)²/(2λ²)) over windings, normalized to rms² at zero distance. Open axes are padded by
``PAD_CORRELATION_LENGTHS`` λ on each side, so no wrap-around correlates the two ends of a wire.

On the lattice the Gaussian is sampled exactly up to aliasing corrections of relative size
≈ 2 exp(−π² λ² / (2 a²)) (Poisson summation): 1.4 % at λ = a, below 1e-8 at λ = 2a. Below λ ≈ a the
field is, in effect, uncorrelated from site to site (see :func:`resolution_note`).
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np

#: open axes are padded by this many correlation lengths on each side (kernel tail exp(−16) ≈ 1e-7)
PAD_CORRELATION_LENGTHS = 4.0


def uniform_box(rng: np.random.Generator, shape: Sequence[int], width: float) -> np.ndarray:
    """Independent values uniform in [−width/2, width/2] (Anderson disorder of box width ``width``).

    The variance is width²/12.
    """
    return rng.uniform(-0.5 * width, 0.5 * width, size=tuple(shape))


def site_fraction_mask(rng: np.random.Generator, shape: Sequence[int], fraction: float) -> np.ndarray:
    """Boolean mask with each entry True independently with probability ``fraction``."""
    return rng.random(size=tuple(shape)) < fraction


def gaussian_kernel_1d(n: int, spacing: float, correlation_length: float, periodic: bool) -> np.ndarray:
    """Unnormalized 1D factor exp(−x²/λ²) of the convolution kernel on an FFT grid of ``n`` points.

    Distances are taken by the minimum image (index i and n − i are the same distance), so the kernel is
    symmetric and its FFT is real. For a periodic axis of ``n`` points the kernel is summed over windings.
    """
    i = np.arange(n)
    if periodic:
        windings = max(1, math.ceil(PAD_CORRELATION_LENGTHS * correlation_length / (n * spacing)) + 1)
        m = np.arange(-windings, windings + 1)[:, None]
        x = (i[None, :] + m * n) * spacing
        return np.exp(-(x / correlation_length) ** 2).sum(axis=0)
    d = np.minimum(i, n - i) * spacing
    return np.exp(-(d / correlation_length) ** 2)


def padding_points(spacing: float, correlation_length: float) -> int:
    """Grid points added on each side of an open axis."""
    return math.ceil(PAD_CORRELATION_LENGTHS * correlation_length / spacing)


def gaussian_correlated_field(rng: np.random.Generator, shape: Sequence[int], spacing: Sequence[float],
                              correlation_length: float, rms: float,
                              periodic: Sequence[bool] | None = None) -> np.ndarray:
    """Gaussian random field with Gaussian covariance on a regular grid.

    Parameters
    ----------
    rng : numpy.random.Generator
    shape : sequence of int
        Grid points along each axis.
    spacing : sequence of float
        Grid spacing along each axis (same length unit as ``correlation_length``, e.g. nm).
    correlation_length : float
        λ > 0 of the covariance rms² exp(−r²/(2λ²)).
    rms : float
        Standard deviation of the field (its unit is the unit of the result).
    periodic : sequence of bool, optional
        Axes that wrap around (default: none).

    Returns
    -------
    ndarray, shape ``shape``

    Notes
    -----
    The white noise is drawn on the padded grid in C order with the first axis slowest. An open first
    axis is padded by the same amount at both ends whatever its length, so two grids that differ only
    in the length of the first axis share the noise of their common beginning: the field of a short
    wire is, up to the last few λ, the beginning of the field of a longer wire with the same seed.
    """
    shape = tuple(int(s) for s in shape)
    spacing = tuple(float(a) for a in spacing)
    periodic = tuple(bool(p) for p in (periodic or (False,) * len(shape)))
    if not (len(shape) == len(spacing) == len(periodic)):
        raise ValueError("shape, spacing and periodic must have one entry per axis")
    if correlation_length <= 0:
        raise ValueError("correlation_length must be > 0")
    pads = [0 if p else padding_points(a, correlation_length) for a, p in zip(spacing, periodic)]
    full = [n + 2 * pad for n, pad in zip(shape, pads)]
    noise = rng.standard_normal(full)
    kernel = np.ones(full)
    for axis, (n, a, p) in enumerate(zip(full, spacing, periodic)):
        k1 = gaussian_kernel_1d(n, a, correlation_length, p)
        kernel = kernel * k1.reshape([-1 if i == axis else 1 for i in range(len(full))])
    kernel /= math.sqrt(np.sum(kernel**2))
    field = np.fft.irfftn(np.fft.rfftn(noise) * np.fft.rfftn(kernel), s=full, axes=range(len(full)))
    cut = tuple(slice(pad, pad + n) for pad, n in zip(pads, shape))
    return rms * field[cut]


def gaussian_covariance(dx: np.ndarray, ds: np.ndarray, correlation_length: float, rms: float,
                        circumference: float | None = None) -> np.ndarray:
    """Analytic covariance of :func:`gaussian_correlated_field` at separations (dx, ds).

    With ``circumference`` the second axis is periodic: the Gaussian is summed over windings and
    normalized to rms² at zero separation. Used to test the generator.
    """
    dx, ds = np.asarray(dx, float), np.asarray(ds, float)
    lam2 = 2 * correlation_length**2
    if circumference is None:
        return rms**2 * np.exp(-(dx**2 + ds**2) / lam2)
    m = np.arange(-50, 51)
    wrapped = np.exp(-(ds[..., None] + m * circumference) ** 2 / lam2).sum(axis=-1)
    norm = np.exp(-(m * circumference) ** 2 / lam2).sum()
    return rms**2 * np.exp(-dx**2 / lam2) * wrapped / norm


def resolution_note(correlation_length_nm: float, spacing_nm: float) -> str | None:
    """Explanation for the user when a correlation length is below the lattice spacing, else None."""
    if correlation_length_nm >= spacing_nm:
        return None
    neighbour = math.exp(-0.5 * (spacing_nm / correlation_length_nm) ** 2)
    return (f"correlation length {correlation_length_nm:g} nm is below the lattice spacing {spacing_nm:.3g} nm: "
            f"neighbouring sites are correlated by only {neighbour:.2g}, so the potential acts as "
            "uncorrelated (Anderson-like) disorder of the same rms, not as smooth puddles; "
            "use a correlation length of at least the spacing or a smaller [model] lattice_spacing_nm")
