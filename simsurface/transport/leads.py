"""Modes and surface Green's functions of translation-invariant leads.

A lead with cell Hamiltonian H0 and hopping V = H_{j,j+1} carries Bloch solutions ψ_j = λ^j φ with
(E − H0 − λV − λ⁻¹V†) φ = 0. This is solved as a generalized eigenvalue problem of size 2n, which stays
well defined when V is singular (λ = 0 or ∞). Solutions are sorted into the n that belong to the right
lead (decaying to +x, |λ| < 1, or propagating with positive velocity) and the n of the left lead.
Propagating modes with the same λ are rotated to diagonalize the velocity within their group, so the
sorting is right also at degeneracies (e.g. the doubly degenerate subbands of a tube at zero flux).
"""

from __future__ import annotations

import hashlib
from collections import OrderedDict
from dataclasses import dataclass, fields

import numpy as np
import scipy.linalg as la

from .chain import Lead

#: |λ| within this of 1 counts as propagating.
_UNIT_CIRCLE_TOL = 1e-7
#: eigenvalues closer than this are treated as one degenerate group.
_DEGENERACY_TOL = 1e-6


@dataclass(frozen=True, eq=False)
class LeadModes:
    """Bloch modes of a lead at one energy.

    Attributes
    ----------
    right_vectors : ndarray, shape (n, n)
        Columns φ of the modes that decay or propagate towards +x.
    right_factors : ndarray, shape (n,)
        Their λ (|λ| ≤ 1).
    left_vectors, left_inverse_factors
        The same for −x; the factors are 1/λ (so λ = ∞ is stored as 0).
    n_propagating : int
        Number of propagating modes towards +x (= towards −x).
    """

    right_vectors: np.ndarray
    right_factors: np.ndarray
    left_vectors: np.ndarray
    left_inverse_factors: np.ndarray
    n_propagating: int


def lead_modes(lead: Lead, energy_meV: float) -> LeadModes:
    """Compute and sort the Bloch modes of ``lead`` at ``energy_meV``."""
    h0, v = lead.onsite, lead.hopping
    n = h0.shape[0]
    eye = np.eye(n)
    zero = np.zeros((n, n))
    # x = (φ, λφ):  A x = λ B x
    a = np.block([[zero, eye], [-v.conj().T, energy_meV * eye - h0]])
    b = np.block([[eye, zero], [zero, v]])
    (alpha, beta), vecs = la.eig(a, b, homogeneous_eigvals=True)
    # λ = alpha / beta; classify by magnitude without dividing by zero
    mag_a, mag_b = np.abs(alpha), np.abs(beta)
    inside = mag_a < mag_b * (1 - _UNIT_CIRCLE_TOL)
    outside = mag_a > mag_b * (1 + _UNIT_CIRCLE_TOL)
    on_circle = ~(inside | outside)
    # φ is the upper half for |λ| <= 1 and the lower half / λ for |λ| > 1 (finite as λ -> ∞)
    phi = np.where(inside | on_circle, vecs[:n], vecs[n:])

    lam = np.zeros(alpha.shape, dtype=complex)
    ok = ~outside
    lam[ok] = alpha[ok] / beta[ok]
    inv_lam = np.zeros(alpha.shape, dtype=complex)
    inv_lam[outside] = beta[outside] / alpha[outside]

    prop = np.flatnonzero(on_circle)
    right_prop, left_prop = _split_propagating(phi[:, prop], lam[prop], v)

    right_idx = np.flatnonzero(inside)
    left_idx = np.flatnonzero(outside)
    right_vecs = np.hstack([phi[:, right_idx], right_prop[0]])
    right_fac = np.concatenate([lam[right_idx], right_prop[1]])
    left_vecs = np.hstack([phi[:, left_idx], left_prop[0]])
    left_inv = np.concatenate([inv_lam[left_idx], 1.0 / left_prop[1]])
    if right_vecs.shape[1] != n or left_vecs.shape[1] != n:
        raise ArithmeticError(
            f"lead mode sorting failed at E = {energy_meV} meV: {right_vecs.shape[1]} right and "
            f"{left_vecs.shape[1]} left solutions for {n} orbitals (energy at a band edge?)")
    return LeadModes(right_vecs, right_fac, left_vecs, left_inv, right_prop[0].shape[1])


def _split_propagating(phi: np.ndarray, lam: np.ndarray, v: np.ndarray):
    """Split propagating modes by the sign of their velocity, diagonalizing it in degenerate groups."""
    n = v.shape[0]
    right_v, right_l, left_v, left_l = [], [], [], []
    used = np.zeros(lam.size, dtype=bool)
    for i in range(lam.size):
        if used[i]:
            continue
        group = np.flatnonzero((~used) & (np.abs(lam - lam[i]) < _DEGENERACY_TOL))
        used[group] = True
        lam_g = lam[i] / abs(lam[i])
        basis, _ = np.linalg.qr(phi[:, group])
        vel_op = 1j * (lam_g * v - np.conj(lam_g) * v.conj().T)
        vel = basis.conj().T @ vel_op @ basis
        vel = (vel + vel.conj().T) / 2
        w, u = np.linalg.eigh(vel)
        modes = basis @ u
        for k in range(w.size):
            if w[k] > 0:
                right_v.append(modes[:, k]); right_l.append(lam_g)
            else:
                left_v.append(modes[:, k]); left_l.append(lam_g)
    def pack(vs, ls):
        if vs:
            return np.array(vs).T, np.array(ls)
        return np.zeros((n, 0), dtype=complex), np.zeros(0, dtype=complex)
    return pack(right_v, right_l), pack(left_v, left_l)


def right_surface_green(lead: Lead, energy_meV: float, modes: LeadModes | None = None) -> np.ndarray:
    """Green's function g_R = G_{0,0} of the isolated semi-infinite lead on cells 0, 1, 2, … (1/meV)."""
    m = modes or lead_modes(lead, energy_meV)
    # ψ_{j+1} = F ψ_j with F = Φ Λ Φ⁻¹ for the right-going / decaying set
    f = la.solve(m.right_vectors.T, (m.right_vectors * m.right_factors).T).T
    n = lead.onsite.shape[0]
    return la.inv(energy_meV * np.eye(n) - lead.onsite - lead.hopping @ f)


def left_surface_green(lead: Lead, energy_meV: float, modes: LeadModes | None = None) -> np.ndarray:
    """Green's function g_L = G_{−1,−1} of the isolated semi-infinite lead on cells …, −2, −1 (1/meV)."""
    m = modes or lead_modes(lead, energy_meV)
    # ψ_{j−1} = F̃ ψ_j with F̃ = Φ Λ⁻¹ Φ⁻¹ for the left-going / decaying set
    f = la.solve(m.left_vectors.T, (m.left_vectors * m.left_inverse_factors).T).T
    n = lead.onsite.shape[0]
    return la.inv(energy_meV * np.eye(n) - lead.onsite - lead.hopping.conj().T @ f)


@dataclass(frozen=True, eq=False)
class LeadTerms:
    """What a scattering solver needs from one lead at one energy (matrices in the lead's orbital basis).

    Attributes
    ----------
    right_surface_green : ndarray, shape (n, n)
        g = (E − H0 − V F)⁻¹ of the semi-infinite lead on cells 0, 1, 2, … (1/meV): for a lead on the right,
        ψ_first = g c† ψ_last with c the coupling from the last slice into the lead.
    right_outgoing : ndarray, shape (p, n)
        Maps ψ on the first cell of a right lead to the unit-flux amplitudes of its p outgoing modes.
    left_self_term : ndarray, shape (n, n)
        V† F̃ (meV): for solutions of a left lead that move or decay towards −x, V† ψ_{−2} = V† F̃ ψ_{−1}.
    left_incoming_source : ndarray, shape (n, p)
        Source on the last cell of a left lead for each incoming mode of unit flux:
        V† (φ λ⁻¹ − F̃ φ) / √v (meV).
    n_propagating : int
        p, the number of propagating modes in each direction.
    """

    right_surface_green: np.ndarray
    right_outgoing: np.ndarray
    left_self_term: np.ndarray
    left_incoming_source: np.ndarray
    n_propagating: int


#: byte budget of the per-process cache of lead terms (least recently used entries are dropped first)
LEAD_CACHE_BYTES = 512 * 2**20
_cache: OrderedDict[bytes, LeadTerms] = OrderedDict()
_cache_bytes = 0


def _lead_key(lead: Lead, energy_meV: float) -> bytes:
    """Digest of everything the lead terms depend on: the lead's matrices, its declared basis, the energy."""
    h = hashlib.blake2b(digest_size=20)
    for a in (lead.onsite, lead.hopping, lead.transverse_basis):
        if a is None:
            h.update(b"-")
            continue
        a = np.ascontiguousarray(a)
        h.update(repr((a.shape, a.dtype.str)).encode())
        h.update(memoryview(a).cast("B"))
    h.update(repr((lead.block_size, float(energy_meV))).encode())
    return h.digest()


def _nbytes(terms: LeadTerms) -> int:
    return sum(getattr(terms, f.name).nbytes for f in fields(terms) if isinstance(getattr(terms, f.name), np.ndarray))


def lead_terms(lead: Lead, energy_meV: float) -> LeadTerms:
    """Boundary terms of ``lead`` at ``energy_meV``; solved block by block when the lead declares a
    ``transverse_basis`` (checked: off-block elements must vanish to 1e-10 of the largest element).

    The leads of a sweep are clean and repeat across disorder realizations, so results are kept in a
    per-process cache keyed by a digest of the lead's matrices and the energy (at most
    :data:`LEAD_CACHE_BYTES`; the returned arrays are read-only). A cached result is the same object the
    first solution returned, so caching never changes a number.
    """
    global _cache_bytes
    key = _lead_key(lead, energy_meV)
    terms = _cache.get(key)
    if terms is not None:
        _cache.move_to_end(key)
        return terms
    terms = _solve_lead_terms(lead, energy_meV)
    for f in fields(terms):
        value = getattr(terms, f.name)
        if isinstance(value, np.ndarray):
            value.setflags(write=False)
    size = _nbytes(terms)
    if size <= LEAD_CACHE_BYTES:
        _cache[key] = terms
        _cache_bytes += size
        while _cache_bytes > LEAD_CACHE_BYTES:
            _, dropped = _cache.popitem(last=False)
            _cache_bytes -= _nbytes(dropped)
    return terms


def clear_lead_cache() -> None:
    """Empty the per-process cache of lead terms (benchmarks call it so that every point solves its leads)."""
    global _cache_bytes
    _cache.clear()
    _cache_bytes = 0


def _solve_lead_terms(lead: Lead, energy_meV: float) -> LeadTerms:
    if lead.transverse_basis is None:
        return _terms_from_modes(lead.onsite, lead.hopping, energy_meV)
    u, b = lead.transverse_basis, lead.block_size
    h0 = u.conj().T @ lead.onsite @ u
    v = u.conj().T @ lead.hopping @ u
    n = h0.shape[0]
    nb = n // b
    mask = np.kron(np.eye(nb, dtype=bool), np.ones((b, b), dtype=bool))
    scale = max(np.abs(lead.onsite).max(), np.abs(lead.hopping).max(), 1e-300)
    if max(np.abs(h0[~mask]).max(initial=0), np.abs(v[~mask]).max(initial=0)) > 1e-10 * scale:
        raise ValueError("the lead's transverse_basis does not block-diagonalize it")
    blocks = np.arange(nb)[:, None] * b + np.arange(b)[None, :]
    h0_b = h0[blocks[:, :, None], blocks[:, None, :]]
    v_b = v[blocks[:, :, None], blocks[:, None, :]]
    batched = _batched_block_terms(h0_b, v_b, energy_meV)
    if batched is not None:
        g_b, s_b, out_rows, src_cols = batched
        g = np.zeros((n, n), complex)
        s = np.zeros((n, n), complex)
        for k in range(nb):
            g[k * b:(k + 1) * b, k * b:(k + 1) * b] = g_b[k]
            s[k * b:(k + 1) * b, k * b:(k + 1) * b] = s_b[k]
        p = out_rows.shape[0]
        return LeadTerms(u @ g @ u.conj().T, out_rows @ u.conj().T, u @ s @ u.conj().T, u @ src_cols, p)
    g = np.zeros((n, n), complex)
    s = np.zeros((n, n), complex)
    outs, srcs = [], []
    for k in range(nb):
        blk = slice(k * b, (k + 1) * b)
        t = _terms_from_modes(h0[blk, blk], v[blk, blk], energy_meV)
        g[blk, blk] = t.right_surface_green
        s[blk, blk] = t.left_self_term
        outs.append(t.right_outgoing @ u[:, blk].conj().T)
        srcs.append(u[:, blk] @ t.left_incoming_source)
    p = sum(o.shape[0] for o in outs)
    return LeadTerms(u @ g @ u.conj().T, np.vstack(outs).reshape(p, n), u @ s @ u.conj().T,
                     np.hstack(srcs).reshape(n, p), p)


def _batched_block_terms(h0: np.ndarray, v: np.ndarray, energy: float):
    """Lead terms of all diagonal blocks at once, shapes (nb, b, b), by a batched standard eigenproblem.

    Needs invertible, well-conditioned hopping blocks and at most two propagating modes of one block with
    the same λ (such a pair is rotated to diagonalize the velocity, as in :func:`lead_modes`; e.g. the
    staggered pair at λ = −1 of a tangent discretization); returns None otherwise (the caller then solves
    block by block with :func:`lead_modes`).
    Returns (g blocks, V†F̃ blocks, outgoing rows (p, nb·b), incoming sources (nb·b, p)).
    """
    nb, b, _ = v.shape
    if not np.all(np.linalg.cond(v) < 1e6):   # also catches the NaN of an all-zero block
        return None
    v_inv = np.linalg.inv(v)
    eye = np.broadcast_to(np.eye(b), (nb, b, b))
    top = np.concatenate([np.zeros((nb, b, b)), eye], axis=2)
    bottom = np.concatenate([-v_inv @ np.conj(np.swapaxes(v, 1, 2)), v_inv @ (energy * eye - h0)], axis=2)
    lam, vecs = np.linalg.eig(np.concatenate([top, bottom], axis=1))       # x = (φ, λφ)
    phi = vecs[:, :b, :]
    phi = phi / np.linalg.norm(phi, axis=1, keepdims=True)
    mag = np.abs(lam)
    prop = np.abs(mag - 1) <= _UNIT_CIRCLE_TOL
    lam_p = np.where(prop, lam, np.nan)
    close = (np.abs(lam_p[:, :, None] - lam_p[:, None, :]) < _DEGENERACY_TOL) & ~np.eye(2 * b, dtype=bool)
    if np.any(close.sum(axis=2) > 1):
        return None
    k_pair, i_pair, j_pair = np.nonzero(np.triu(close))
    if k_pair.size:
        phi = phi.copy()
        _diagonalize_velocity_in_pairs(phi, lam, v, k_pair, i_pair, j_pair)
    vel = -2 * np.imag(lam * np.einsum("kim,kij,kjm->km", phi.conj(), v, phi))
    right = (mag < 1 - _UNIT_CIRCLE_TOL) | (prop & (vel > 0))
    if np.any(right.sum(axis=1) != b) or np.any(prop & (vel == 0)):
        return None
    order = np.argsort(~right, axis=1, kind="stable")                        # right set first
    phi = np.take_along_axis(phi, order[:, None, :], axis=2)
    lam, prop, vel = (np.take_along_axis(x, order, axis=1) for x in (lam, prop, vel))
    phi_r, phi_l, lam_r, lam_l = phi[:, :, :b], phi[:, :, b:], lam[:, :b], lam[:, b:]
    phi_r_inv = np.linalg.inv(phi_r)
    forward = (phi_r * lam_r[:, None, :]) @ phi_r_inv
    g = np.linalg.inv(energy * eye - h0 - v @ forward)
    backward = (phi_l / lam_l[:, None, :]) @ np.linalg.inv(phi_l)
    v_adj = np.conj(np.swapaxes(v, 1, 2))
    self_term = v_adj @ backward
    k_idx, m_idx = np.nonzero(prop[:, :b])                                    # incoming/outgoing modes
    p = k_idx.size
    sq = np.sqrt(vel[k_idx, m_idx])
    out = np.zeros((p, nb, b), complex)
    out[np.arange(p), k_idx] = phi_r_inv[k_idx, m_idx, :] * sq[:, None]
    ph, lm = phi_r[k_idx, :, m_idx], lam_r[k_idx, m_idx]                        # (p, b), (p,)
    src_b = (np.einsum("pij,pj->pi", v_adj[k_idx], ph / lm[:, None])
             - np.einsum("pij,pj->pi", self_term[k_idx], ph)) / sq[:, None]
    src = np.zeros((p, nb, b), complex)
    src[np.arange(p), k_idx] = src_b
    return g, self_term, out.reshape(p, nb * b), src.reshape(p, nb * b).T


def _diagonalize_velocity_in_pairs(phi: np.ndarray, lam: np.ndarray, v: np.ndarray, k: np.ndarray,
                                   i: np.ndarray, j: np.ndarray) -> None:
    """Rotate the degenerate propagating pairs (block k, modes i and j) of ``phi`` (nb, b, 2b) in place so
    that the velocity i(λV − λ*V†) is diagonal on each pair (orthonormal pair, flux-orthogonal modes)."""
    pair = np.stack([phi[k, :, i], phi[k, :, j]], axis=2)                     # (p, b, 2)
    q, _ = np.linalg.qr(pair)
    lam_g = (lam[k, i] / np.abs(lam[k, i]))[:, None, None]
    vk = v[k]
    vel_op = 1j * (lam_g * vk - np.conj(lam_g) * np.conj(np.swapaxes(vk, 1, 2)))
    w = np.conj(np.swapaxes(q, 1, 2)) @ vel_op @ q
    _, u = np.linalg.eigh((w + np.conj(np.swapaxes(w, 1, 2))) / 2)
    modes = q @ u
    phi[k, :, i] = modes[:, :, 0]
    phi[k, :, j] = modes[:, :, 1]


def _terms_from_modes(h0: np.ndarray, v: np.ndarray, energy_meV: float) -> LeadTerms:
    m = lead_modes(Lead(h0, v), energy_meV)
    n, p = h0.shape[0], m.n_propagating
    # right set: evanescent modes first, the p propagating ones last (see lead_modes)
    phi_r = m.right_vectors
    phi_r_inv = la.inv(phi_r)
    forward = (phi_r * m.right_factors) @ phi_r_inv
    g = la.inv(energy_meV * np.eye(n) - h0 - v @ forward)
    phi_in, lam_in = phi_r[:, n - p:], m.right_factors[n - p:]
    vel = _velocities(phi_in, lam_in, v)
    out = np.sqrt(vel)[:, None] * phi_r_inv[n - p:]
    phi_l = m.left_vectors
    backward = (phi_l * m.left_inverse_factors) @ la.inv(phi_l)
    self_term = v.conj().T @ backward
    source = (v.conj().T @ (phi_in / lam_in) - self_term @ phi_in) / np.sqrt(vel)
    return LeadTerms(g, out, self_term, source, p)


def _velocities(phi: np.ndarray, lam: np.ndarray, v: np.ndarray) -> np.ndarray:
    """v_k = φ_k† i(λ_k V − λ_k* V†) φ_k = −2 Im(λ_k φ_k† V φ_k), one per column (∝ group velocity)."""
    z = np.einsum("ik,ik->k", phi.conj(), v @ phi)
    return -2 * np.imag(lam * z)
