"""Energy-dependent chains: the plain chain of E P − H at one energy."""

import numpy as np
import pytest

from simsurface.transport.chain import Lead, SliceChain


def random_hermitian(rng, n):
    a = rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))
    return a + a.conj().T


def dense_chain(rng, n=3, n_slices=4, overlap=True, share_leads=True):
    """A chain with dense slice and coupling patterns and random Hermitian overlaps (no model behind it)."""
    rows, cols = np.nonzero(np.ones((n, n), bool))
    h = np.array([random_hermitian(rng, n) for _ in range(n_slices)])
    c = rng.normal(size=(n_slices + 1, n, n)) + 1j * rng.normal(size=(n_slices + 1, n, n))
    p = np.array([np.eye(n) + 0.1 * random_hermitian(rng, n) for _ in range(n_slices)])
    pc = 0.1 * rng.normal(size=(n_slices + 1, n, n))
    lead = Lead(random_hermitian(rng, n), rng.normal(size=(n, n)) + 0j,
                onsite_overlap=np.eye(n) / 2 if overlap else None,
                hopping_overlap=np.eye(n) / 4 if overlap else None)
    right = lead if share_leads else Lead(lead.onsite.copy(), lead.hopping.copy(), onsite_overlap=lead.onsite_overlap,
                                          hopping_overlap=lead.hopping_overlap)
    kw = dict(onsite_overlap=p[:, rows, cols], coupling_overlap=pc[:, rows, cols]) if overlap else {}
    return SliceChain(n, rows, cols, h[:, rows, cols], rows, cols, c[:, rows, cols], lead, right, **kw)


def test_plain_chain_at_energy_reproduces_e_times_overlap_minus_hamiltonian():
    # (E − H_eff) must equal (E P − H) block by block (definition, common practice, no source)
    rng = np.random.default_rng(1)
    chain = dense_chain(rng)
    e = 7.5
    plain = chain.at_energy(e)
    assert not plain.energy_dependent
    n = chain.size
    for j in range(chain.n_slices):
        p = np.zeros((n, n), complex)
        np.add.at(p, (chain.onsite_rows, chain.onsite_cols), chain.onsite_overlap[j])
        np.testing.assert_allclose(e * np.eye(n) - plain.slice_hamiltonian(j),
                                   e * p - chain.slice_hamiltonian(j), atol=1e-13)
    for j in range(chain.n_slices + 1):
        p = np.zeros((n, n), complex)
        np.add.at(p, (chain.coupling_rows, chain.coupling_cols), chain.coupling_overlap[j])
        np.testing.assert_allclose(-plain.coupling(j), e * p - chain.coupling(j), atol=1e-13)
    lead = plain.left
    np.testing.assert_allclose(e * np.eye(n) - lead.onsite, e * chain.left.onsite_overlap - chain.left.onsite)
    np.testing.assert_allclose(-lead.hopping, e * chain.left.hopping_overlap - chain.left.hopping)
    assert plain.right is plain.left           # one lead object stays one (engines solve it once)


def test_slice_pattern_without_diagonal_gains_it():
    n = 2
    rows, cols = np.array([0, 1]), np.array([1, 0])          # off-diagonal only
    lead = Lead(np.zeros((n, n), complex), np.eye(n) + 0j, onsite_overlap=np.eye(n), hopping_overlap=np.zeros((n, n)))
    chain = SliceChain(n, rows, cols, np.array([[1.0 + 1j, 1.0 - 1j]]), np.arange(n), np.arange(n),
                       np.ones((2, n), complex), lead, lead, onsite_overlap=np.array([[0.5, 0.5]]),
                       coupling_overlap=np.zeros((2, n)))
    plain = chain.at_energy(3.0)
    np.testing.assert_allclose(plain.slice_hamiltonian(0), [[3.0, -0.5 + 1j], [-0.5 - 1j, 3.0]])


def test_chain_without_overlap_is_its_own_plain_chain():
    chain = dense_chain(np.random.default_rng(3), overlap=False)
    assert not chain.energy_dependent
    assert chain.at_energy(4.0) is chain


def test_overlaps_must_come_in_pairs_and_match_the_patterns():
    chain = dense_chain(np.random.default_rng(4))
    with pytest.raises(ValueError):
        SliceChain(chain.size, chain.onsite_rows, chain.onsite_cols, chain.onsite_values, chain.coupling_rows,
                   chain.coupling_cols, chain.coupling_values, chain.left, chain.right,
                   onsite_overlap=chain.onsite_overlap)
    with pytest.raises(ValueError):
        SliceChain(chain.size, chain.onsite_rows, chain.onsite_cols, chain.onsite_values, chain.coupling_rows,
                   chain.coupling_cols, chain.coupling_values, chain.left, chain.right,
                   onsite_overlap=chain.onsite_overlap[:, :2], coupling_overlap=chain.coupling_overlap)
    with pytest.raises(ValueError):
        Lead(chain.left.onsite, chain.left.hopping, onsite_overlap=np.eye(3))
