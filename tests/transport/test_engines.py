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
