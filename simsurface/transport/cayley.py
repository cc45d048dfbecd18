"""Batched transmission of first-order (Cayley) chains: A_b ψ_b + A_b† ψ_{b−1} = 0 on every bond b.

Some discretizations are first order along the wire: the tangent (Crank–Nicolson) discretization of a
Dirac equation −iħv σ_x ∂_x ψ = (E − h(x)) ψ reads, on the bond b between slices b − 1 and b,

    A_b ψ_b + A_b† ψ_{b−1} = 0,      A_b = (E − h_b)/4 + i (ħv / 2a) σ_x,

so that ψ_b = −A_b⁻¹ A_b† ψ_{b−1}, a Cayley transform that conserves the current ψ† J ψ (J = σ_x per
mode). The second-order chain of the same equations (:mod:`simsurface.models.modes`) carries in addition
the staggered solutions ψ_b = (−1)^b φ, decoupled channels that the first-order form does not have: its
solution space has n dimensions instead of 2n, and a step costs about half as much.

Method. Slices 0 … B are joined by the wire's bonds 1 … B; left of slice 0 and right of slice B the bonds
are the leads' (constant A_L, A_R). The outgoing solutions of the right lead — per 2 × 2 block one Bloch
mode ψ_b = λ^b φ of −A_R⁻¹A_R† that decays (|λ| < 1) or moves to +x (unit current φ†Jφ = 1) — form an
n/2-dimensional space, carried to slice 0 as a basis X (n × n/2) by ψ_{b−1} = −A_b^{−†} A_b ψ_b (one
stacked solve per bond for all points: with A_b − A_b† = D the same sparse matrix on every bond, e.g. the
derivative term, A_b^{−†} A_b X = X + A_b^{−†}(D X) needs no dense product) together with the map C from basis
coordinates to the outgoing amplitudes. Leftward steps amplify the right-decaying modes, so X is
re-orthonormalized (X = QR: X ← Q, C ← C R⁻¹) whenever its largest element exceeds
:data:`GROWTH_LIMIT`. At slice 0, X c = Φ_in + Φ_out r (incoming unit-current modes of the left lead and
its left-moving or left-decaying ones) gives c, and T = ‖C c‖²_F.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from .slice_ops import summed_pattern

__all__ = ["CayleyStack", "GROWTH_LIMIT", "cayley_transmission"]

#: largest element of the transported basis before it is re-orthonormalized
GROWTH_LIMIT = 1e4
#: |λ| within this of 1 counts as propagating
_UNIT_CIRCLE_TOL = 1e-7
#: working memory of the points solved together (≈ 6 n × n complex matrices per point)
GROUP_BYTES = 2**26


@dataclass(frozen=True, eq=False)
class CayleyStack:
    """P first-order chains of one structure (same n, same number of bonds, same patterns).

    Attributes
    ----------
    size : int
        Orbitals per slice, n (even; the leads are block diagonal in consecutive 2 × 2 blocks).
    energies_meV : ndarray, shape (P,)
        Energy of every point (provenance; the energies are inside the bond operators).
    current : ndarray, shape (n, n)
        Hermitian J whose form ψ† J ψ is the conserved current (common positive factor dropped).
    shared_rows, shared_cols : ndarray of int, shape (nnz_s,)
    shared_values : ndarray, shape (B, nnz_s), complex
        Part of the wire's bond operators A_1 … A_B common to all points.
    rows, cols : ndarray of int, shape (nnz_d,)
    values : ndarray, shape (P, B, nnz_d) or (P, 1, nnz_d), complex
        The part of every point (duplicates with the shared part are summed).
    left_bond, right_bond : ndarray, shape (P, n, n), complex
        A of the left and right leads (block diagonal in 2 × 2 blocks).
    antihermitian : ndarray, shape (n, n), optional
        A_b − A_b†, when it is the same on every bond and point (the derivative term, 2i(ħv/2a)σ_x for
        the tangent discretization); a step then needs no product with A_b (see :func:`cayley_transmission`).
    degeneracy : int
        Conductance per unit transmission, e²/h.
    """

    size: int
    energies_meV: np.ndarray
    current: np.ndarray
    shared_rows: np.ndarray
    shared_cols: np.ndarray
    shared_values: np.ndarray
    rows: np.ndarray
    cols: np.ndarray
    values: np.ndarray
    left_bond: np.ndarray
    right_bond: np.ndarray
    antihermitian: np.ndarray | None = None
    degeneracy: int = 1

    def __post_init__(self) -> None:
        p, b, n = self.n_points, self.n_bonds, self.size
        if n % 2 or self.current.shape != (n, n):
            raise ValueError("a Cayley stack needs an even size and an n x n current")
        if self.values.shape[:2] not in ((p, b), (p, 1)) or self.values.shape[-1] != self.rows.size:
            raise ValueError("values must have shape (P, B, nnz) or (P, 1, nnz) on their pattern")
        if self.shared_values.shape[-1] != self.shared_rows.size:
            raise ValueError("shared values do not match their pattern")
        if self.left_bond.shape != (p, n, n) or self.right_bond.shape != (p, n, n):
            raise ValueError("lead bonds must have shape (P, n, n)")

    @property
    def n_points(self) -> int:
        return int(np.asarray(self.energies_meV).size)

    @property
    def n_bonds(self) -> int:
        return int(self.shared_values.shape[0])


def cayley_transmission(stack: CayleyStack) -> np.ndarray:
    """Transmission left → right of every point of ``stack``; shape (P,)."""
    n, p = stack.size, stack.n_points
    group = max(1, int(GROUP_BYTES // (6 * 16 * n * n)))
    return np.concatenate([_solve(stack, np.arange(i, min(p, i + group))) for i in range(0, p, group)])


def lead_modes(bond: np.ndarray, current: np.ndarray):
    """Bloch modes of the leads −A⁻¹A† block by block, for a stack of lead bonds.

    Parameters
    ----------
    bond : ndarray, shape (P, n, n)
        A of the lead, block diagonal in 2 × 2 blocks (checked).
    current : ndarray, shape (n, n)

    Returns
    -------
    right, left : ndarray, shape (P, n, n/2)
        Per block the mode that decays or moves towards +x (right) and the one towards −x (left);
        propagating modes have unit current |φ† J φ| = 1, evanescent ones unit norm.
    right_moving, left_moving : ndarray of bool, shape (P, n/2)
        Which columns propagate.
    """
    p, n, _ = bond.shape
    m = n // 2
    blk = np.arange(m)
    a = bond.reshape(p, m, 2, m, 2)
    off = np.abs(a).max(axis=(2, 4))
    off[:, blk, blk] = 0
    if off.max(initial=0) > 1e-12 * np.abs(bond).max(initial=1e-300):
        raise ValueError("lead bonds must be block diagonal in 2 x 2 blocks")
    ab = a[:, blk, :, blk, :].transpose(1, 0, 2, 3)                    # (P, m, 2, 2)
    jb = current.reshape(m, 2, m, 2)[blk, :, blk, :]                   # (m, 2, 2)
    step = -np.linalg.solve(ab, np.conj(np.swapaxes(ab, -1, -2)))     # ψ_b = step ψ_{b−1}
    lam, vec = np.linalg.eig(step)                                     # (P, m, 2), (P, m, 2, 2)
    vec = vec / np.linalg.norm(vec, axis=-2, keepdims=True)
    flux = np.real(np.einsum("pmik,mij,pmjk->pmk", vec.conj(), jb, vec))
    mag = np.abs(lam)
    prop = np.abs(mag - 1) <= _UNIT_CIRCLE_TOL
    is_right = np.where(prop, flux > 0, mag < 1)
    if np.any(is_right.sum(axis=-1) != 1) or np.any(prop & (flux == 0)):
        raise ArithmeticError("lead mode sorting failed (energy at a band edge?)")
    vec = np.where(prop[:, :, None, :], vec / np.sqrt(np.abs(np.where(flux == 0, 1, flux)))[:, :, None, :], vec)
    k_right = np.argmax(is_right, axis=-1)                                # (P, m)
    k_left = 1 - k_right
    take = lambda k: np.take_along_axis(vec, k[:, :, None, None], axis=-1)[..., 0]   # (P, m, 2)
    moving = lambda k: np.take_along_axis(prop, k[:, :, None], axis=-1)[..., 0]
    right, left = np.zeros((p, m, 2, m), complex), np.zeros((p, m, 2, m), complex)
    right[:, blk, :, blk] = take(k_right).transpose(1, 0, 2)
    left[:, blk, :, blk] = take(k_left).transpose(1, 0, 2)
    return right.reshape(p, n, m), left.reshape(p, n, m), moving(k_right), moving(k_left)


def _solve(stack: CayleyStack, points: np.ndarray) -> np.ndarray:
    n, m, n_b, size_p = stack.size, stack.size // 2, stack.n_bonds, points.size
    right, _, right_moving, _ = lead_modes(stack.right_bond[points], stack.current)
    left_in, left_out, left_in_moving, _ = lead_modes(stack.left_bond[points], stack.current)
    p_max = int(max(right_moving.sum(axis=1).max(initial=0), left_in_moving.sum(axis=1).max(initial=0)))
    if p_max == 0:
        return np.zeros(size_p)
    c_map = np.zeros((size_p, p_max, m), complex)          # outgoing amplitudes of the right lead
    source = np.zeros((size_p, n, p_max), complex)           # incoming unit-current modes of the left lead
    for k in range(size_p):
        out_cols, in_cols = np.flatnonzero(right_moving[k]), np.flatnonzero(left_in_moving[k])
        if out_cols.size and in_cols.size:
            c_map[k, np.arange(out_cols.size), out_cols] = 1.0
            source[k, :, :in_cols.size] = left_in[k][:, in_cols]
    basis = right
    bonds = _Bonds(stack, points)
    skew = None if stack.antihermitian is None else sp.csr_matrix(stack.antihermitian)
    for b in range(n_b - 1, -1, -1):              # bond b + 1 joins slices b and b + 1
        a_adj = np.conj(np.swapaxes(bonds.dense(b), -1, -2))
        if skew is None:
            basis = np.linalg.solve(a_adj, np.conj(np.swapaxes(a_adj, -1, -2)) @ basis)   # sign dropped: |t|²
        else:
            # A = A† + D with a constant sparse D:  A^{−†} A X = X + A^{−†} (D X), no dense product
            basis = basis + np.linalg.solve(a_adj, _sparse_apply(skew, basis))
        if np.abs(basis.view(np.float64)).max() > GROWTH_LIMIT:
            basis, r = np.linalg.qr(basis)
            # C ← C R⁻¹, as (R⁻ᵀ Cᵀ)ᵀ
            c_map = np.swapaxes(np.linalg.solve(np.swapaxes(r, -1, -2), np.swapaxes(c_map, -1, -2)), -1, -2)
    match = np.concatenate([basis, -left_out], axis=2)                           # X c − Φ_out r = Φ_in
    coeff = np.linalg.solve(match, source)[:, :m]
    t = c_map @ coeff
    return np.sum(np.abs(t) ** 2, axis=(1, 2))


def _sparse_apply(matrix, x: np.ndarray) -> np.ndarray:
    """matrix @ x[p] for every p; ``matrix`` sparse (n, n), ``x`` of shape (P, n, k)."""
    p, n, k = x.shape
    y = matrix @ np.ascontiguousarray(x.transpose(1, 0, 2)).reshape(n, p * k)
    return np.ascontiguousarray(y.reshape(n, p, k).transpose(1, 0, 2))


class _Bonds:
    """Dense bond operators A_b of the stack's points, densified in chunks from the right end."""

    _CHUNK = 32

    def __init__(self, stack: CayleyStack, points: np.ndarray) -> None:
        self.stack, self.points, self.n = stack, points, stack.size
        self.rc, self.vals = summed_pattern(stack.rows, stack.cols, stack.values[points], self.n)
        self.cached, self.first = None, -1

    def dense(self, b: int) -> np.ndarray:
        """A_{b+1} of every point (the wire's bond b + 1 of 1 … B), shape (P, n, n)."""
        s = self.stack
        if self.cached is None or not self.first <= b < self.first + self.cached.shape[0]:
            self.first = max(0, b - self._CHUNK + 1)
            (rows, cols), data = summed_pattern(s.shared_rows, s.shared_cols, s.shared_values[self.first:b + 1], self.n)
            self.cached = np.zeros((b + 1 - self.first, self.n, self.n), complex)
            self.cached[:, rows, cols] = data
        out = np.repeat(self.cached[b - self.first][None], self.points.size, axis=0)
        rows, cols = self.rc
        out[:, rows, cols] += self.vals[:, b if self.vals.shape[1] > 1 else 0]
        return out


