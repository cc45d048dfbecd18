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
    """
    try:
        solve = ENGINES[engine]
    except KeyError:
        raise InputError(f"engine: {engine!r} is not allowed; use one of {', '.join(ENGINES)}") from None
    return solve(chain, energies_meV)


def conductance(chain: SliceChain, energies_meV: ArrayLike, engine: str = "slices") -> np.ndarray:
    """Two-terminal conductance in units of e²/h (transmission times the chain's degeneracy)."""
    return chain.degeneracy * transmission(chain, energies_meV, engine)
