"""Slice engine against kwant's scattering solver (a general-purpose reference library).

Every comparison asks for agreement within 1e-8 in the transmission. The cases cover both crossing
steps of the engine: transfer steps (invertible couplings) and Green's-function steps (vacancies make
couplings vanish; Wilson ratio r = 1 makes them singular), the chunked preparation of long chains and the
block-diagonal (transverse Fourier) lead solver.
"""

import dataclasses

import numpy as np
import pytest

from simsurface.models.tube import SurfaceTube
from simsurface.transport import Lead, transmission
from simsurface.transport import slices

TOL = 1e-8
SCALE = {"topological": {"hbar_v_meV_nm": 330.0}, "trivial": {"mass_ratio": 0.03}}


def tube(surface, perimeter_nm=110.0, length_nm=70.0, **kw):
    return SurfaceTube.from_geometry(surface, perimeter_nm, perimeter_nm**2 / (4 * np.pi), length_nm,
                                     max_energy_meV=30.0, **SCALE[surface], **kw)


def assert_engines_agree(chain, energies, min_transmission=0.5):
    ours = transmission(chain, energies, engine="slices")
    ref = transmission(chain, energies, engine="kwant")
    assert np.max(np.abs(ours - ref)) < TOL
    assert ref.max() > min_transmission  # the comparison is not between two zeros
    return ours


@pytest.mark.parametrize("surface", ["topological", "trivial"])
@pytest.mark.parametrize("flux", [0.0, 0.25, 0.5, 0.37])
def test_clean_tube_transmission_matches_kwant_including_degenerate_lead_modes(surface, flux):
    # Φ = 0 and Φ = 1/2 make lead subbands pairwise degenerate (same λ in different Fourier blocks)
    t = tube(surface)
    assert_engines_agree(t.chain(flux), np.array([4.0, 13.0, 26.0]))


@pytest.mark.parametrize("surface", ["topological", "trivial"])
@pytest.mark.parametrize("flux", [0.0, 0.5, 0.81])
def test_disordered_tube_transmission_matches_kwant(surface, flux):
    t = tube(surface)
    pot = np.random.default_rng(7).uniform(-35, 35, (t.n_along, t.n_around))
    assert_engines_agree(t.chain(flux, potential_meV=pot), np.array([6.0, 21.0]))


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_vacancies_roughness_and_doped_leads_match_kwant(surface):
    rng = np.random.default_rng(3)
    t = tube(surface, lead_doping_meV=15.0)
    pot = rng.uniform(-20, 20, (t.n_along, t.n_around))
    vac = rng.random((t.n_along, t.n_around)) < 0.04
    per = 110.0 + rng.normal(0, 2.5, t.n_along)
    chain = t.chain(0.3, potential_meV=pot, vacancies=vac, slice_perimeter_nm=per,
                    slice_flux_quanta=0.3 * (per / 110.0) ** 2)
    assert_engines_agree(chain, np.array([5.0, 18.0]))


def test_vacancies_are_crossed_by_transfer_steps_that_eliminate_their_orbitals():
    t = tube("topological", length_nm=90.0)
    vac = np.zeros((t.n_along, t.n_around), bool)
    vac[[3, 4, 17, 17], [2, 9, 5, 6]] = True          # includes two neighbouring vacancies
    pot = np.random.default_rng(5).uniform(-25, 25, vac.shape)
    chain = t.chain(0.6, potential_meV=pot, vacancies=vac)
    ops = slices.chain_operators(chain)
    assert ops.transfer_ok.all() and ops.vacant(4) is not None and ops.vacant(10) is None
    assert_engines_agree(chain, np.array([9.0, 23.0]))


def test_singular_axial_hopping_at_wilson_ratio_one_matches_kwant():
    # r = 1: the axial hopping −(t/2)(iσ_x + σ_z) is nilpotent, every slice needs a Green's-function step
    t = tube("topological", wilson_ratio=1.0)
    pot = np.random.default_rng(2).uniform(-20, 20, (t.n_along, t.n_around))
    chain = t.chain(0.2, potential_meV=pot)
    assert not slices.chain_operators(chain).transfer_ok.any()
    assert_engines_agree(chain, np.array([7.0, 19.0]))


def test_long_chain_prepared_in_chunks_matches_kwant():
    # more slices than one chunk and than the transport window; many re-stabilizations
    t = SurfaceTube.from_geometry("topological", 60.0, 300.0, 60.0 / 12 * 300, hbar_v_meV_nm=330.0,
                                  max_energy_meV=30.0, spacing_nm=5.0)
    assert t.n_along > slices.CHUNK_SLICES + 2 * slices._WINDOW
    pot = np.random.default_rng(9).uniform(-15, 15, (t.n_along, t.n_around))
    assert_engines_agree(t.chain(0.45, potential_meV=pot), np.array([12.0, 25.0]), min_transmission=0.2)


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_single_slice_chain_matches_kwant(surface):
    t = tube(surface, length_nm=1.0)
    assert t.n_along == 1
    pot = np.random.default_rng(4).uniform(-30, 30, (1, t.n_around))
    assert_engines_agree(t.chain(0.2, potential_meV=pot), np.array([8.0, 22.0]))


def test_energy_inside_zero_flux_gap_has_no_transmission_in_both_engines():
    # at Φ = 0 the Dirac tube has a gap around E = 0 (Berry phase π); no lead mode propagates there
    t = tube("topological")
    gap_edge = t.lattice_subband_bottoms_meV(0.0).min()
    e = np.array([0.0, 0.3 * gap_edge, -0.6 * gap_edge])
    chain = t.chain(0.0)
    ours = transmission(chain, e, engine="slices")
    ref = transmission(chain, e, engine="kwant")
    assert np.all(ours == 0.0) and np.max(np.abs(ref)) < TOL


def test_energy_array_shape_is_kept():
    t = tube("trivial", length_nm=30.0)
    chain = t.chain(0.1)
    e = np.array([[3.0, 9.0], [15.0, 21.0]])
    out = transmission(chain, e)
    assert out.shape == (2, 2)
    np.testing.assert_allclose(out.ravel(), transmission(chain, e.ravel()), rtol=0, atol=1e-12)


def test_generic_lead_solver_gives_the_block_solver_result():
    # the same chain with leads that do not declare their Fourier blocks: the 2n generalized eigenproblem
    t = tube("topological", length_nm=40.0)
    pot = np.random.default_rng(8).uniform(-25, 25, (t.n_along, t.n_around))
    chain = t.chain(0.5, potential_meV=pot)
    plain = Lead(chain.left.onsite, chain.left.hopping)
    e = np.array([5.0, 17.0])
    a = transmission(chain, e)
    b = transmission(dataclasses.replace(chain, left=plain, right=plain), e)
    assert np.max(np.abs(a - b)) < TOL


def test_chain_with_steeply_growing_evanescent_modes_matches_kwant():
    # slices with 1/8 of the perimeter make the hopping around 64 times the axial one: evanescent
    # solutions grow by more than MAX_STEP_GROWTH per slice, so the engine leaves transfer steps
    t = tube("trivial", perimeter_nm=100.0, length_nm=80.0)
    chain = t.chain(0.2, slice_perimeter_nm=np.full(t.n_along, 100.0 / 8))
    assert_engines_agree(chain, np.array([5.0, 20.0]))


def test_energies_solved_in_several_groups_give_the_same_transmission(monkeypatch):
    t = tube("topological", length_nm=30.0)
    chain = t.chain(0.3, potential_meV=np.random.default_rng(1).uniform(-20, 20, (t.n_along, t.n_around)))
    e = np.linspace(3.0, 27.0, 5)
    together = transmission(chain, e)
    monkeypatch.setattr(slices, "ENERGY_GROUP_BYTES", 1)   # one energy per group
    np.testing.assert_array_equal(transmission(chain, e), together)
