"""Batched slice engine: the transmissions of a whole :class:`~simsurface.transport.stack.ChainStack` in one pass.

Method (``docs/engine.md``). The points of a stack share the chain's structure, so every step of the
recursion is one call of numpy's stacked linear algebra over all points instead of one call per point:
the Python and wrapper overhead of a step is paid once per stack, and the dense kernels (LAPACK ``zgesv``
per matrix inside ``numpy.linalg.solve``, BLAS ``zgemm`` inside ``numpy.matmul``) run back to back.

*Dense path* (slices of at most :data:`DENSE_MAX_SIZE` orbitals, or couplings that transfer steps cannot
cross, e.g. the mode tube whose disorder mixes all modes): the Green's-function step of
:mod:`simsurface.transport.slices` in graph form, from the right lead to the left one,

    K_N = g_R c_N†,    K_j = (E − H_j − c_{j+1} K_{j+1})⁻¹ c_j†,    C ← C K_j,

and the match to the left lead, ψ_{−1} = (E − H_L − V_L† F̃_L − c_0 K_0)⁻¹ S_in, T = ‖C ψ_{−1}‖²_F —
the recursive Green's function (Lee & Fisher, PRL 47, 882 (1981)), which needs no re-stabilization.
The shared part of the slices (S_j, T_j of the stack) is densified once per slice for all points; only
the varying part is scattered per point. The modes of different points are padded to the largest count
with zero rows, which add nothing to T.

*Transfer path* (larger slices with block-invertible couplings, e.g. the lattice tube): every point is
solved by :func:`simsurface.transport.slices.transmission` (stabilized transfer steps), whose cost is
dominated by sparse products and LU factorizations of n × n blocks that gain nothing from stacking.

Kernels are public (:func:`dense_chain_transmission`, :func:`green_step`) with the shapes stated, so other
solvers of slice chains (e.g. with probes) can reuse them.
"""

from __future__ import annotations

import numpy as np

from . import kwant_engine, slices
from .leads import lead_terms
from .slice_ops import summed_pattern
from .cayley import CayleyStack, cayley_transmission
from .stack import ChainStack

__all__ = ["DENSE_MAX_SIZE", "STACK_GROUP_BYTES", "transmission_stack", "conductance_stack",
           "dense_chain_transmission", "green_step", "uses_dense_path"]

#: slices up to this many orbitals are solved by the dense batched path whatever their couplings
DENSE_MAX_SIZE = 96
#: working memory of the points solved together (≈ 8 n × n complex matrices per point)
STACK_GROUP_BYTES = 2**26
#: slices whose shared matrices are densified together
_CHUNK = 32


def transmission_stack(stack: ChainStack | CayleyStack, engine: str = "slices") -> np.ndarray:
    """Landauer transmission of every point of ``stack``, shape (P,).

    The stack's ``decoupled_channels`` (perfectly transmitted, unphysical) are subtracted, as in
    :func:`simsurface.transport.engines.transmission`. A :class:`CayleyStack` (first-order chains) is
    solved by :func:`simsurface.transport.cayley.cayley_transmission` (``engine`` "slices" only: kwant
    solves the equivalent :class:`ChainStack`).

    Parameters
    ----------
    stack : ChainStack
    engine : {"slices", "kwant"}
        "slices": the batched engine (dense path or transfer path, see the module notes); "kwant": kwant's
        scattering solver on every point's chain (the reference).
    """
    if isinstance(stack, CayleyStack):
        if engine != "slices":
            raise ValueError(f"engine: {engine!r} is not allowed for first-order stacks; use 'slices'")
        return cayley_transmission(stack)
    p = stack.n_points
    energies = np.asarray(stack.energies_meV, dtype=float).ravel()
    if engine == "kwant":
        out = np.array([kwant_engine.transmission(stack.point_chain(i), [energies[i]])[0] for i in range(p)])
    elif engine != "slices":
        raise ValueError(f"engine: {engine!r} is not allowed; use 'slices' or 'kwant'")
    elif uses_dense_path(stack):
        group = max(1, int(STACK_GROUP_BYTES // (8 * 16 * stack.size**2)))
        out = np.concatenate([dense_chain_transmission(stack, np.arange(i, min(p, i + group)))
                              for i in range(0, p, group)])
    else:
        out = np.array([slices.transmission(stack.point_chain(i), [energies[i]])[0] for i in range(p)])
    return out - stack.decoupled_channels


def conductance_stack(stack: ChainStack | CayleyStack, engine: str = "slices") -> np.ndarray:
    """Two-terminal conductance of every point in e²/h, shape (P,): transmission times the degeneracy."""
    return stack.degeneracy * transmission_stack(stack, engine)


def uses_dense_path(stack: ChainStack) -> bool:
    """Whether :func:`transmission_stack` solves ``stack`` by the dense batched path."""
    if stack.size <= DENSE_MAX_SIZE:
        return True
    chain = stack.point_chain(0)
    ops = slices.chain_operators(chain, 0, min(chain.n_slices, 8))
    return ops.coupling_inv_adj is None or not ops.transfer_ok.any()


def green_step(energies_meV: np.ndarray, onsite: np.ndarray, coupling_right: np.ndarray,
               k_right: np.ndarray, coupling_left: np.ndarray) -> np.ndarray:
    """One Green's-function step for a stack of points: K_j = (E − H_j − c_{j+1} K_{j+1})⁻¹ c_j†.

    Parameters
    ----------
    energies_meV : ndarray, shape (P,)
    onsite : ndarray, shape (P, n, n) or (n, n)
        H_j (meV).
    coupling_right : ndarray, shape (P, n, n)
        c_{j+1} = H_{j, j+1} (meV).
    k_right : ndarray, shape (P, n, n)
        K_{j+1}, with ψ_{j+1} = K_{j+1} ψ_j.
    coupling_left : ndarray, shape (P, n, n)
        c_j = H_{j−1, j} (meV).

    Returns
    -------
    ndarray, shape (P, n, n)
        K_j, with ψ_j = K_j ψ_{j−1} (dimensionless).
    """
    a = np.matmul(coupling_right, k_right)
    np.negative(a, out=a)
    a -= onsite
    _add_to_diagonal(a, energies_meV)
    return np.linalg.solve(a, np.conj(np.swapaxes(coupling_left, -1, -2)))


def dense_chain_transmission(stack: ChainStack, points: np.ndarray) -> np.ndarray:
    """Transmission (decoupled channels included) of the stack's ``points`` by the dense path; shape (len(points),)."""
    points = np.asarray(points)
    n, n_sl = stack.size, stack.n_slices
    energies = np.asarray(stack.energies_meV, dtype=float).ravel()[points]
    left = [lead_terms(stack.left[i], e) for i, e in zip(points, energies)]
    right = [lead_terms(stack.right[i], e) for i, e in zip(points, energies)]   # cached when equal
    p_max = max(max(t.n_propagating for t in left), max(t.n_propagating for t in right))
    if p_max == 0:
        return np.zeros(points.size)
    outgoing = np.zeros((points.size, p_max, n), complex)
    source = np.zeros((points.size, n, p_max), complex)
    for k, (tl, tr) in enumerate(zip(left, right)):
        if tl.n_propagating and tr.n_propagating:     # a point without modes on one side transmits nothing
            outgoing[k, :tr.n_propagating] = tr.right_outgoing
            source[k, :, :tl.n_propagating] = tl.left_incoming_source
    parts = _Parts(stack, points)
    c_right = parts.coupling(n_sl)                                               # c_N
    g_right = np.stack([t.right_surface_green for t in right])
    k_mat = g_right @ np.conj(np.swapaxes(c_right, -1, -2))
    c_map = outgoing @ k_mat
    for j in range(n_sl - 1, -1, -1):
        c_left = parts.coupling(j)
        k_mat = green_step(energies, parts.onsite(j), c_right, k_mat, c_left)
        c_map = c_map @ k_mat
        c_right = c_left
    m = -np.matmul(c_right, k_mat)                                               # − c_0 K_0
    m -= np.stack([stack.left[i].onsite for i in points])
    m -= np.stack([t.left_self_term for t in left])
    _add_to_diagonal(m, energies)
    psi = np.linalg.solve(m, source)
    t = c_map @ psi
    return np.sum(np.abs(t) ** 2, axis=(1, 2))


class _Parts:
    """Dense slice matrices of a stack's points, densified chunk by chunk from the right end."""

    def __init__(self, stack: ChainStack, points: np.ndarray) -> None:
        n = stack.size
        self.stack, self.points, self.n = stack, points, n
        self._onsite = self._coupling = (None, -1)
        self.on_rc, self.on_vals = summed_pattern(stack.onsite_rows, stack.onsite_cols, stack.onsite_values[points], n)
        self.co_rc, self.co_vals = summed_pattern(stack.coupling_rows, stack.coupling_cols,
                                           stack.coupling_values[points], n)

    def _shared_dense(self, rows, cols, values, first: int, stop: int) -> np.ndarray:
        (rows, cols), data = summed_pattern(rows, cols, values[first:stop], self.n)
        dense = np.zeros((stop - first, self.n, self.n), complex)
        dense[:, rows, cols] = data
        return dense

    def _dense(self, j: int, which: str) -> np.ndarray:
        s = self.stack
        cached, first = self._onsite if which == "onsite" else self._coupling
        if cached is None or not first <= j < first + cached.shape[0]:
            first = max(0, j - _CHUNK + 1)
            if which == "onsite":
                cached = self._shared_dense(s.shared_onsite_rows, s.shared_onsite_cols, s.shared_onsite_values,
                                            first, j + 1)
                self._onsite = (cached, first)
            else:
                cached = self._shared_dense(s.shared_coupling_rows, s.shared_coupling_cols,
                                            s.shared_coupling_values, first, j + 1)
                self._coupling = (cached, first)
        vals, (rows, cols) = (self.on_vals, self.on_rc) if which == "onsite" else (self.co_vals, self.co_rc)
        out = np.repeat(cached[j - first][None], self.points.size, axis=0)
        out[:, rows, cols] += vals[:, j if vals.shape[1] > 1 else 0]
        return out

    def onsite(self, j: int) -> np.ndarray:
        """H_j of every point, shape (P, n, n) (meV)."""
        return self._dense(j, "onsite")

    def coupling(self, j: int) -> np.ndarray:
        """c_j = H_{j−1, j} of every point, shape (P, n, n) (meV)."""
        return self._dense(j, "coupling")




def _add_to_diagonal(a: np.ndarray, values: np.ndarray) -> None:
    """a[p] += values[p] · 1 in place; a of shape (P, n, n)."""
    idx = np.arange(a.shape[-1])
    a[:, idx, idx] += np.asarray(values)[:, None]
