"""Loss of phase coherence: the wire as phase-coherent sections of length L_phi added incoherently.

Coherence length versus temperature (user-set exponent p)::

    L_phi(T) = L_phi(T0) · (T / T0)^(−p)

p = 1/2 for electron–electron (Nyquist) dephasing in two dimensions, p = 1/3 in quasi-one dimension
(Altshuler, Aronov & Khmelnitsky, J. Phys. C 15, 7367 (1982)).

Incoherent-section method: a wire of length L is cut into n = max(1, round(L / L_phi)) sections of equal
length L/n. Each section is a phase-coherent conductor with its own disorder realization, computed between
clean leads of the same tube (N open channels there). Phase is lost between sections, so their
*resistances* add, but only once the contact (Sharvin) resistance h/(e²N) of the leads::

    1/T_wire = 1/N + Σ_i (1/T_i − 1/N)

This is the rule for scatterers in series with phase randomization between them: for one channel it is the
additivity of (1 − T)/T, for N channels it follows the same counting of the contact resistance h/(e²N)
(Datta, *Electronic Transport in Mesoscopic Systems*, CUP 1995, sec. 2.5; multichannel form common
practice, no source). It treats every section as a self-averaging unit in series and ignores that phase
is lost continuously (smoothly) rather than at section boundaries; sample-specific h/e oscillations of
the n sections have independent phases, so their relative amplitude falls like n^(−1/2) = (L_phi/L)^(1/2)
(Aronov & Sharvin, Rev. Mod. Phys. 59, 755 (1987)). Büttiker dephasing probes (Büttiker, PRB 33, 3020
(1986)) are not implemented.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike


def coherence_length_nm(temperature_K: ArrayLike, length_at_reference_nm: float, reference_K: float,
                        exponent: float) -> np.ndarray:
    """L_phi(T) = L_phi(T0)·(T/T0)^(−p) in nm; T and T0 in K (> 0), p ≥ 0."""
    t = np.asarray(temperature_K, float)
    if np.any(t <= 0) or reference_K <= 0:
        raise ValueError("temperatures must be > 0 K for the power law L_phi ∝ T^(−p)")
    return length_at_reference_nm * (t / reference_K) ** (-exponent)


def section_count(length_nm: float, coherence_length_nm_: float) -> int:
    """Number n of phase-coherent sections, round(L / L_phi) but at least one."""
    if length_nm <= 0 or coherence_length_nm_ <= 0:
        raise ValueError("lengths must be > 0 nm")
    return max(1, int(round(length_nm / coherence_length_nm_)))


def compose_incoherent(transmissions: ArrayLike, channels: ArrayLike, axis: int = 0) -> np.ndarray:
    """Transmission of sections in series with phase randomization between them.

    Parameters
    ----------
    transmissions : array_like
        Σ_n T_n of each section; the sections run along ``axis``.
    channels : array_like
        Open channels N of the clean leads, broadcastable to ``transmissions`` without ``axis``.
    axis : int
        Axis of the sections.

    Returns
    -------
    ndarray
        1 / (1/N + Σ_i (1/T_i − 1/N)); zero where any section or the leads carry no current.
    """
    t = np.moveaxis(np.asarray(transmissions, float), axis, 0)
    n = np.asarray(channels, float)
    n_b = np.broadcast_to(n, t.shape[1:])
    blocked = (n_b <= 0) | np.any(t <= 0, axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / n_b + np.sum(1.0 / t - 1.0 / n_b, axis=0)
        out = np.where(blocked, 0.0, 1.0 / inv)
    return out
