"""Slice engine against kwant's scattering solver (a general-purpose reference library)."""

import numpy as np
import pytest

from simsurface.models.tube import SurfaceTube
from simsurface.transport import transmission


@pytest.mark.parametrize("surface,extra", [("topological", {"hbar_v_meV_nm": 300.0}),
                                           ("trivial", {"mass_ratio": 0.03})])
def test_slice_engine_matches_kwant_on_rough_disordered_tube_with_doped_leads(surface, extra):
    rng = np.random.default_rng(11)
    t = SurfaceTube.from_geometry(surface, 120.0, 1100.0, 80.0, max_energy_meV=30.0,
                                  lead_doping_meV=20.0, **extra)
    pot = rng.uniform(-25, 25, (t.n_along, t.n_around))
    vac = rng.random((t.n_along, t.n_around)) < 0.03
    per = 120.0 + rng.normal(0, 2.0, t.n_along)
    chain = t.chain(0.37, potential_meV=pot, vacancies=vac, slice_perimeter_nm=per,
                    slice_flux_quanta=0.37 * (per / 120.0) ** 2)
    e = np.array([3.0, 11.0, 24.0])
    a = transmission(chain, e, engine="slices")
    b = transmission(chain, e, engine="kwant")
    assert np.max(np.abs(a - b)) < 1e-8
    assert b.max() > 0.5  # a non-trivial comparison


def _energy_dependent_chain():
    from tests.transport.test_chain import dense_chain

    return dense_chain(np.random.default_rng(21), n=3, n_slices=5, share_leads=False)


def test_energy_dependent_chain_is_solved_energy_by_energy_with_both_engines():
    # kwant's scattering solver (reference library) on E P − H; the slice engine must agree to 1e-8
    from simsurface.transport import kwant_engine, slices

    chain = _energy_dependent_chain()
    e = np.array([-0.7, 0.4, 1.3])
    a = transmission(chain, e, engine="slices")
    b = transmission(chain, e, engine="kwant")
    manual = np.array([slices.transmission(chain.at_energy(x), [x])[0] for x in e])
    np.testing.assert_allclose(a, manual, atol=1e-12)
    assert np.max(np.abs(a - b)) < 1e-8 and b.max() > 0.1
    for engine in (slices, kwant_engine):      # the engines refuse to ignore an overlap silently
        with pytest.raises(ValueError, match="energy-dependent"):
            engine.transmission(chain, e)


def test_kwant_reuses_one_system_for_all_energies_of_an_energy_dependent_chain():
    from simsurface.transport import kwant_engine

    chain = _energy_dependent_chain()
    keys = {kwant_engine._pattern_key(chain.at_energy(x)) for x in (-0.7, 0.4, 1.3)}
    assert len(keys) == 1
