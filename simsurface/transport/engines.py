"""One interface to the transport engines."""

from __future__ import annotations

from typing import Callable

import numpy as np
from numpy.typing import ArrayLike

from ..errors import InputError
from . import kwant_engine, slices
from .chain import SliceChain

#: engine name -> transmission(chain, energies_meV)
ENGINES: dict[str, Callable[[SliceChain, ArrayLike], np.ndarray]] = {
    "slices": slices.transmission,
    "kwant": kwant_engine.transmission,
}


def transmission(chain: SliceChain, energies_meV: ArrayLike, engine: str = "slices") -> np.ndarray:
    """Landauer transmission Σ_n T_n from the left to the right lead.

    Parameters
    ----------
    chain : SliceChain
        The system, as described by a model.
    energies_meV : array_like
        Energies in meV (same zero as the model's Hamiltonian).
    engine : {"slices", "kwant"}
        Solver; both must agree to 1e-8.

    Notes
    -----
    An energy-dependent chain (H ψ = E P ψ, :attr:`SliceChain.energy_dependent`) is solved energy by
    energy as the plain chain :meth:`SliceChain.at_energy`; E P − H is Hermitian at real E, so the
    flux-normalized transmission stays valid. The chain's ``decoupled_channels`` (perfectly transmitted,
    unphysical) are subtracted from the result.
    """
    try:
        solve = ENGINES[engine]
    except KeyError:
        raise InputError(f"engine: {engine!r} is not allowed; use one of {', '.join(ENGINES)}") from None
    if not chain.energy_dependent:
        return solve(chain, energies_meV) - chain.decoupled_channels
    energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
    out = np.empty(energies.shape)
    for i, e in np.ndenumerate(energies):
        out[i] = solve(chain.at_energy(e), [e])[0]
    return out - chain.decoupled_channels


def conductance(chain: SliceChain, energies_meV: ArrayLike, engine: str = "slices") -> np.ndarray:
    """Two-terminal conductance in units of e²/h (transmission times the chain's degeneracy)."""
    return chain.degeneracy * transmission(chain, energies_meV, engine)
