"""Lead terms: the block (transverse Fourier) solver against the generic 2n eigenproblem, and checks."""

import numpy as np
import pytest

from simsurface.models.tube import SurfaceTube
from simsurface.transport import Lead
from simsurface.transport.leads import lead_terms, left_surface_green, right_surface_green

SCALE = {"topological": {"hbar_v_meV_nm": 330.0}, "trivial": {"mass_ratio": 0.03}}


def lead_of(surface, flux, doping=0.0, **kw):
    t = SurfaceTube.from_geometry(surface, 90.0, 640.0, 20.0, max_energy_meV=30.0, lead_doping_meV=doping,
                                  **SCALE[surface], **kw)
    return t.chain(flux).left


@pytest.mark.parametrize("surface", ["topological", "trivial"])
@pytest.mark.parametrize("flux", [0.0, 0.5, 0.29])
def test_block_lead_solver_equals_generic_solver(surface, flux):
    lead = lead_of(surface, flux, doping=8.0)
    plain = Lead(lead.onsite, lead.hopping)
    counts = []
    for e in (2.0, 14.0, 27.0):  # 2 meV lies in the zero-flux gap of the topological lead
        a, b = lead_terms(lead, e), lead_terms(plain, e)
        assert_same_lead_terms(a, b)
        counts.append(a.n_propagating)
    assert max(counts) > 1


def assert_same_lead_terms(a, b):
    assert a.n_propagating == b.n_propagating
    np.testing.assert_allclose(a.right_surface_green, b.right_surface_green, atol=1e-9)
    np.testing.assert_allclose(a.left_self_term, b.left_self_term, atol=1e-8)
    # mode bases may differ by a unitary inside degenerate groups; the projectors may not
    np.testing.assert_allclose(a.right_outgoing.conj().T @ a.right_outgoing,
                               b.right_outgoing.conj().T @ b.right_outgoing, atol=1e-8)
    np.testing.assert_allclose(a.left_incoming_source @ a.left_incoming_source.conj().T,
                               b.left_incoming_source @ b.left_incoming_source.conj().T, atol=1e-8)


def test_singular_hopping_blocks_fall_back_to_the_generalized_problem():
    lead = lead_of("topological", 0.3, wilson_ratio=1.0)  # nilpotent hopping blocks
    plain = Lead(lead.onsite, lead.hopping)
    a, b = lead_terms(lead, 11.0), lead_terms(plain, 11.0)
    np.testing.assert_allclose(a.right_surface_green, b.right_surface_green, atol=1e-9)


def test_surface_green_function_matches_the_existing_definition():
    lead = lead_of("trivial", 0.2)
    t = lead_terms(Lead(lead.onsite, lead.hopping), 9.0)
    np.testing.assert_allclose(t.right_surface_green, right_surface_green(lead, 9.0), atol=1e-12)
    # V† F̃ is the self-energy of the cells left of −1: V† g_L V with g_L the left surface Green's function
    np.testing.assert_allclose(t.left_self_term,
                               lead.hopping.conj().T @ left_surface_green(lead, 9.0) @ lead.hopping,
                               atol=1e-9)


def test_wrong_transverse_basis_is_refused():
    lead = lead_of("trivial", 0.2)
    n = lead.onsite.shape[0]
    with pytest.raises(ValueError, match="block-diagonalize"):
        lead_terms(Lead(lead.onsite, lead.hopping, transverse_basis=np.eye(n), block_size=1), 5.0)


@pytest.mark.parametrize("flux", [0.0, 0.5])
def test_degenerate_subbands_in_different_blocks_stay_on_the_batched_path(monkeypatch, flux):
    # at Φ = 0 and 1/2 the subbands l and −l−1 (or −l) are degenerate but live in different Fourier blocks,
    # so the batched solver needs no per-block generalized eigenproblem
    from simsurface.transport import leads

    lead = lead_of("topological", flux)

    def refuse(*args, **kwargs):
        raise AssertionError("fell back to the per-block solver")

    monkeypatch.setattr(leads, "lead_modes", refuse)
    assert lead_terms(lead, 28.0).n_propagating >= 2


@pytest.mark.parametrize("flux", [0.0, 0.5, 0.29])
def test_staggered_pairs_of_the_mode_tube_stay_on_the_batched_path(monkeypatch, flux):
    # every 2 × 2 block of the mode tube's lead has a degenerate propagating pair at λ = −1 (one right-,
    # one left-moving); the batched solver rotates it to diagonal velocity and must agree with the
    # generic 2n eigenproblem (kept separate from the monkeypatched per-block solver)
    from simsurface.models.modes import ModeTube
    from simsurface.transport import leads

    tube = ModeTube.from_geometry(90.0, 640.0, 20.0, hbar_v_meV_nm=330.0, max_energy_meV=30.0, lead_doping_meV=6.0)
    counts = []
    for e in (2.0, 14.0, 27.0):
        lead = tube.chain(flux).left.at_energy(e)
        b = lead_terms(Lead(lead.onsite, lead.hopping), e)
        with monkeypatch.context() as m:
            m.setattr(leads, "lead_modes", lambda *a, **k: (_ for _ in ()).throw(AssertionError("fell back")))
            a = lead_terms(lead, e)
        assert_same_lead_terms(a, b)
        assert a.n_propagating >= lead.onsite.shape[0] // 2         # one staggered channel per mode
        counts.append(a.n_propagating - lead.onsite.shape[0] // 2)
    assert max(counts) >= 2


def test_cached_lead_terms_are_the_first_solution_and_the_cache_keeps_its_byte_budget(monkeypatch):
    # infrastructure check (common practice, no source): a cache must not change a number or grow unbounded
    from simsurface.transport import leads

    leads.clear_lead_cache()
    tube = SurfaceTube.from_geometry("topological", 40.0, 120.0, 20.0, hbar_v_meV_nm=330.0, max_energy_meV=40.0)
    lead = tube.chain(0.3).left
    first = leads.lead_terms(lead, 17.0)
    again = leads.lead_terms(Lead(lead.onsite.copy(), lead.hopping.copy(), lead.transverse_basis,
                                  lead.block_size), 17.0)
    assert again is first                                            # same content: served from the cache
    assert not first.right_surface_green.flags.writeable            # nobody can change a cached term
    other = leads.lead_terms(lead, 17.5)
    assert other is not first
    assert not np.allclose(other.right_surface_green, first.right_surface_green)
    size = leads._nbytes(first)
    monkeypatch.setattr(leads, "LEAD_CACHE_BYTES", int(2.5 * size))
    leads.clear_lead_cache()
    for e in (10.0, 11.0, 12.0, 13.0):
        leads.lead_terms(lead, e)
    assert leads._cache_bytes <= 2.5 * size and len(leads._cache) == 2
    fresh = leads._solve_lead_terms(lead, 13.0)                      # uncached solution, same numbers
    np.testing.assert_array_equal(fresh.right_surface_green, leads.lead_terms(lead, 13.0).right_surface_green)
    leads.clear_lead_cache()
