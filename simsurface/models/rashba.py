"""Rashba spin–orbit coupling of a trivial surface layer: the clean subbands of a round tube and the coupling
above which the ensemble h/2e takes the antilocalization sign.

Clean round tube (derived in docs/fields.md). H = ħ²k²/2m* + α (σ × k)·n on a cylinder of radius R is
Hermitian as written, α(σ·e_s k_x − σ·e_x k_s); rotating the spin with the angle, U = e^{−iθσ_x/2}, makes it
uniform with half-integer angular momenta j and gives, with J = j + Φ/Φ0 and c = ħ²/2m*,

    E_{j,±}(k) = c [k² + (J² + 1/4)/R²] + α/(2R) ± { J² (c/R² + α/R)² + α² k² }^(1/2).

h/2e sign (docs/fields.md; Hikami, Larkin & Nagaoka, Prog. Theor. Phys. 63, 707 (1980) for the singlet/triplet
split of the Cooperon, from memory). The Altshuler–Aronov–Spivak correction is carried by the Cooperon: the
singlet (weight −1/2, antilocalizing) and three triplets (weight +1/2 each). Rashba coupling gaps the triplets
(at q = 0 by {1, 1, 2}/ℓ_α², ℓ_α = ħ²/(2m*α) the spin-precession length; a standard result for the Rashba
Cooperon, from memory). On a cylinder of circumference P and length L between absorbing contacts the Cooperon
modes are sin(πmx/L) e^{2πi(n − 2Φ/Φ0)s/P}; Poisson summation over n gives the h/2e harmonic of each
component ∝ S(Λ) = Σ_m e^{−Q_m P}/Q_m, Q_m² = (πm/L)² + 1/L_φ² + Λ. So the ensemble h/2e amplitude relative to
the spin-degenerate (orthogonal) one is

    r(α) = [Σ_i S(g_i/ℓ_α²) − S(0)] / [2 S(0)],      g = (1, 1, 2),

1 without spin–orbit coupling (weak localization), −1/2 for strong coupling (antilocalization); the sign turns at
the coupling α* where Σ_i S(g_i/ℓ_α²) = S(0): the spin must relax within about one circumference
(ℓ_α* ≈ 0.7 P for P = 80 … 120 nm, L = 2.5 P). The lowest triplet mode of the pure Rashba Cooperon dips below
its q = 0 gap at finite q (to 7/16 of it, from memory), which moves α* up by ≈ 1.5: read α* as an estimate to
that factor.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from ..units import HBAR2_OVER_2ME_MEV_NM2

__all__ = ["rashba_subbands_meV", "spin_precession_length_nm", "h2e_relative_amplitude", "h2e_sign_crossover_meV_nm"]

#: triplet gaps at q = 0 in units of 1/ℓ_α² (Rashba Cooperon, from memory)
TRIPLET_GAPS = (1.0, 1.0, 2.0)


def rashba_subbands_meV(k_per_nm: ArrayLike, flux_quanta: float, perimeter_nm: float, mass_ratio: float,
                        rashba_meV_nm: float, max_angular: int = 20) -> np.ndarray:
    """Clean subbands E_{j,±}(k) of a round tube with Rashba coupling (module notes); shape (n_k, 2(2·max_angular)).

    Parameters
    ----------
    k_per_nm : array_like, shape (n_k,)
    flux_quanta : float
        Axial flux Φ/Φ0.
    perimeter_nm, mass_ratio, rashba_meV_nm : float
    max_angular : int
        j runs over −max_angular + 1/2 … max_angular − 1/2.

    Returns
    -------
    ndarray, sorted along the last axis
    """
    c = HBAR2_OVER_2ME_MEV_NM2 / mass_ratio
    radius = perimeter_nm / (2 * np.pi)
    k = np.atleast_1d(np.asarray(k_per_nm, dtype=float))[:, None]
    big_j = np.arange(-max_angular, max_angular) + 0.5 + flux_quanta
    centre = c * (k**2 + (big_j**2 + 0.25) / radius**2) + rashba_meV_nm / (2 * radius)
    split = np.sqrt(big_j**2 * (c / radius**2 + rashba_meV_nm / radius) ** 2 + (rashba_meV_nm * k) ** 2)
    return np.sort(np.concatenate([centre - split, centre + split], axis=1), axis=1)


def spin_precession_length_nm(rashba_meV_nm: float, mass_ratio: float) -> float:
    """ℓ_α = ħ²/(2m*α): the distance over which a Rashba-coupled spin turns by one radian."""
    return float(HBAR2_OVER_2ME_MEV_NM2 / mass_ratio / abs(rashba_meV_nm)) if rashba_meV_nm else float("inf")


def _cooperon_harmonic(perimeter_nm: float, length_nm: float, gap_per_nm2: float, dephasing_per_nm2: float) -> float:
    m = np.arange(1, 20001)
    q = np.sqrt((np.pi * m / length_nm) ** 2 + dephasing_per_nm2 + gap_per_nm2)
    return float(np.sum(np.exp(-q * perimeter_nm) / q))


def h2e_relative_amplitude(rashba_meV_nm: float, mass_ratio: float, perimeter_nm: float, length_nm: float,
                           coherence_length_nm: float | None = None) -> float:
    """r(α): ensemble h/2e amplitude relative to the spin-degenerate layer (1: weak localization, −1/2: full
    antilocalization; module notes). ``coherence_length_nm`` None: a fully coherent wire between contacts."""
    dephasing = 0.0 if coherence_length_nm is None else 1.0 / coherence_length_nm**2
    length = spin_precession_length_nm(rashba_meV_nm, mass_ratio)
    base = _cooperon_harmonic(perimeter_nm, length_nm, 0.0, dephasing)
    triplets = sum(_cooperon_harmonic(perimeter_nm, length_nm, g / length**2, dephasing) for g in TRIPLET_GAPS)
    return (triplets - base) / (2 * base)


def h2e_sign_crossover_meV_nm(mass_ratio: float, perimeter_nm: float, length_nm: float,
                              coherence_length_nm: float | None = None) -> float:
    """α* where r(α) changes sign: above it the ensemble h/2e has the antilocalization sign."""
    def f(log_alpha: float) -> float:
        return h2e_relative_amplitude(float(np.exp(log_alpha)), mass_ratio, perimeter_nm, length_nm, coherence_length_nm)

    return float(np.exp(brentq(f, np.log(1e-6), np.log(1e6))))
