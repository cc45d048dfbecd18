"""Description of a quasi-one-dimensional system as a chain of slices.

Slices j = 0 … N−1 form the scattering region; the left lead occupies slices j ≤ −1 and the right lead
j ≥ N, both translation invariant. Every slice has the same number ``size`` of orbitals. Matrix elements
are in meV. All slices share one sparsity pattern for their on-site blocks and one for the couplings,
so a model fills values with vectorized numpy and an engine densifies a slice in one indexing step.

Conventions
-----------
``coupling_values[j]`` holds the block H_{j−1, j} = ⟨slice j−1| H |slice j⟩ for j = 0 … N: entry 0 couples
the last left-lead cell to slice 0, entry N couples slice N−1 to the first right-lead cell.
A lead's ``hopping`` is H_{j, j+1} inside the lead (direction +x for both leads).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np


@dataclass(frozen=True, eq=False)
class Lead:
    """A translation-invariant lead: cell Hamiltonian and the hopping to the next cell along +x.

    Attributes
    ----------
    onsite : ndarray, shape (n, n), complex
        Cell Hamiltonian in meV (Hermitian).
    hopping : ndarray, shape (n, n), complex
        H_{j, j+1} in meV.
    transverse_basis : ndarray, shape (n, n), complex, optional
        A unitary U, declared by the model, such that U† onsite U and U† hopping U are block diagonal
        with consecutive blocks of ``block_size`` (e.g. transverse Fourier modes of a rotationally
        symmetric tube). Engines may then solve the lead block by block; they check the declaration.
    block_size : int, optional
        Size of the diagonal blocks in ``transverse_basis``.
    """

    onsite: np.ndarray
    hopping: np.ndarray
    transverse_basis: np.ndarray | None = None
    block_size: int | None = None

    def __post_init__(self) -> None:
        n = self.onsite.shape[0]
        if self.onsite.shape != (n, n) or self.hopping.shape != (n, n):
            raise ValueError("lead onsite and hopping must be square and of equal size")
        if self.transverse_basis is not None:
            b = self.block_size
            if self.transverse_basis.shape != (n, n) or not b or n % b:
                raise ValueError("transverse_basis must be n x n and block_size must divide n")


@dataclass(frozen=True, eq=False)
class SliceChain:
    """A scattering region of N slices between two leads.

    Attributes
    ----------
    size : int
        Orbitals per slice, n.
    onsite_rows, onsite_cols : ndarray of int, shape (nnz_o,)
        Sparsity pattern of the slice Hamiltonians H_j (both triangles listed).
    onsite_values : ndarray, shape (N, nnz_o), complex
        Values of H_j in meV.
    coupling_rows, coupling_cols : ndarray of int, shape (nnz_c,)
        Sparsity pattern of the couplings H_{j−1, j}.
    coupling_values : ndarray, shape (N + 1, nnz_c), complex
        Values in meV; see the module conventions.
    left, right : Lead
    degeneracy : int
        Factor applied to the transmission to give the conductance in e²/h (2 for spin-degenerate models
        described by one spin species).
    info : dict
        Model description for provenance (lattice spacing, etc.); not used by the engines.
    """

    size: int
    onsite_rows: np.ndarray
    onsite_cols: np.ndarray
    onsite_values: np.ndarray
    coupling_rows: np.ndarray
    coupling_cols: np.ndarray
    coupling_values: np.ndarray
    left: Lead
    right: Lead
    degeneracy: int = 1
    info: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        n_slices = self.onsite_values.shape[0]
        if n_slices < 1:
            raise ValueError("a chain needs at least one slice")
        if self.coupling_values.shape[0] != n_slices + 1:
            raise ValueError("coupling_values must have N + 1 rows for N slices")
        if self.onsite_values.shape[1] != self.onsite_rows.size or self.coupling_values.shape[1] != self.coupling_rows.size:
            raise ValueError("values do not match their sparsity pattern")

    @property
    def n_slices(self) -> int:
        return int(self.onsite_values.shape[0])

    def slice_hamiltonian(self, j: int) -> np.ndarray:
        """Dense H_j, shape (n, n), meV."""
        h = np.zeros((self.size, self.size), dtype=complex)
        np.add.at(h, (self.onsite_rows, self.onsite_cols), self.onsite_values[j])
        return h

    def coupling(self, j: int) -> np.ndarray:
        """Dense H_{j−1, j}, shape (n, n), meV (j = 0 … N)."""
        c = np.zeros((self.size, self.size), dtype=complex)
        np.add.at(c, (self.coupling_rows, self.coupling_cols), self.coupling_values[j])
        return c
