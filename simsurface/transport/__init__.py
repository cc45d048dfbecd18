"""Landauer transport for systems described as a chain of slices.

A model *describes* a quasi-one-dimensional system as a :class:`~simsurface.transport.chain.SliceChain`
(slice Hamiltonians, couplings between slices, two semi-infinite leads, all in meV). An *engine* solves
it: the slice engine (:mod:`simsurface.transport.slices`) or kwant's scattering solver
(:mod:`simsurface.transport.kwant_engine`), both reached through :func:`transmission`.
"""

from .chain import Lead, SliceChain
from .engines import ENGINES, conductance, transmission

__all__ = ["Lead", "SliceChain", "ENGINES", "transmission", "conductance"]
