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

Energy-dependent chains
-----------------------
A model may describe a generalized eigenproblem H ψ = E P ψ with a Hermitian, energy-independent overlap
P (e.g. a tangent discretization along the wire, :mod:`simsurface.models.modes`). It then stores P in
``onsite_overlap`` / ``coupling_overlap`` (same sparsity patterns as H) and in its leads. At a real energy
E the scattering problem is (E P − H) ψ = 0; :meth:`SliceChain.at_energy` writes E P − H as E − H_eff with

    H_eff = H − E (P − 1)  (slices and lead cells),      H_eff = H − E P  (couplings and lead hoppings),

a plain chain that any engine solves at that one energy. Because E P − H is Hermitian for real E, the
current of the plain chain at E is conserved and the flux-normalized (Caroli) transmission of E − H_eff
is the transmission of the generalized problem.
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
    onsite_overlap, hopping_overlap : ndarray, shape (n, n), optional
        Overlap P of the cell and between neighbouring cells (energy-dependent leads; both or none).
        They must be block diagonal in ``transverse_basis`` as well.
    """

    onsite: np.ndarray
    hopping: np.ndarray
    transverse_basis: np.ndarray | None = None
    block_size: int | None = None
    onsite_overlap: np.ndarray | None = None
    hopping_overlap: np.ndarray | None = None

    def __post_init__(self) -> None:
        n = self.onsite.shape[0]
        if self.onsite.shape != (n, n) or self.hopping.shape != (n, n):
            raise ValueError("lead onsite and hopping must be square and of equal size")
        if self.transverse_basis is not None:
            b = self.block_size
            if self.transverse_basis.shape != (n, n) or not b or n % b:
                raise ValueError("transverse_basis must be n x n and block_size must divide n")
        if (self.onsite_overlap is None) != (self.hopping_overlap is None):
            raise ValueError("give both onsite_overlap and hopping_overlap, or neither")
        if self.onsite_overlap is not None and (self.onsite_overlap.shape != (n, n)
                                                or self.hopping_overlap.shape != (n, n)):
            raise ValueError("lead overlaps must have the shape of onsite and hopping")

    @property
    def energy_dependent(self) -> bool:
        return self.onsite_overlap is not None

    def at_energy(self, energy_meV: float) -> "Lead":
        """The plain lead of E P − H at ``energy_meV`` (see the module notes); ``self`` if P is absent."""
        if not self.energy_dependent:
            return self
        e = float(energy_meV)
        n = self.onsite.shape[0]
        return Lead(self.onsite - e * (self.onsite_overlap - np.eye(n)), self.hopping - e * self.hopping_overlap,
                    self.transverse_basis, self.block_size)


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
    onsite_overlap : ndarray, shape (N, nnz_o), optional
        Overlap P_j of every slice in the onsite pattern (energy-dependent chain; with ``coupling_overlap``).
    coupling_overlap : ndarray, shape (N + 1, nnz_c), optional
        Overlap between neighbouring slices in the coupling pattern (same conventions as the couplings).
    decoupled_channels : int
        Channels per lead (in each direction) that the description carries besides the physical ones, at
        k a = π, belonging to exact solutions that are decoupled from all others and transmitted with
        probability one (the staggered solutions ψ_j = (−1)^j φ of a tangent discretization, see
        :mod:`simsurface.models.modes`). :func:`simsurface.transport.engines.transmission` subtracts them;
        the engine modules themselves return the transmission of the whole description.
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
    onsite_overlap: np.ndarray | None = None
    coupling_overlap: np.ndarray | None = None
    decoupled_channels: int = 0

    def __post_init__(self) -> None:
        n_slices = self.onsite_values.shape[0]
        if n_slices < 1:
            raise ValueError("a chain needs at least one slice")
        if self.coupling_values.shape[0] != n_slices + 1:
            raise ValueError("coupling_values must have N + 1 rows for N slices")
        if self.onsite_values.shape[1] != self.onsite_rows.size or self.coupling_values.shape[1] != self.coupling_rows.size:
            raise ValueError("values do not match their sparsity pattern")
        if (self.onsite_overlap is None) != (self.coupling_overlap is None):
            raise ValueError("give both onsite_overlap and coupling_overlap, or neither")
        if self.onsite_overlap is not None:
            if (self.onsite_overlap.shape != self.onsite_values.shape
                    or self.coupling_overlap.shape != self.coupling_values.shape):
                raise ValueError("overlaps must have the shapes of onsite_values and coupling_values")
            if not (self.left.energy_dependent and self.right.energy_dependent):
                raise ValueError("an energy-dependent chain needs leads with overlaps")

    @property
    def energy_dependent(self) -> bool:
        """True when the chain describes H ψ = E P ψ (solve it through :meth:`at_energy`)."""
        return self.onsite_overlap is not None

    def at_energy(self, energy_meV: float) -> "SliceChain":
        """The plain chain of E P − H at ``energy_meV``, written as E − H_eff (module notes).

        Returns ``self`` for a chain without overlap. The slice pattern gains the diagonal (appended,
        duplicates are summed by every consumer) unless every diagonal element is already stored once.
        Two leads that are one object stay one object.
        """
        if not self.energy_dependent:
            return self
        e = float(energy_meV)
        n = self.size
        rows, cols = self.onsite_rows, self.onsite_cols
        onsite = self.onsite_values - e * self.onsite_overlap
        diag = np.flatnonzero(rows == cols)
        if diag.size == n and np.array_equal(np.sort(rows[diag]), np.arange(n)):
            onsite[:, diag] += e
        else:
            rows = np.concatenate([rows, np.arange(n)])
            cols = np.concatenate([cols, np.arange(n)])
            onsite = np.concatenate([onsite, np.full((onsite.shape[0], n), e, dtype=onsite.dtype)], axis=1)
        left = self.left.at_energy(e)
        right = left if self.right is self.left else self.right.at_energy(e)
        return SliceChain(n, rows, cols, onsite, self.coupling_rows, self.coupling_cols,
                          self.coupling_values - e * self.coupling_overlap, left, right, self.degeneracy,
                          self.info, decoupled_channels=self.decoupled_channels)

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
