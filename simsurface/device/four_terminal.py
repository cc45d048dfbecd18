"""Reading a wire's transmission as a two- or four-terminal resistance.

Two terminals measure the whole device including the contact (Sharvin) resistance h/(e²N) of the wire's N
channels and whatever lies in series:

    R_2t = (h/e²) / T + R_series.

Four terminals with non-invasive voltage probes (weakly coupled, coupled equally to every channel) measure
only the resistance of the scatterers between them,

    R_4t = (h/e²) (1/T − 1/N),

Landauer's four-terminal formula in its multichannel form (Büttiker, PRL 57, 1761 (1986) gives the general
multi-terminal theory from which it follows for ideal probes). T is the total transmission of the wire
between the current contacts (in units of e²/h), N its number of open channels. The relative oscillation
is larger in the four-terminal reading: ΔR/R_4t = (ΔT/T) / (1 − T/N).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ..units import RESISTANCE_QUANTUM_OHM

__all__ = ["two_terminal_resistance_ohm", "four_terminal_resistance_ohm", "resistance_ohm",
           "four_terminal_enhancement"]


def two_terminal_resistance_ohm(transmission: ArrayLike, series_resistance_ohm: float = 0.0) -> np.ndarray:
    """R_2t = (h/e²)/T + R_series in Ω.

    Parameters
    ----------
    transmission : array_like
        Total transmission T (= conductance in e²/h), any shape, > 0.
    series_resistance_ohm : float
        Contacts and leads in series, Ω.
    """
    t = np.asarray(transmission, dtype=float)
    return RESISTANCE_QUANTUM_OHM / t + series_resistance_ohm


def four_terminal_resistance_ohm(transmission: ArrayLike, channels: ArrayLike) -> np.ndarray:
    """R_4t = (h/e²)(1/T − 1/N) in Ω, non-invasive probes (Büttiker, PRL 57, 1761 (1986)).

    Parameters
    ----------
    transmission : array_like
        Total transmission T in e²/h, > 0.
    channels : array_like
        Number of open channels N of the wire (broadcast against ``transmission``; may be a thermal or
        disorder-broadened average, hence a float). T ≤ N; a clean wire (T = N) gives 0 Ω.
    """
    t = np.asarray(transmission, dtype=float)
    n = np.asarray(channels, dtype=float)
    return RESISTANCE_QUANTUM_OHM * (1.0 / t - 1.0 / n)


def resistance_ohm(transmission: ArrayLike, channels: ArrayLike, terminals: int,
                   series_resistance_ohm: float = 0.0) -> np.ndarray:
    """The measured resistance for ``terminals`` = 2 (with series resistance) or 4 (non-invasive probes)."""
    if terminals == 2:
        return two_terminal_resistance_ohm(transmission, series_resistance_ohm)
    if terminals == 4:
        return four_terminal_resistance_ohm(transmission, channels)
    raise ValueError(f"terminals: {terminals!r} is not allowed; use 2 or 4")


def four_terminal_enhancement(transmission: ArrayLike, channels: ArrayLike) -> np.ndarray:
    """(ΔR/R)_4t / (ΔR/R)_2t without series resistance = 1/(1 − T/N) for a small change of T.

    d ln R_2t = −dT/T and d ln R_4t = −(dT/T)/(1 − T/N); e.g. T = 1.2, N = 6 gives 1.25.
    """
    t = np.asarray(transmission, dtype=float)
    n = np.asarray(channels, dtype=float)
    return 1.0 / (1.0 - t / n)
