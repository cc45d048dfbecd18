"""Slice engine: Landauer transmission of a :class:`SliceChain` by stabilized transfer and Green's functions.

Method (see ``docs/engine.md``). The solutions of the Schrödinger equation that obey the right lead's
outgoing boundary condition form an n-dimensional space. It is carried from the right lead to the left
one as a basis pair (A, B) = (ψ_{j−1}, ψ_j), each n × n, plus the map C from basis coordinates to the
unit-flux amplitudes of the right lead's outgoing modes. A slice j−1 is crossed in one of three ways:

* transfer step, when the coupling c_{j−1} = H_{j−2, j−1} is block-invertible and well conditioned::

      ψ_{j−2} = c_{j−1}⁻† [(E − H_{j−1}) ψ_{j−1} − c_j ψ_j]

  two sparse products, O(nnz · n) per slice instead of the O(n³) of a dense inversion;
* the same transfer step when some blocks of c_{j−1} are exactly zero (vacancies): ψ_{j−2} is then free
  on their orbitals, and the equation of slice j−1 on them constrains the basis; one basis column per
  constraint is eliminated and replaced by a solution that lives only on those free orbitals;
* Green's-function step otherwise (singular, non-zero blocks, e.g. Wilson ratio r = 1)::

      K_{j−1} = (E − H_{j−1} − c_j K_j)⁻¹ c_{j−1}†,     ψ_{j−1} = K_{j−1} ψ_{j−2}

  which is the recursive Green's function g_{j−1} c†_{j−1} in "graph" form (A = 1, B = K).

Transfer steps amplify the modes that decay into the right lead, so the basis is re-stabilized by an LU
factorization A = P L U (A ← P L, B ← B U⁻¹, C ← C U⁻¹) as soon as the next step, extrapolated from the
growth of the last one, would carry the largest element of A past ``GROWTH_LIMIT``; the interval between
factorizations thus follows the measured growth of the evanescent modes (about every 5 slices on the
Dirac tube with r = 0.5, whose doubler modes grow by ≈ 6.5 per slice). At the left end the basis is put in graph form,
ψ_0 = K_0 ψ_{−1}, and matched to the left lead:

    ψ_{−1} = (E − H_L − V_L† F̃_L − c_0 K_0)⁻¹ S_in,       t = C ψ_{−1},      T = ‖t‖²_F

with S_in the source of the unit-flux incoming modes (:func:`~simsurface.transport.leads.lead_terms`).
Everything that does not depend on energy — the sparse slice operators and the block inverses of the
couplings — is prepared once per chain and shared by all energies;
lead terms are computed once per distinct lead and energy.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg as la
from numpy.typing import ArrayLike
from scipy.linalg import blas, lapack

from .chain import Lead, SliceChain
from .leads import lead_terms
from .slice_ops import ChainOperators, chain_operators

#: bound on the elements of A between re-stabilizations (the error in T grows roughly in proportion)
GROWTH_LIMIT = 3e4
#: growth of A in one transfer step beyond which the remaining slices are crossed by Green's-function steps
MAX_STEP_GROWTH = 100.0
#: slices whose operators are prepared together (working memory ∝ this, not to the chain length)
CHUNK_SLICES = 128
#: memory for the transported bases of the energies solved together
ENERGY_GROUP_BYTES = 2**28
#: slices kept in the transport window before the current pair is moved back to its end
_WINDOW = 8
#: amplitudes smaller than this relative to the largest are set to zero during re-stabilization
_FLUSH_BELOW = 1e-150


def transmission(chain: SliceChain, energies_meV: ArrayLike) -> np.ndarray:
    """Transmission left -> right at each energy; shape ``energies.shape``.

    Parameters
    ----------
    chain : SliceChain
    energies_meV : array_like
        Energies in meV.
    """
    if chain.energy_dependent:
        raise ValueError("energy-dependent chain: solve chain.at_energy(E) or use engines.transmission")
    energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
    if energies.size == 0:
        return np.zeros(energies.shape)
    flat = energies.ravel()
    # energies sharing the prepared operators; their transported bases (≈ 16 n² complex numbers each,
    # with the lead terms) are bounded by ENERGY_GROUP_BYTES
    group = max(1, int(ENERGY_GROUP_BYTES // (16 * 16 * chain.size**2)))
    out = np.concatenate([_solve_group(chain, flat[i:i + group]) for i in range(0, flat.size, group)])
    return out.reshape(energies.shape)


def _solve_group(chain: SliceChain, energies: np.ndarray) -> np.ndarray:
    sweeps = [_Sweep(chain, float(e)) for e in energies]
    for stop in range(chain.n_slices, 0, -CHUNK_SLICES):     # right to left, one piece at a time
        first = max(0, stop - CHUNK_SLICES)
        ops = None                                          # free the previous piece first
        ops = chain_operators(chain, first, stop)
        for sweep in sweeps:
            sweep.cross(ops, first, stop)
    return np.array([sweep.finish(ops) for sweep in sweeps])


def _same_lead(a: Lead, b: Lead) -> bool:
    return a is b or (np.array_equal(a.onsite, b.onsite) and np.array_equal(a.hopping, b.hopping)
                      and a.transverse_basis is b.transverse_basis)


class _Sweep:
    """The transported basis of one energy: ``state`` = [A; B] = [ψ_{j−1}; ψ_j], ``c_map`` = C."""

    def __init__(self, chain: SliceChain, energy: float) -> None:
        self.chain, self.energy = chain, energy
        self.left = lead_terms(chain.left, energy)
        self.right = self.left if _same_lead(chain.left, chain.right) else lead_terms(chain.right, energy)
        self.active = self.left.n_propagating > 0 and self.right.n_propagating > 0
        self.buffer = None      # window of transported slices: block p holds ψ of one slice
        self.pos = 0            # the current pair [A; B] is blocks pos, pos + 1
        self.c_map = None
        self.graph = True
        self.last_size = 1.0     # largest element of A before the last transfer step
        self.steep = False       # growth per slice too large for transfer steps

    @property
    def state(self) -> np.ndarray:
        n = self.chain.size
        return self.buffer[self.pos * n:(self.pos + 2) * n]

    def cross(self, ops: ChainOperators, first: int, stop: int) -> None:
        """Carry the basis across slices ``stop − 1 … first`` (operators indexed from ``first``)."""
        if not self.active:
            return
        n = self.chain.size
        if self.buffer is None:   # graph form at the right lead: ψ_N = g c_N† ψ_{N−1}; a = Out ψ_N
            k_mat = self.right.right_surface_green @ ops.coupling.dense(stop - first).conj().T
            self.buffer = np.empty(((_WINDOW + 2) * n, n), complex)
            self.residual = np.empty((n, n), complex)
            self.pos = _WINDOW
            self.state[:n] = np.eye(n)
            self.state[n:] = k_mat
            self.c_map = self.right.right_outgoing @ k_mat
        for s in range(stop - first - 1, -1, -1):    # cross slice first + s, whose left coupling is c_s
            if not (ops.transfer_ok[s] and not self.steep and self._transfer(ops, s)):
                self._green_step(ops, s)

    def _transfer(self, ops: ChainOperators, s: int) -> bool:
        """Transfer step across slice s; False (nothing changed) if its vacancies cannot be eliminated."""
        n, buf, r = self.chain.size, self.buffer, self.residual
        if self.pos == 0:                      # window full: move the pair to its end
            buf[_WINDOW * n:] = buf[:2 * n]
            self.pos = _WINDOW
        p = self.pos
        ops.residual(s, self.energy, buf[p * n:(p + 2) * n], out=r)
        vacant = ops.vacant(s)
        if vacant is not None:
            # a zero block of c_s (a vacancy) leaves ψ_{s−1} free on its orbitals and turns the equation
            # of slice s on them into constraints r = 0 on the basis: eliminate one column per constraint
            elimination = _elimination(r[vacant[1]])
            if elimination is None:
                return False
        new = buf[(p - 1) * n:p * n]
        ops.coupling_inv_adj.matmul(s, r, out=new)
        self.pos = p - 1
        self.graph = False
        if vacant is not None:
            _add_vacancy_solutions(self.state, self.c_map, vacant[0], *elimination)
        v = new.view(np.float64)
        size = max(v.max(), -v.min())
        # re-stabilize before the next step would carry the basis past the limit (the growth of the last
        # step predicts the next one), so that a large growth per slice cannot overshoot
        growth = size / self.last_size
        if size * growth > GROWTH_LIMIT:
            self.c_map = _stabilize(self.state, self.c_map)
            size = 1.0                         # |P L| ≤ 1 with a unit diagonal
        self.last_size = size
        # a chain whose solutions grow this fast per slice needs a factorization at every slice anyway;
        # Green's-function steps then cost the same and lose no accuracy to the growth
        self.steep = growth > MAX_STEP_GROWTH
        return True

    def _green_step(self, ops: ChainOperators, s: int) -> None:
        """Green's-function step across slice s: K_s = (E − H_s − c_{s+1} K_{s+1})⁻¹ c_s†."""
        n, state = self.chain.size, self.state
        if not self.graph:
            self.c_map = _to_graph_form(state, self.c_map)
        sigma = ops.coupling.matmul(s + 1, state[n:])          # c_{s+1} K_{s+1}
        a = self.energy * np.eye(n) - ops.onsite.dense(s) - sigma
        k_mat = la.solve(a, ops.coupling.dense(s).conj().T, check_finite=False)
        state[:n] = np.eye(n)
        state[n:] = k_mat
        self.c_map = self.c_map @ k_mat
        self.graph = True
        self.last_size = 1.0

    def finish(self, ops: ChainOperators) -> float:
        """Match to the left lead (``ops`` must start at slice 0) and return the transmission."""
        if not self.active:
            return 0.0
        n, state = self.chain.size, self.state
        if not self.graph:
            self.c_map = _to_graph_form(state, self.c_map)
        m = (self.energy * np.eye(n) - self.chain.left.onsite - self.left.left_self_term
             - ops.coupling.matmul(0, state[n:]))
        psi = la.solve(m, self.left.left_incoming_source, check_finite=False)
        return float(np.sum(np.abs(self.c_map @ psi) ** 2))


def _stabilize(state: np.ndarray, c_map: np.ndarray) -> np.ndarray:
    """A = P L U; A ← P L, B ← B U⁻¹, C ← C U⁻¹ (``state`` in place; the spanned space is unchanged)."""
    n = state.shape[1]
    lu, piv, info = lapack.zgetrf(state[:n])
    if info != 0:
        raise ArithmeticError("singular basis while re-stabilizing the transfer (bound state?)")
    stacked = np.concatenate([state[n:], c_map])
    # [B; C] U⁻¹ as Uᵀ⁻¹ [B; C]ᵀ on the Fortran-ordered transpose view: solved in place, no copies
    stacked = blas.ztrsm(1.0, lu, stacked.T, side=0, lower=0, trans_a=1, overwrite_b=1).T
    perm = _lapack_permutation(piv)
    state[:n] = np.tril(lu, -1)[np.argsort(perm)]                            # P L ...
    state[perm, np.arange(n)] = 1.0                                          # ... with its unit diagonal
    state[n:] = stacked[:n]
    c = stacked[n:]
    # coordinates along fast-growing solutions carry ever smaller amplitudes; flush them before they
    # become subnormal numbers (harmless for the result, but they slow the arithmetic down)
    c[np.abs(c) < _FLUSH_BELOW * np.abs(c).max(initial=0)] = 0
    return c


def _elimination(constraint: np.ndarray):
    """Columns to eliminate for ``constraint`` @ q = 0 (k × n): (pivot cols, other cols, mix) with
    q_other = e_other − e_pivot · mix; None if the constraints are (nearly) dependent.

    Pivots come from an LU factorization with partial pivoting of constraintᵀ = P [L1; L2] U, which gives
    mix = L1⁻ᵀ L2ᵀ with unit-triangular L1 and |L2| ≤ 1.
    """
    k, n = constraint.shape
    if k >= n:
        return None
    lu, piv, info = lapack.zgetrf(constraint.T)
    d = np.abs(np.diag(lu))
    if info != 0 or not d.min() > 1e-10 * np.abs(lu[:k]).max():
        return None
    perm = list(range(n))
    for i, j in enumerate(piv.tolist()):
        perm[i], perm[j] = perm[j], perm[i]
    pc, fc = np.array(perm[:k]), np.array(perm[k:])
    mix = la.solve_triangular(lu[:k].T, lu[k:].T, lower=False, unit_diagonal=True, check_finite=False)
    return pc, fc, mix


def _add_vacancy_solutions(state: np.ndarray, c_map: np.ndarray, free_rows: np.ndarray,
                           pc: np.ndarray, fc: np.ndarray, mix: np.ndarray) -> None:
    """Keep the basis columns that satisfy the constraints (combinations fc − pc · mix) and put the
    solutions that vanish on slices ≥ s and sit on the free orbitals of ψ_{s−1} in the pivot columns."""
    k = pc.size
    w = np.zeros((k, state.shape[1]), complex)      # one rank-k update: X ← X − X[:, pc] W
    w[:, fc] = mix
    w[np.arange(k), pc] = 1.0                       # ... which also empties the pivot columns
    for x in (state, c_map):
        x -= x[:, pc] @ w
    state[free_rows, pc] = 1.0


def _lapack_permutation(piv: np.ndarray) -> np.ndarray:
    """Row order p with (P⁻¹ A) = A[p] for LAPACK's sequence of row interchanges ``piv``."""
    perm = list(range(piv.size))
    for i, j in enumerate(piv.tolist()):
        perm[i], perm[j] = perm[j], perm[i]
    return np.array(perm)


def _to_graph_form(state: np.ndarray, c_map: np.ndarray) -> np.ndarray:
    """B ← B A⁻¹, C ← C A⁻¹, A ← 1 (``state`` in place); returns the new C."""
    n = state.shape[1]
    stacked = np.vstack([state[n:], c_map])
    x = la.solve(state[:n].T, stacked.T, check_finite=False).T    # X A = S  <=>  Aᵀ Xᵀ = Sᵀ
    state[:n] = np.eye(n)
    state[n:] = x[:n]
    return x[n:]
