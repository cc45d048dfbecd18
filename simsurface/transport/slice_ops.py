"""Sparse operators of a :class:`SliceChain`, prepared once per chain for the slice engine.

All slices share one sparsity pattern, so the compressed-row (CSR) index arrays are built once and the
values of every slice are gathered with one sparse product over all slices (no Python call per site).
The couplings H_{j−1, j} are split into independent square blocks when their pattern allows it (for a
surface lattice: one 2 × 2 or 1 × 1 block per site, because the axial hopping connects a site only to
the same site of the next slice); then c⁻† is a block-sparse matrix obtained by batched inversion, and a
coupling whose blocks are all well conditioned can be crossed with a transfer step.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .chain import SliceChain

try:  # the CSR kernel behind ``csr_matrix @ dense``, called directly to skip per-call object creation
    from scipy.sparse._sparsetools import csr_matvecs as _csr_matvecs
except ImportError:  # pragma: no cover - other scipy layouts
    _csr_matvecs = None

#: largest coupling block that is inverted for transfer steps
MAX_TRANSFER_BLOCK = 8
#: a coupling block with a larger condition number is crossed with a Green's-function step instead
MAX_TRANSFER_CONDITION = 1e3


@dataclass(frozen=True, eq=False)
class CSRFamily:
    """Matrices sharing one CSR pattern: ``data[j]`` are the values of matrix j."""

    shape: tuple[int, int]
    indptr: np.ndarray
    indices: np.ndarray
    data: np.ndarray  # (n_matrices, nnz)
    rows: np.ndarray  # row of every stored entry, for densifying
    cols: np.ndarray

    def matmul(self, j: int, x: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
        """M_j @ x for a C-contiguous complex 2-D ``x`` (into the C-contiguous ``out`` if given)."""
        return self.matmul_data(self.data[j], x, out)

    def matmul_data(self, data: np.ndarray, x: np.ndarray, out: np.ndarray | None = None,
                    accumulate: bool = False) -> np.ndarray:
        """M @ x (``out += M @ x`` when ``accumulate``) for the matrix with this pattern and ``data``."""
        if _csr_matvecs is None:
            res = sp.csr_matrix((data, self.indices, self.indptr), shape=self.shape) @ x
            if out is None:
                return res
            if accumulate:
                out += res
            else:
                out[...] = res
            return out
        if out is None:
            out = np.zeros((self.shape[0], x.shape[1]), dtype=complex)
        elif not accumulate:
            out.fill(0)  # the kernel accumulates
        _csr_matvecs(self.shape[0], self.shape[1], x.shape[1], self.indptr, self.indices, data,
                     x.reshape(-1), out.reshape(-1))
        return out

    def dense(self, j: int) -> np.ndarray:
        out = np.zeros(self.shape, dtype=self.data.dtype)
        out[self.rows, self.cols] = self.data[j]
        return out


def csr_family(rows: np.ndarray, cols: np.ndarray, values: np.ndarray, n: int,
               n_cols: int | None = None) -> CSRFamily:
    """Sum duplicate pattern entries and sort them into CSR order, for all matrices at once.

    Parameters
    ----------
    rows, cols : ndarray of int, shape (nnz,)
    values : ndarray, shape (n_matrices, nnz)
    n : int
        Number of rows.
    n_cols : int, optional
        Number of columns (default n).
    """
    n_cols = n if n_cols is None else n_cols
    pattern = _csr_pattern(np.asarray(rows, np.int64).tobytes(), np.asarray(cols, np.int64).tobytes(), n, n_cols)
    order, first, indptr, indices, u_rows, u_cols = pattern
    values = np.take(np.asarray(values, dtype=complex), order, axis=1)  # np.take: faster than [:, order]
    data = values if first is None else np.add.reduceat(values, first, axis=1)
    return CSRFamily((n, n_cols), indptr, indices, np.ascontiguousarray(data), u_rows, u_cols)


def summed_pattern(rows: np.ndarray, cols: np.ndarray, values: np.ndarray, n: int):
    """A pattern with its duplicate entries summed: ((rows, cols), values), values keep their leading axes.

    Parameters
    ----------
    rows, cols : ndarray of int, shape (nnz,)
    values : ndarray, shape (..., nnz)
    n : int
        Matrix size.
    """
    if rows.size == 0:
        return (rows, cols), values
    fam = csr_family(rows, cols, values.reshape(-1, values.shape[-1]), n)
    return (fam.rows, fam.cols), fam.data.reshape(values.shape[:-1] + (-1,))


@functools.lru_cache(maxsize=64)
def _csr_pattern(rows_bytes: bytes, cols_bytes: bytes, n: int, n_cols: int):
    """CSR order of a pattern (cached: every piece of a chain, and every chain of a model, shares it)."""
    key = np.frombuffer(rows_bytes, np.int64) * n_cols + np.frombuffer(cols_bytes, np.int64)
    order = np.argsort(key, kind="stable")
    key_sorted = key[order]
    first = np.flatnonzero(np.r_[True, key_sorted[1:] != key_sorted[:-1]])
    unique = key_sorted[first]
    u_rows, u_cols = unique // n_cols, unique % n_cols
    indptr = np.concatenate([[0], np.cumsum(np.bincount(u_rows, minlength=n))]).astype(np.int32)
    return order, (None if first.size == key.size else first), indptr, u_cols.astype(np.int32), u_rows, u_cols


@dataclass(frozen=True, eq=False)
class ChainOperators:
    """Slice Hamiltonians, couplings and inverse-adjoint couplings of a chain as CSR families.

    Attributes
    ----------
    onsite : CSRFamily, N matrices H_j
    coupling : CSRFamily, N + 1 matrices c_j = H_{j−1, j}
    coupling_inv_adj : CSRFamily or None
        c_j⁻† (zero for couplings that cannot be crossed by a transfer step).
    transfer_ok : ndarray of bool, shape (N + 1,)
        Whether every block of c_j is either invertible with condition number below
        ``MAX_TRANSFER_CONDITION`` or exactly zero (a vacancy), so that a transfer step can cross it.
    zero_blocks : ndarray of bool, shape (N + 1, nb), or None
        Which coupling blocks are exactly zero; ``block_rows``, ``block_cols`` (nb, b) their orbitals.
    step : CSRFamily
        N matrices −[H_j, c_{j+1}] of shape (n, 2n), so that
        E ψ_j + step_j @ [ψ_j; ψ_{j+1}] = (E − H_j) ψ_j − c_{j+1} ψ_{j+1}.
    """

    onsite: CSRFamily
    coupling: CSRFamily
    coupling_inv_adj: CSRFamily | None
    transfer_ok: np.ndarray
    step: CSRFamily
    zero_blocks: np.ndarray | None = None
    block_rows: np.ndarray | None = None
    block_cols: np.ndarray | None = None

    def vacant(self, j: int) -> tuple[np.ndarray, np.ndarray] | None:
        """Orbitals (of slice j − 1, of slice j) joined by zero blocks of c_j, or None if there are none."""
        if self.zero_blocks is None or not self.zero_blocks[j].any():
            return None
        k = self.zero_blocks[j]
        return self.block_rows[k].ravel(), self.block_cols[k].ravel()

    def residual(self, j: int, energy: float, state: np.ndarray, out: np.ndarray) -> np.ndarray:
        """(E − H_j) ψ_j − c_{j+1} ψ_{j+1} into ``out`` for ``state`` = [ψ_j; ψ_{j+1}], shape (2n, m)."""
        np.multiply(state[:out.shape[0]], energy, out=out)   # the kernel accumulates onto E ψ_j
        return self.step.matmul_data(self.step.data[j], state, out, accumulate=True)


def chain_operators(chain: SliceChain, first: int = 0, stop: int | None = None) -> ChainOperators:
    """Prepare the sparse operators of slices ``first … stop − 1`` (vectorized over slices).

    Index j of the result refers to slice ``first + j`` and to the coupling ``c_{first + j}``
    (couplings ``first … stop`` are included). Preparing a long chain in pieces keeps the working
    memory independent of its length.
    """
    stop = chain.n_slices if stop is None else stop
    n = chain.size
    onsite = csr_family(chain.onsite_rows, chain.onsite_cols, chain.onsite_values[first:stop], n)
    coupling = csr_family(chain.coupling_rows, chain.coupling_cols, chain.coupling_values[first:stop + 1], n)
    n_sl = stop - first
    ok = np.zeros(n_sl + 1, dtype=bool)
    inv_adj, zero, block_rows, block_cols = _inverse_adjoint_blocks(coupling, ok)
    rows = np.concatenate([onsite.rows, coupling.rows])
    cols = np.concatenate([onsite.cols, n + coupling.cols])
    step = csr_family(rows, cols, -np.hstack([onsite.data, coupling.data[1:]]), n, 2 * n)
    return ChainOperators(onsite, coupling, inv_adj, ok, step, zero, block_rows, block_cols)


def _inverse_adjoint_blocks(c: CSRFamily, ok: np.ndarray):
    """c_j⁻† block by block (zero on zero blocks); fills ``ok`` with the couplings a transfer step can
    cross. Returns (c⁻† family, zero blocks (N + 1, nb), block rows, block cols) or Nones."""
    n = c.shape[0]
    blocks = _block_pattern(c.indptr.tobytes(), c.indices.tobytes(), n)
    if blocks is None:
        return None, None, None, None  # not square blocks of one small size: Green's-function steps only
    b, nb, gather, scatter, rr, cc = blocks
    n_mat = c.data.shape[0]
    if gather is not None:   # every block fully stored: a permutation of the CSR values
        dense = np.take(c.data, gather, axis=1).reshape(n_mat, nb, b, b)
    else:
        dense = np.zeros((n_mat, nb * b * b), complex)
        dense[:, scatter] = c.data
        dense = dense.reshape(n_mat, nb, b, b)
    # condition number in the Frobenius norm, ‖B‖ ‖B⁻¹‖ (an upper bound of the 2-norm one);
    # exactly or nearly singular blocks (vacancies, r = 1) are refused
    norm = np.sqrt(np.sum(np.abs(dense) ** 2, axis=(-2, -1)))
    if b <= 2:
        # closed forms: 1 × 1, and for 2 × 2 B⁻¹ = adj(B)/det with ‖adj B‖ = ‖B‖, so that
        # (B⁻¹)†[a, b] = ± conj(B[1 − a, 1 − b]) / conj(det)
        det = dense[..., 0, 0] if b == 1 else (dense[..., 0, 0] * dense[..., 1, 1]
                                               - dense[..., 0, 1] * dense[..., 1, 0])
        with np.errstate(divide="ignore", invalid="ignore"):
            cond = np.where(det != 0, norm**b / np.abs(det), np.inf)
        regular = cond < MAX_TRANSFER_CONDITION
        safe = np.conj(np.where(det != 0, det, 1.0))[..., None, None]
        if b == 1:
            inv_adj = 1.0 / np.conj(np.where(dense != 0, dense, 1.0))
        else:
            inv_adj = np.conj(dense[..., ::-1, ::-1]) * np.array([[1, -1], [-1, 1]]) / safe
    else:
        det = np.abs(np.linalg.det(dense))
        regular = det > (norm / MAX_TRANSFER_CONDITION) ** b
        inv = np.zeros_like(dense)
        inv[regular] = np.linalg.inv(dense[regular])
        regular &= norm * np.sqrt(np.sum(np.abs(inv) ** 2, axis=(-2, -1))) < MAX_TRANSFER_CONDITION
        inv_adj = np.conj(np.swapaxes(inv, -1, -2))   # (B⁻¹)†
    zero = norm == 0
    ok[:] = np.all(regular | zero, axis=1)
    inv_adj = np.where((ok[:, None] & regular)[:, :, None, None], inv_adj, 0)
    # c⁻† has the block (B_k⁻¹)† at rows = the block's rows, cols = the block's cols
    block_rows, block_cols = rr.reshape(nb, b, b)[:, :, 0], cc.reshape(nb, b, b)[:, 0, :]
    return csr_family(rr, cc, inv_adj.reshape(n_mat, -1), n), zero, block_rows, block_cols


@functools.lru_cache(maxsize=32)
def _block_pattern(indptr_bytes: bytes, indices_bytes: bytes, n: int):
    """Split a coupling pattern into independent square blocks of one size (cached per pattern).

    Returns None when that is impossible, else (b, nb, gather, scatter, rr, cc): block size and count;
    ``gather`` (CSR entry of every block element, when all blocks are full) or ``scatter`` (block
    element of every CSR entry); rows and cols of the block elements.
    """
    indptr = np.frombuffer(indptr_bytes, np.int32)
    cols = np.frombuffer(indices_bytes, np.int32).astype(np.int64)
    rows = np.repeat(np.arange(n), np.diff(indptr))
    graph = sp.csr_matrix((np.ones(rows.size), (rows, n + cols)), shape=(2 * n, 2 * n))
    n_comp, label = connected_components(graph, directed=False)
    row_label, col_label = label[:n], label[n:]
    row_count = np.bincount(row_label, minlength=n_comp)
    col_count = np.bincount(col_label, minlength=n_comp)
    sizes = set(row_count[row_count > 0]) | set(col_count[col_count > 0])
    if np.any(row_count != col_count) or len(sizes) != 1 or max(sizes) > MAX_TRANSFER_BLOCK:
        return None
    b = int(sizes.pop())
    blocks_used = np.flatnonzero(row_count)
    block_of = np.full(n_comp, -1)
    block_of[blocks_used] = np.arange(blocks_used.size)
    block_rows = np.argsort(row_label, kind="stable").reshape(-1, b)   # rows of block k, by label
    block_cols = np.argsort(col_label, kind="stable").reshape(-1, b)
    rank_row = np.empty(n, int); rank_row[block_rows] = np.arange(b)
    rank_col = np.empty(n, int); rank_col[block_cols] = np.arange(b)
    nb = block_rows.shape[0]
    scatter = (block_of[row_label[rows]] * b + rank_row[rows]) * b + rank_col[cols]
    gather = None
    if scatter.size == nb * b * b:
        gather = np.empty_like(scatter)
        gather[scatter] = np.arange(scatter.size)
    rr = np.broadcast_to(block_rows[:, :, None], (nb, b, b)).ravel()
    cc = np.broadcast_to(block_cols[:, None, :], (nb, b, b)).ravel()
    return b, nb, gather, scatter, rr, cc
