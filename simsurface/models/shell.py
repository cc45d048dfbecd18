"""Finite surface-state shell: the surface state has a thickness, so the enclosed area is spread.

Model (docs/fields.md): the depth of the contour at which an electron path encircles the flux is Gaussian,
d ~ N(d0, σ_d²) (``depth_spread_nm`` = σ_d); paths at different depths enclose different areas A(d) and add
incoherently. The conductance is the average over that distribution,

    G_shell(B) = ⟨G(B; A(d))⟩_d ,

where only the Aharonov–Bohm flux B A(d) cos θ changes (the transverse quantization keeps the mean contour's
perimeter). A harmonic e^{2πin B A/Φ0} of G is multiplied by the characteristic function of the area
distribution: with A(d0 + x) = A0 − P x + c x² (c = π for a circle, 4 for a rectangle; exact, A is quadratic
in d) and x ~ N(0, σ²),

    χ_n(B) = ⟨e^{iκ(A − A0)}⟩ = (1 − 2iκcσ²)^{−1/2} exp[−κ²P²σ²/(2(1 − 2iκcσ²))],   κ = 2πn B cos θ/Φ0 ,

so |χ_n| ≈ exp[−2π²n²(B cos θ P σ/Φ0)²] decays at high field, faster for h/2e (n = 2) than for h/e (n = 1).
"""

from __future__ import annotations

from typing import Any, Callable

import numpy as np
from numpy.polynomial.hermite_e import hermegauss
from numpy.typing import ArrayLike

from ..errors import InputError
from ..geometry import CrossSection, enclosed_area_nm2
from ..units import FLUX_QUANTUM_T_NM2

__all__ = ["DEFAULT_SHELL_NODES", "shell_nodes", "shell_harmonic_factor", "shell_conductance"]

#: Gauss–Hermite nodes of the default area average
DEFAULT_SHELL_NODES = 9


def _check(section: CrossSection, depth_spread_nm: float, reach: float) -> None:
    if not (np.isfinite(depth_spread_nm) and depth_spread_nm >= 0):
        raise InputError(f"[wire] depth_spread_nm: {depth_spread_nm} is not allowed; use a spread >= 0 nm")
    half = min(section.width_nm, section.thickness_nm) / 2
    if section.depth_nm + reach * depth_spread_nm >= half:
        raise InputError(f"[wire] depth_spread_nm: {depth_spread_nm:g} nm is too wide for this contour (the deepest "
                         f"node, {reach:.2g} spreads below {section.depth_nm:g} nm, would reach the wire's centre "
                         f"at {half:g} nm); allowed: below {(half - section.depth_nm) / reach:.3g} nm")


def shell_nodes(section: CrossSection, depth_spread_nm: float,
                n_nodes: int = DEFAULT_SHELL_NODES) -> tuple[np.ndarray, np.ndarray]:
    """Area ratios A_i/A0 and weights of a Gauss–Hermite average over the Gaussian depth spread.

    Parameters
    ----------
    section : CrossSection
        The mean contour (at ``section.depth_nm``).
    depth_spread_nm : float
        σ_d ≥ 0; 0 gives the single node (1.0, 1.0).
    n_nodes : int

    Returns
    -------
    (area_ratio, weight) : ndarray, shape (n_nodes,) each; weights sum to 1
        Pass ``area_ratio`` to ``model.chain(flux, area_ratio=...)`` and average the conductances with ``weight``.
    """
    if depth_spread_nm == 0:
        return np.ones(1), np.ones(1)
    x, w = hermegauss(int(n_nodes))
    _check(section, depth_spread_nm, float(np.max(np.abs(x))))
    depths = section.depth_nm + depth_spread_nm * x
    areas = enclosed_area_nm2(section.shape, section.width_nm, section.thickness_nm, depths)
    return areas / section.area_nm2, w / w.sum()


def shell_harmonic_factor(field_T: ArrayLike, harmonic: int, section: CrossSection, depth_spread_nm: float,
                          axial_fraction: float = 1.0) -> np.ndarray:
    """χ_n(B): the factor (complex) by which the n-th h/e harmonic of G at field B is multiplied (module notes).

    Parameters
    ----------
    field_T : array_like
        Field magnitude B in T.
    harmonic : int
        n = 1 for h/e, 2 for h/2e.
    section : CrossSection
    depth_spread_nm : float
    axial_fraction : float
        cos θ of a tilted field.

    Returns
    -------
    ndarray, complex, shape of ``field_T``
        |χ_n| is the damping, arg χ_n the phase shift (the mean area grows by c σ²).
    """
    _check(section, depth_spread_nm, 0.0)
    c = np.pi if section.shape == "circle" else 4.0
    kappa = 2 * np.pi * harmonic * np.asarray(field_T, dtype=float) * axial_fraction / FLUX_QUANTUM_T_NM2
    s2 = depth_spread_nm**2
    denom = 1 - 2j * kappa * c * s2
    return denom ** -0.5 * np.exp(-(kappa * section.perimeter_nm) ** 2 * s2 / (2 * denom))


def shell_conductance(conductance_of_chain: Callable[[Any], np.ndarray], model, flux_quanta: float,
                      area_ratio: np.ndarray, weight: np.ndarray, **chain_kwargs: Any) -> np.ndarray:
    """⟨G⟩ over the shell's areas: Σ_i w_i G(model.chain(flux, area_ratio=r_i, **chain_kwargs)).

    ``conductance_of_chain(chain)`` returns the conductance at the caller's energies (e.g. a partial of
    :func:`simsurface.transport.engines.conductance`); the result has its shape.
    """
    total = None
    for r, w in zip(area_ratio, weight):
        g = w * np.asarray(conductance_of_chain(model.chain(flux_quanta, area_ratio=float(r), **chain_kwargs)))
        total = g if total is None else total + g
    return total
