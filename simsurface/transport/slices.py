"""Slice engine: Landauer transmission of a :class:`SliceChain` by recursive Green's functions.

The left lead's self-energy is folded into slice 0, then slices are added one at a time::

    G^L_j = (E − H_j − H_{j,j−1} G^L_{j−1} H_{j−1,j})⁻¹,      G_{j,0} = G^L_j H_{j,j−1} G_{j−1,0}

with the right lead's self-energy added on the last slice. The transmission is
T = Tr[Γ_R G_{N−1,0} Γ_L G_{N−1,0}†] with Γ = i(Σ − Σ†) (Caroli formula; Datta, *Electronic Transport
in Mesoscopic Systems*, 1995). Cost: one dense n × n inversion per slice and energy.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg as la
from numpy.typing import ArrayLike

from .chain import SliceChain
from .leads import left_surface_green, right_surface_green


def transmission(chain: SliceChain, energies_meV: ArrayLike) -> np.ndarray:
    """Transmission left -> right at each energy; shape ``energies.shape``."""
    energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
    out = np.empty(energies.shape)
    onsite = [chain.slice_hamiltonian(j) for j in range(chain.n_slices)]
    couplings = [chain.coupling(j) for j in range(chain.n_slices + 1)]
    for i, e in np.ndenumerate(energies):
        out[i] = _transmission_at(chain, onsite, couplings, float(e))
    return out


def _transmission_at(chain: SliceChain, onsite, couplings, energy: float) -> float:
    n = chain.size
    eye = np.eye(n)
    c_left, c_right = couplings[0], couplings[-1]
    sigma_l = c_left.conj().T @ left_surface_green(chain.left, energy) @ c_left
    sigma_r = c_right @ right_surface_green(chain.right, energy) @ c_right.conj().T
    gamma_l = 1j * (sigma_l - sigma_l.conj().T)
    gamma_r = 1j * (sigma_r - sigma_r.conj().T)

    last = chain.n_slices - 1
    a = energy * eye - onsite[0] - sigma_l
    if last == 0:
        a = a - sigma_r
    g_l = la.inv(a, overwrite_a=True, check_finite=False)
    g_j0 = g_l
    for j in range(1, chain.n_slices):
        c = couplings[j]  # H_{j−1, j}
        a = energy * eye - onsite[j] - c.conj().T @ g_l @ c
        if j == last:
            a = a - sigma_r
        g_l = la.inv(a, overwrite_a=True, check_finite=False)
        g_j0 = g_l @ (c.conj().T @ g_j0)
    t = np.trace(gamma_r @ g_j0 @ gamma_l @ g_j0.conj().T).real
    return float(t)
