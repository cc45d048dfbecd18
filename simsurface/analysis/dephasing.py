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

Which N: the channel count of the clean tube jumps by one subband (two for the trivial tube) whenever a
subband bottom crosses the Fermi energy as the flux changes. A disordered section does not see such a
sharp threshold: disorder broadens every subband edge by the quasiparticle width γ = ħ/2τ. Counting the
clean N(Φ) anyway puts a spurious flux dependence (n − 1)·δ(1/N) into a diffusive wire (measured: a few
per cent of ⟨G⟩, as large as the h/2e signal). The plan therefore counts channels with Lorentzian-broadened
edges, N_γ = g Σ_l [1/2 + arctan((E − E_l(Φ))/γ)/π] (:func:`broadened_channel_count`; common practice, no
source): N_γ → N in the quasi-ballistic limit (γ → 0), where the composition then gives T = N for a clean
wire, and N_γ becomes flux independent in a diffusive wire whose γ exceeds the subband spacing.
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


def broadened_channel_count(subband_bottoms_meV: ArrayLike, energies_meV: ArrayLike, broadening_meV: float,
                            degeneracy: int = 1, dirac: bool = True) -> np.ndarray:
    """Open channels with subband edges broadened by a Lorentzian of half-width γ.

    Parameters
    ----------
    subband_bottoms_meV : array_like, shape (..., n_subbands)
        Subband edges E_l (k = 0) at each flux, e.g. from ``SurfaceTube.lattice_subband_bottoms_meV``.
    energies_meV : array_like, shape (n_E,)
    broadening_meV : float
        γ ≥ 0; zero gives the clean step count.
    degeneracy : int
        Channels per subband (2 for the spin-degenerate trivial tube).
    dirac : bool
        Count at |E| (electrons and holes of the Dirac tube, edges are the positive branch).

    Returns
    -------
    ndarray, shape (..., n_E): g Σ_l [1/2 + arctan((E − E_l)/γ)/π]
    """
    bottoms = np.asarray(subband_bottoms_meV, float)[..., None, :]
    e = np.asarray(energies_meV, float)
    e = np.abs(e) if dirac else e
    x = e[:, None] - bottoms
    if broadening_meV > 0:
        open_ = 0.5 + np.arctan(x / broadening_meV) / np.pi
    else:
        open_ = (x > 0).astype(float)
    return degeneracy * open_.sum(axis=-1)
