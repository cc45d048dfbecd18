"""Sparse slice operators, and the slice engine on chains that are not tubes (kwant as reference)."""

import numpy as np
import pytest

from simsurface.transport import Lead, SliceChain, transmission
from simsurface.transport.slice_ops import chain_operators, csr_family


def random_hermitian(rng, n, scale=1.0):
    a = rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))
    return scale * (a + a.conj().T) / 2


def random_chain(rng, n_sites, orbitals, n_slices, coupling="blocks"):
    """Random Hermitian slices; couplings with one dense orbital block per site, or fully dense."""
    n = n_sites * orbitals
    rows, cols = np.nonzero(np.ones((n, n)))
    onsite = np.array([random_hermitian(rng, n)[rows, cols] for _ in range(n_slices)])
    if coupling == "blocks":
        mask = np.kron(np.eye(n_sites), np.ones((orbitals, orbitals))).astype(bool)
    else:
        mask = np.ones((n, n), bool)
    c_rows, c_cols = np.nonzero(mask)
    c_vals = 1.5 * (rng.normal(size=(n_slices + 1, c_rows.size)) + 1j * rng.normal(size=(n_slices + 1, c_rows.size)))
    h0 = random_hermitian(rng, n)
    v = np.zeros((n, n), complex)
    v[c_rows, c_cols] = 1.5 * (rng.normal(size=c_rows.size) + 1j * rng.normal(size=c_rows.size))
    lead = Lead(h0, v)
    return SliceChain(n, rows, cols, onsite, c_rows, c_cols, c_vals, lead, lead)


def test_csr_family_sums_duplicate_entries_like_the_dense_definition():
    rng = np.random.default_rng(0)
    rows = np.array([0, 1, 1, 2, 0, 2])
    cols = np.array([1, 1, 1, 0, 1, 2])   # (1, 1) and (0, 1) appear twice
    values = rng.normal(size=(3, rows.size)) + 1j * rng.normal(size=(3, rows.size))
    fam = csr_family(rows, cols, values, 3)
    for j in range(3):
        dense = np.zeros((3, 3), complex)
        np.add.at(dense, (rows, cols), values[j])
        np.testing.assert_allclose(fam.dense(j), dense, atol=1e-14)
        x = rng.normal(size=(3, 4)) + 0j
        np.testing.assert_allclose(fam.matmul(j, x), dense @ x, atol=1e-13)


def test_block_inverse_of_couplings_is_the_inverse_adjoint():
    rng = np.random.default_rng(1)
    chain = random_chain(rng, 3, 3, 4)
    ops = chain_operators(chain)
    assert ops.transfer_ok.any()
    for j in np.flatnonzero(ops.transfer_ok):
        c = chain.coupling(j)
        np.testing.assert_allclose(ops.coupling_inv_adj.dense(j) @ c.conj().T, np.eye(chain.size), atol=1e-10)


@pytest.mark.parametrize("coupling", ["blocks", "dense"])
def test_random_non_tube_chain_matches_kwant(coupling):
    # 3 × 3 coupling blocks use the generic block inverse; dense 9 × 9 couplings (larger than the largest
    # block inverted) allow only Green's-function steps; the random lead declares no block structure, so
    # the generic 2n eigenproblem is used
    rng = np.random.default_rng(12)
    chain = random_chain(rng, 3, 3, 9, coupling)
    assert chain_operators(chain).transfer_ok.any() == (coupling == "blocks")
    e = np.array([-0.7, 0.2, 1.1])
    ours = transmission(chain, e, engine="slices")
    ref = transmission(chain, e, engine="kwant")
    assert np.max(np.abs(ours - ref)) < 1e-8
    assert ref.max() > 0.05


def test_rank_deficient_couplings_in_a_few_slices_mix_transfer_and_green_function_steps():
    rng = np.random.default_rng(21)
    chain = random_chain(rng, 3, 3, 8)
    # make one 3 x 3 block of c_3 and of c_6 singular but not zero: those slices need Green's-function steps
    for j in (3, 6):
        block = (chain.coupling_rows < 3) & (chain.coupling_cols < 3)
        vals = chain.coupling_values[j, block].reshape(3, 3)
        vals[2] = vals[0] + vals[1]
        chain.coupling_values[j, block] = vals.ravel()
    ok = chain_operators(chain).transfer_ok
    assert not ok[3] and not ok[6] and ok[[1, 2, 4, 5, 7]].all()
    e = np.array([-0.4, 0.6])
    ours = transmission(chain, e, engine="slices")
    ref = transmission(chain, e, engine="kwant")
    assert np.max(np.abs(ours - ref)) < 1e-8
    assert ref.max() > 0.05
