"""Shared fixtures: one small disordered lattice tube, its coherent G(Φ) over one flux period (~3 s)."""

import pytest

from simsurface.geometry import CrossSection
from simsurface.measured.synthetic import SyntheticSample, coherent_flux_curve


@pytest.fixture(scope="session")
def small_sample():
    # invented ribbon; small so that the lattice has 33 x 19 sites (period 1.29 T)
    return SyntheticSample("TT-1", CrossSection.rectangle(100.0, 40.0, 3.0), length_nm=150.0, energy_meV=14.0,
                           disorder_meV=60.0, seed=5)


@pytest.fixture(scope="session")
def small_curve(small_sample):
    return coherent_flux_curve(small_sample, n_flux=24)
