"""Dephasing inside the coherent wire: elastic Büttiker voltage probes on every piece of a slice chain.

Every unit of the wire (a slice of a lattice chain, a cell of the mode tube) is coupled to a reservoir with
the broadening 2η times its metric, so that the probes together add the self-energy −iη P_wire
(:mod:`~simsurface.transport.probe_blocks`): phase is lost at the rate 1/τ_φ = 2η/ħ everywhere in the wire,
along it and around it alike. Electrons that enter a probe are re-emitted with the probe's chemical
potential, which is fixed at every energy by zero net current into the probe ("elastic" or
energy-conserving dephasing probe; Büttiker, PRB 33, 3020 (1986) and IBM J. Res. Dev. 32, 63 (1988);
D'Amato & Pastawski, PRB 41, 7411 (1990); references from memory). In linear response, with terminal transmissions T_kl from
:func:`~simsurface.transport.probe_green.terminal_transmissions`, the probe potentials μ solve

    Σ_{q≠k} T_kq μ_k − Σ_{l probe, l≠k} T_kl μ_l = T_kL        (μ_L = 1, μ_R = 0)

and the two-terminal transmission of the dephased wire is

    T_eff = T_RL + Σ_k T_Rk μ_k.

The coherent part T_RL decays like e^{−L/L_φ}; the rest is carried through the probes. Current is conserved
(Σ_q T_kq = Σ_q T_qk for every terminal), so T_eff is the same read from either lead. With η → 0 the
probes decouple and T_eff → the coherent transmission. A local probe re-emits into every direction, so it
also relaxes momentum: a clean wire acquires a transport mean free path of order v τ_φ from the probes
alone (docs/plan.md, "Dephasing inside the wire").
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .chain import SliceChain
from .probe_blocks import chain_blocks, probe_layout
from .probe_green import terminal_transmissions

__all__ = ["terminal_matrix", "floating_probe_transmission", "dephased_transmission", "dephased_conductance",
           "MEMORY_BYTES"]

#: working memory of the points solved together (dense blocks of the whole chain per point)
MEMORY_BYTES = 2**28


def _points(energies_meV: ArrayLike, dephasing_meV: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    e = np.atleast_1d(np.asarray(energies_meV, float)).ravel()
    eta = np.broadcast_to(np.asarray(dephasing_meV, float), e.shape).astype(float)
    if np.any(~np.isfinite(eta)) or np.any(eta < 0):
        raise ValueError("the dephasing energy eta must be finite and >= 0 meV")
    return e, eta


def terminal_matrix(chain: SliceChain, energies_meV: ArrayLike, dephasing_meV: ArrayLike,
                    units_per_probe: int = 1) -> np.ndarray:
    """Transmissions between the leads and the dephasing probes of ``chain``.

    Parameters
    ----------
    chain : SliceChain
        Plain, or energy-dependent with the two-point overlap of the mode tube.
    energies_meV : array_like, shape (K,)
    dephasing_meV : float or array_like, shape (K,)
        η = ħ/(2τ_φ) in meV at each energy (:func:`simsurface.analysis.dephasing.dephasing_energy_meV`).
    units_per_probe : int
        Slices (plain chain) or cells (mode tube) per probe.

    Returns
    -------
    ndarray, shape (K, M + 2, M + 2)
        T[k, l] from terminal l into terminal k; 0 the left lead, 1 … M the probes from left to right,
        M + 1 the right lead; zero diagonal. The chain's ``decoupled_channels`` are included in T[M+1, 0]
        and T[0, M+1].
    """
    e, eta = _points(energies_meV, dephasing_meV)
    layout = probe_layout(chain, units_per_probe)
    n_term = layout.n_probes + 2
    per_point = 16 * chain.size**2 * (12 * chain.n_slices + 2 * n_term) + 8 * n_term**2
    group = max(1, int(MEMORY_BYTES // per_point))
    parts = [terminal_transmissions(chain_blocks(chain, e[i:i + group], eta[i:i + group], layout), layout,
                                    eta[i:i + group])
             for i in range(0, e.size, group)]
    return np.concatenate(parts) if parts else np.zeros((0, n_term, n_term))


def floating_probe_transmission(terminal_T: ArrayLike) -> np.ndarray:
    """Two-terminal transmission left → right with every probe floating (zero net current at each energy).

    Parameters
    ----------
    terminal_T : array_like, shape (..., M + 2, M + 2)
        T[k, l] from l into k, terminals ordered left lead, probes, right lead (diagonal ignored).

    Returns
    -------
    ndarray, shape (...)
        T_RL + T_RP (S − T_PP)⁻¹ T_PL with S_k = Σ_{q≠k} T_kq. Points whose probes carry no current at
        all (η = 0) give T_RL.
    """
    t = np.array(terminal_T, float)
    n_term = t.shape[-1]
    idx = np.arange(n_term)
    t[..., idx, idx] = 0.0
    direct = t[..., -1, 0]
    if n_term == 2:
        return direct
    probe = slice(1, n_term - 1)
    absorbed = t[..., probe, :].sum(axis=-1)                               # S_k, shape (..., M)
    a = -t[..., probe, probe]
    m = n_term - 2
    a[..., np.arange(m), np.arange(m)] = absorbed
    # a probe that exchanges no current (η = 0) keeps μ = 0 and drops out
    idle = absorbed <= 0
    a[..., np.arange(m), np.arange(m)] += idle
    mu = np.linalg.solve(a, t[..., probe, 0][..., None])[..., 0]
    return direct + np.einsum("...k,...k->...", t[..., -1, probe], mu)


def dephased_transmission(chain: SliceChain, energies_meV: ArrayLike, dephasing_meV: ArrayLike,
                          units_per_probe: int = 1) -> np.ndarray:
    """Σ_n T_n left → right of the dephased wire; shape (K,), the chain's decoupled channels subtracted.

    See :func:`terminal_matrix` for the arguments; η = 0 gives the coherent transmission.
    """
    t = floating_probe_transmission(terminal_matrix(chain, energies_meV, dephasing_meV, units_per_probe))
    return t - chain.decoupled_channels


def dephased_conductance(chain: SliceChain, energies_meV: ArrayLike, dephasing_meV: ArrayLike,
                         units_per_probe: int = 1) -> np.ndarray:
    """Two-terminal conductance in e²/h of the dephased wire (transmission times the chain's degeneracy)."""
    return chain.degeneracy * dephased_transmission(chain, energies_meV, dephasing_meV, units_per_probe)
