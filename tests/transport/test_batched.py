"""Batched slice engine against the per-point slice engine and kwant's scattering solver (reference library).

Every comparison asks for agreement within 1e-8 in the transmission. Stacks of the lattice tube go through
:func:`stack_chains` (small slices: the dense batched path; large slices: the transfer path); the mode tube
builds its stacks itself (tests/models/test_modes.py checks them against its chains).
"""

import numpy as np
import pytest

from simsurface.models.tube import SurfaceTube
from simsurface.transport import batched, transmission
from simsurface.transport.batched import conductance_stack, transmission_stack, uses_dense_path
from simsurface.transport.stack import stack_chains

TOL = 1e-8
SCALE = {"topological": {"hbar_v_meV_nm": 330.0}, "trivial": {"mass_ratio": 0.03}}


@pytest.fixture(autouse=True, scope="module")
def one_blas_thread():
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1):
        yield


def tube(surface, perimeter_nm=110.0, length_nm=70.0, **kw):
    return SurfaceTube.from_geometry(surface, perimeter_nm, perimeter_nm**2 / (4 * np.pi), length_nm,
                                     max_energy_meV=30.0, **SCALE[surface], **kw)


def assert_batched_agrees(chains, energies, min_transmission=0.5):
    """Stack (chain i at energies[i]); batched vs per point vs kwant."""
    stack = stack_chains(chains, energies)
    ours = transmission_stack(stack)
    per_point = np.array([transmission(c, [e])[0] for c, e in zip(chains, energies)])
    ref = transmission_stack(stack, engine="kwant")
    assert np.max(np.abs(ours - per_point)) < TOL
    assert np.max(np.abs(ours - ref)) < TOL
    assert ref.max() > min_transmission  # the comparison is not between two zeros
    return ours


def flux_energy_points(t, fluxes, energies, **disorder):
    chains = [t.chain(f, **disorder) for f in fluxes for _ in energies]
    return chains, np.tile(energies, len(fluxes))


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_clean_and_disordered_tube_stacks_match_kwant(surface):
    t = tube(surface)
    pot = np.random.default_rng(7).uniform(-35, 35, (t.n_along, t.n_around))
    for disorder in ({}, {"potential_meV": pot}):
        chains, e = flux_energy_points(t, [0.0, 0.5, 0.81], np.array([6.0, 21.0]), **disorder)
        assert_batched_agrees(chains, e)


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_vacancies_roughness_and_doped_leads_match_kwant_in_a_stack(surface):
    rng = np.random.default_rng(3)
    t = tube(surface, lead_doping_meV=15.0)
    pot = rng.uniform(-20, 20, (t.n_along, t.n_around))
    vac = rng.random((t.n_along, t.n_around)) < 0.04
    per = 110.0 + rng.normal(0, 2.5, t.n_along)
    chains = [t.chain(f, potential_meV=pot, vacancies=vac, slice_perimeter_nm=per,
                      slice_flux_quanta=f * (per / 110.0) ** 2) for f in (0.3, 0.3, 0.7)]
    assert_batched_agrees(chains, np.array([5.0, 18.0, 11.0]))


def test_singular_axial_hopping_at_wilson_ratio_one_matches_kwant_in_a_stack():
    t = tube("topological", wilson_ratio=1.0)
    pot = np.random.default_rng(2).uniform(-20, 20, (t.n_along, t.n_around))
    chains, e = flux_energy_points(t, [0.2, 0.6], np.array([7.0, 19.0]), potential_meV=pot)
    assert_batched_agrees(chains, e)


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_single_slice_stack_matches_kwant(surface):
    t = tube(surface, length_nm=1.0)
    assert t.n_along == 1
    pot = np.random.default_rng(4).uniform(-30, 30, (1, t.n_around))
    chains, e = flux_energy_points(t, [0.2, 0.45], np.array([8.0, 22.0]), potential_meV=pot)
    assert_batched_agrees(chains, e)


def test_points_without_propagating_modes_transmit_nothing_beside_open_points():
    # at Φ = 0 the Dirac tube has a gap around E = 0 (Berry phase π); the open point keeps its value
    t = tube("topological")
    gap_edge = t.lattice_subband_bottoms_meV(0.0).min()
    chains, e = flux_energy_points(t, [0.0], np.array([0.0, 0.3 * gap_edge, 20.0]))
    out = assert_batched_agrees(chains, e)
    assert np.all(out[:2] == 0.0)


def test_large_slices_take_the_transfer_path_and_match_kwant():
    t = tube("topological", perimeter_nm=220.0, length_nm=30.0)
    assert t.n_around * 2 > batched.DENSE_MAX_SIZE
    pot = np.random.default_rng(6).uniform(-25, 25, (t.n_along, t.n_around))
    chains, e = flux_energy_points(t, [0.1, 0.35], np.array([9.0]), potential_meV=pot)
    assert not uses_dense_path(stack_chains(chains, e))
    assert_batched_agrees(chains, e)


def test_points_solved_in_several_groups_give_the_same_result(monkeypatch):
    t = tube("trivial", length_nm=40.0)
    pot = np.random.default_rng(1).uniform(-20, 20, (t.n_along, t.n_around))
    chains, e = flux_energy_points(t, [0.1, 0.3, 0.9], np.array([6.0, 15.0]), potential_meV=pot)
    stack = stack_chains(chains, e)
    whole = transmission_stack(stack)
    monkeypatch.setattr(batched, "STACK_GROUP_BYTES", 1)        # one point per group
    np.testing.assert_allclose(transmission_stack(stack), whole, rtol=0, atol=1e-12)


def test_conductance_stack_applies_the_degeneracy():
    t = tube("trivial", length_nm=30.0)
    chains, e = flux_energy_points(t, [0.2], np.array([12.0]))
    stack = stack_chains(chains, e)
    assert stack.degeneracy == chains[0].degeneracy
    np.testing.assert_allclose(conductance_stack(stack), chains[0].degeneracy * transmission_stack(stack))


def test_stack_refuses_chains_of_different_structure():
    a = tube("trivial", length_nm=30.0).chain(0.1)
    b = tube("trivial", length_nm=40.0).chain(0.1)
    with pytest.raises(ValueError, match="share size"):
        stack_chains([a, b], [5.0, 5.0])
