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
(1986)) are not used here; they are the dephasing *inside* a coherent wire, below.

Which N: the channel count of the clean tube jumps by one subband (two for the trivial tube) whenever a
subband bottom crosses the Fermi energy as the flux changes. A disordered section does not see such a
sharp threshold: disorder broadens every subband edge by the quasiparticle width γ = ħ/2τ. Counting the
clean N(Φ) anyway puts a spurious flux dependence (n − 1)·δ(1/N) into a diffusive wire (measured: a few
per cent of ⟨G⟩, as large as the h/2e signal). The plan therefore counts channels with Lorentzian-broadened
edges, N_γ = g Σ_l [1/2 + arctan((E − E_l(Φ))/γ)/π] (:func:`broadened_channel_count`; common practice, no
source): N_γ → N in the quasi-ballistic limit (γ → 0), where the composition then gives T = N for a clean
wire, and N_γ becomes flux independent in a diffusive wire whose γ exceeds the subband spacing.

Dephasing inside the wire (:mod:`simsurface.transport.probes`): Büttiker probes with the self-energy −iη
on the wire's states make every interference term decay at the rate 1/τ_φ = 2η/ħ, so η = ħ/(2τ_φ). The
coherence length L_phi fixes τ_φ by how far an electron gets in that time (:func:`dephasing_energy_meV`):

* quasi-ballistic (ℓ ≳ L_phi): τ_φ = L_phi / v, η = ħv / (2 L_phi);
* diffusive (ℓ ≪ L_phi): L_phi = (D τ_φ)^(1/2) with D = v ℓ_tr / 2 (two dimensions), τ_φ = L_phi² / D,
  η = ħ v ℓ_tr / (4 L_phi²);
* "auto": the slower of the two, τ_φ = max(L_phi / v, L_phi² / D) — continuous, diffusive for
  L_phi > ℓ_tr / 2 where the two times cross.

v is the Fermi velocity of the surface: ħv of the Dirac cone, or ħv = 2 (ε₀ E)^(1/2) with ε₀ = ħ²/(2m*) for
the parabolic (trivial) layer at E above its band bottom.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from ..errors import InputError
from ..units import HBAR2_OVER_2ME_MEV_NM2

__all__ = ["coherence_length_nm", "section_count", "compose_incoherent", "broadened_channel_count",
           "REGIMES", "dephasing_energy_meV", "diffusive_regime", "hbar_velocity_meV_nm", "probe_units",
           "PROBE_CELL_FRACTION", "probe_parameters"]

#: how L_phi is turned into a dephasing time (see :func:`dephasing_energy_meV`)
REGIMES = ("quasi_ballistic", "diffusive", "auto")
#: probes are at most this fraction of L_phi long (coarse-graining error measured in docs/plan.md)
PROBE_CELL_FRACTION = 0.125


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


def dephasing_energy_meV(coherence_length_nm: ArrayLike, hbar_velocity_meV_nm: ArrayLike,
                         regime: str = "quasi_ballistic", mean_free_path_nm: float | None = None) -> np.ndarray:
    """η = ħ/(2τ_φ) in meV of the dephasing probes for a coherence length L_phi.

    Parameters
    ----------
    coherence_length_nm : array_like
        L_phi in nm (> 0; ``inf`` gives η = 0).
    hbar_velocity_meV_nm : array_like
        ħv of the electrons at the Fermi energy, meV nm (broadcast against L_phi).
    regime : {"quasi_ballistic", "diffusive", "auto"}
        τ_φ = L_phi/v, L_phi²/D with D = vℓ/2, or the larger of the two (module notes).
    mean_free_path_nm : float, optional
        Transport mean free path ℓ_tr in nm; required by "diffusive" and "auto".

    Returns
    -------
    ndarray
        η in meV, shape of the broadcast inputs.
    """
    l_phi = np.asarray(coherence_length_nm, float)
    hv = np.asarray(hbar_velocity_meV_nm, float)
    if np.any(~(l_phi > 0)):
        raise ValueError("coherence lengths must be > 0 nm")
    if regime not in REGIMES:
        raise ValueError(f"regime {regime!r}: use one of {', '.join(REGIMES)}")
    ballistic = hv / (2 * l_phi)
    if regime == "quasi_ballistic":
        return ballistic
    if mean_free_path_nm is None or not mean_free_path_nm > 0:
        raise ValueError(f"regime {regime!r} needs a transport mean free path > 0 nm")
    diffusive = hv * mean_free_path_nm / (4 * l_phi**2)
    return diffusive if regime == "diffusive" else np.minimum(ballistic, diffusive)


def diffusive_regime(coherence_length_nm: float, mean_free_path_nm: float) -> bool:
    """True where the "auto" rule uses the diffusive time: L_phi > ℓ_tr / 2."""
    return coherence_length_nm > mean_free_path_nm / 2


def hbar_velocity_meV_nm(model, energies_meV: ArrayLike) -> np.ndarray:
    """ħv at each energy for the surface models: the Dirac velocity, or 2(ε₀E)^(1/2) for the parabolic layer.

    ``model`` is a ``ModeTube`` or ``SurfaceTube`` (duck-typed on ``surface``, ``energy_scale`` and
    ``hbar_v_meV_nm``); other models raise InputError naming the ``[dephasing]`` table.
    """
    e = np.asarray(energies_meV, float)
    surface = getattr(model, "surface", None)
    if hasattr(model, "hbar_v_meV_nm") and surface == "topological":
        return np.full(e.shape, float(model.hbar_v_meV_nm))
    if surface == "topological" and hasattr(model, "energy_scale"):
        return np.full(e.shape, float(model.energy_scale))
    if surface == "trivial" and hasattr(model, "energy_scale"):
        eps0 = HBAR2_OVER_2ME_MEV_NM2 / float(model.energy_scale)
        return 2 * np.sqrt(eps0 * np.clip(e, 0, None))
    raise InputError("[dephasing]: dephasing probes are available for the surface models "
                     "([model] kind = 'surface_modes' or 'surface_lattice'), not for this model; remove the table")


def probe_units(coherence_length_nm: float, spacing_nm: float, fraction: float = PROBE_CELL_FRACTION) -> int:
    """Slices (or cells) per dephasing probe: the probe is at most ``fraction`` · L_phi long, at least one unit."""
    if not (spacing_nm > 0 and coherence_length_nm > 0):
        raise ValueError("lengths must be > 0 nm")
    if math.isinf(coherence_length_nm):
        return 1 << 30
    return max(1, int(math.floor(fraction * coherence_length_nm / spacing_nm + 1e-9)))


def probe_parameters(model, energies_meV: ArrayLike, settings) -> tuple[np.ndarray, int]:
    """η (meV) at each energy and the units per probe for a ``[dephasing]`` table on a surface model.

    Parameters
    ----------
    model : ModeTube or SurfaceTube
        Supplies the Fermi velocity (:func:`hbar_velocity_meV_nm`) and the axial spacing ``spacing_nm``.
    energies_meV : array_like, shape (K,)
    settings : DephasingSection
        ``coherence_length_nm``, ``regime``, ``mean_free_path_nm``, ``probe_length_nm``.

    Returns
    -------
    (ndarray of shape (K,), int)
    """
    eta = dephasing_energy_meV(settings.coherence_length_nm, hbar_velocity_meV_nm(model, energies_meV),
                               settings.regime, settings.mean_free_path_nm)
    spacing = float(model.spacing_nm)
    if settings.probe_length_nm is not None:
        units = max(1, int(round(settings.probe_length_nm / spacing)))
    else:
        units = probe_units(settings.coherence_length_nm, spacing)
    return np.asarray(eta, float), units
