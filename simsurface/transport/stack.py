"""A stack of points — (energy, flux, …) — of one chain structure, for the batched engine.

All points of a stack share the number of orbitals per slice, the number of slices and one sparsity
pattern, and each point is a *plain* chain (no overlap: the scattering problem is (E − H) ψ = 0 at the
point's energy). Their matrices are stored as a part common to every point plus a part that differs:

    H_j(p) = S_j + D_j(p),        c_j(p) = T_j + W_j(p)        (meV)

with S, T the *shared* values (e.g. the disorder potential in the mode basis, identical for all flux
values and energies of one realization) and D, W the *varying* values of every point, on their own
(usually much smaller) patterns — e.g. the 2 × 2 blocks of the mode tube that carry flux and energy.
A model that knows this split builds a stack directly (one pass over the disorder per realization);
:func:`stack_chains` makes a stack of arbitrary chains with everything in the varying part.

Duplicated pattern entries (within one part, or between the shared and the varying part) are summed, as
in :class:`~simsurface.transport.chain.SliceChain`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np
from numpy.typing import ArrayLike

from .chain import Lead, SliceChain

__all__ = ["ChainStack", "stack_chains"]


@dataclass(frozen=True, eq=False)
class ChainStack:
    """P plain chains of one structure at their own energies.

    Attributes
    ----------
    size : int
        Orbitals per slice, n.
    energies_meV : ndarray, shape (P,)
        Energy of every point (meV).
    shared_onsite_rows, shared_onsite_cols : ndarray of int, shape (nnz_s,)
    shared_onsite_values : ndarray, shape (N, nnz_s), complex
        S_j, common to all points (meV).
    shared_coupling_rows, shared_coupling_cols : ndarray of int, shape (nnz_t,)
    shared_coupling_values : ndarray, shape (N + 1, nnz_t), complex
        T_j (the conventions of :class:`SliceChain`: entry j couples slice j − 1 to slice j).
    onsite_rows, onsite_cols : ndarray of int, shape (nnz_d,)
    onsite_values : ndarray, shape (P, N, nnz_d) or (P, 1, nnz_d), complex
        D_j(p); a middle axis of length 1 applies to every slice.
    coupling_rows, coupling_cols : ndarray of int, shape (nnz_w,)
    coupling_values : ndarray, shape (P, N + 1, nnz_w) or (P, 1, nnz_w), complex
        W_j(p).
    left, right : tuple of Lead, length P
        Plain leads of every point (the same object may repeat; it is then solved once per energy).
    degeneracy : int
        Conductance per unit transmission, e²/h.
    decoupled_channels : int
        Perfectly transmitted unphysical channels of every point (subtracted by
        :func:`simsurface.transport.batched.transmission_stack`).
    """

    size: int
    energies_meV: np.ndarray
    shared_onsite_rows: np.ndarray
    shared_onsite_cols: np.ndarray
    shared_onsite_values: np.ndarray
    shared_coupling_rows: np.ndarray
    shared_coupling_cols: np.ndarray
    shared_coupling_values: np.ndarray
    onsite_rows: np.ndarray
    onsite_cols: np.ndarray
    onsite_values: np.ndarray
    coupling_rows: np.ndarray
    coupling_cols: np.ndarray
    coupling_values: np.ndarray
    left: tuple[Lead, ...]
    right: tuple[Lead, ...]
    degeneracy: int = 1
    decoupled_channels: int = 0

    def __post_init__(self) -> None:
        p, n_sl = self.n_points, self.n_slices
        if n_sl < 1:
            raise ValueError("a stack needs at least one slice")
        if self.shared_coupling_values.shape[0] != n_sl + 1:
            raise ValueError("shared_coupling_values must have N + 1 rows for N slices")
        if self.onsite_values.shape[:2] not in ((p, n_sl), (p, 1)):
            raise ValueError("onsite_values must have shape (P, N, nnz) or (P, 1, nnz)")
        if self.coupling_values.shape[:2] not in ((p, n_sl + 1), (p, 1)):
            raise ValueError("coupling_values must have shape (P, N + 1, nnz) or (P, 1, nnz)")
        if len(self.left) != p or len(self.right) != p:
            raise ValueError("give one left and one right lead per point")
        for rows, vals in ((self.shared_onsite_rows, self.shared_onsite_values),
                           (self.shared_coupling_rows, self.shared_coupling_values),
                           (self.onsite_rows, self.onsite_values), (self.coupling_rows, self.coupling_values)):
            if vals.shape[-1] != rows.size:
                raise ValueError("values do not match their sparsity pattern")
        if any(lead.energy_dependent for lead in self.left + self.right):
            raise ValueError("the leads of a stack must be plain (use Lead.at_energy)")

    @property
    def n_points(self) -> int:
        return int(np.asarray(self.energies_meV).size)

    @property
    def n_slices(self) -> int:
        return int(self.shared_onsite_values.shape[0])

    def point_chain(self, i: int) -> SliceChain:
        """The plain :class:`SliceChain` of point i (shared and varying patterns concatenated).

        Its transmission at ``energies_meV[i]`` is what the stack describes; unbatched engines and kwant
        solve it for comparison.
        """
        d = self.onsite_values[i]
        w = self.coupling_values[i]
        d = np.broadcast_to(d, (self.n_slices, d.shape[-1]))
        w = np.broadcast_to(w, (self.n_slices + 1, w.shape[-1]))
        return SliceChain(self.size,
                          np.concatenate([self.shared_onsite_rows, self.onsite_rows]),
                          np.concatenate([self.shared_onsite_cols, self.onsite_cols]),
                          np.hstack([self.shared_onsite_values, d]),
                          np.concatenate([self.shared_coupling_rows, self.coupling_rows]),
                          np.concatenate([self.shared_coupling_cols, self.coupling_cols]),
                          np.hstack([self.shared_coupling_values, w]),
                          self.left[i], self.right[i], self.degeneracy,
                          decoupled_channels=self.decoupled_channels)


def stack_chains(chains: Sequence[SliceChain], energies_meV: ArrayLike) -> ChainStack:
    """Stack chains of one structure, chain i at ``energies_meV[i]``, all values in the varying part.

    Energy-dependent chains are taken at their energy (:meth:`SliceChain.at_energy`). The chains must
    have the same size, number of slices, sparsity patterns and ``decoupled_channels``.

    Parameters
    ----------
    chains : sequence of SliceChain, length P
    energies_meV : array_like, shape (P,)
    """
    energies = np.asarray(energies_meV, dtype=float).ravel()
    if len(chains) != energies.size or not len(chains):
        raise ValueError("give one energy per chain, and at least one chain")
    plain = [c.at_energy(e) for c, e in zip(chains, energies)]
    first = plain[0]
    for c in plain[1:]:
        if (c.size != first.size or c.n_slices != first.n_slices
                or c.decoupled_channels != first.decoupled_channels or c.degeneracy != first.degeneracy
                or not np.array_equal(c.onsite_rows, first.onsite_rows)
                or not np.array_equal(c.onsite_cols, first.onsite_cols)
                or not np.array_equal(c.coupling_rows, first.coupling_rows)
                or not np.array_equal(c.coupling_cols, first.coupling_cols)):
            raise ValueError("the chains of a stack must share size, length and sparsity patterns")
    empty = np.zeros(0, dtype=np.int64)
    return ChainStack(
        first.size, energies,
        empty, empty, np.zeros((first.n_slices, 0), complex),
        empty, empty, np.zeros((first.n_slices + 1, 0), complex),
        first.onsite_rows, first.onsite_cols, np.stack([c.onsite_values for c in plain]),
        first.coupling_rows, first.coupling_cols, np.stack([c.coupling_values for c in plain]),
        tuple(c.left for c in plain), tuple(c.right for c in plain),
        first.degeneracy, first.decoupled_channels)
