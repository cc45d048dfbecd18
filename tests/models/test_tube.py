"""Lattice tube against the analytic channel count and the symmetries of two-terminal transport."""

import warnings

import numpy as np
import pytest

from simsurface.errors import InputError, ValidityWarning
from simsurface.models import analytic
from simsurface.models.tube import SurfaceTube
from simsurface.transport import conductance

HBAR_V = 330.0
MASS = 0.023
PERIMETER = 160.0
AREA = 1900.0


def tube(surface, length_nm=60.0, **kw):
    scale = {"hbar_v_meV_nm": HBAR_V} if surface == "topological" else {"mass_ratio": MASS}
    return SurfaceTube.from_geometry(surface, PERIMETER, AREA, length_nm, max_energy_meV=40.0, **scale, **kw)


def analytic_count(surface, energies, flux):
    if surface == "topological":
        return analytic.dirac_channel_count(energies, flux, PERIMETER, HBAR_V)[0]
    return analytic.parabolic_channel_count(energies, flux, PERIMETER, MASS)[0]


def energies_between_thresholds(surface, flux, e_max, margin=0.06):
    """Energies midway between analytic subband bottoms, at least `margin` (relative) from each."""
    idx = analytic.angular_indices(30)
    if surface == "topological":
        b = analytic.dirac_subband_bottoms_meV(flux, PERIMETER, HBAR_V, idx)
    else:
        b = analytic.parabolic_subband_bottoms_meV(flux, PERIMETER, MASS, idx)
    b = np.unique(np.round(np.concatenate([[0.0], b[b < e_max]]), 9))
    mids = (b[:-1] + b[1:]) / 2
    ok = (b[1:] - b[:-1]) > 2 * margin * b[1:]
    return mids[ok]


@pytest.mark.parametrize("surface", ["topological", "trivial"])
@pytest.mark.parametrize("flux", [0.0, 0.17, 0.5])
def test_clean_lattice_conductance_equals_analytic_channel_count(surface, flux):
    # spectrum: Zhang & Vishwanath, PRL 105, 206601 (2010); Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)
    t = tube(surface)
    e = energies_between_thresholds(surface, flux, 0.9 * t.validity_limit_meV)
    assert e.size >= 3
    g = conductance(t.chain(flux), e)
    np.testing.assert_allclose(g, analytic_count(surface, e, flux), atol=1e-8)


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_kwant_solver_reproduces_analytic_channel_count(surface):
    # kwant's own scattering solver (a general-purpose reference library) on the same lattice
    t = tube(surface, length_nm=20.0)
    e = energies_between_thresholds(surface, 0.3, 0.9 * t.validity_limit_meV)[:4]
    g = conductance(t.chain(0.3), e, engine="kwant")
    np.testing.assert_allclose(g, analytic_count(surface, e, 0.3), atol=1e-8)


@pytest.mark.parametrize("surface", ["topological", "trivial"])
def test_disordered_conductance_is_flux_periodic(surface):
    # G(Φ + Φ0) = G(Φ): the Peierls phases depend on Φ only modulo Φ0 (Aharonov & Bohm 1959)
    t = tube(surface)
    pot = np.random.default_rng(7).uniform(-15, 15, (t.n_along, t.n_around))
    e = np.array([7.3, 18.1])
    np.testing.assert_allclose(conductance(t.chain(0.31, potential_meV=pot), e),
                               conductance(t.chain(1.31, potential_meV=pot), e), atol=1e-9)


def test_disordered_trivial_tube_obeys_onsager_exactly():
    # two-terminal G(−Φ) = G(Φ) (Onsager; Büttiker, PRL 57, 1761 (1986))
    t = tube("trivial")
    pot = np.random.default_rng(8).uniform(-15, 15, (t.n_along, t.n_around))
    e = np.array([7.3, 18.1])
    np.testing.assert_allclose(conductance(t.chain(0.31, potential_meV=pot), e),
                               conductance(t.chain(-0.31, potential_meV=pot), e), atol=1e-9)


def test_clean_topological_tube_obeys_onsager_exactly():
    t = tube("topological")
    e = np.linspace(1.0, 0.9 * t.validity_limit_meV, 9)
    np.testing.assert_allclose(conductance(t.chain(0.23), e), conductance(t.chain(-0.23), e), atol=1e-9)


def smooth_potential(t):
    """A potential defined in nm, the same physical landscape for every lattice spacing."""
    x, s = t.site_positions_nm()
    xx, ss = np.meshgrid(x, s, indexing="ij")
    return (15 * np.sin(2 * np.pi * xx / 23.0 + 1.3) * np.cos(6 * np.pi * ss / PERIMETER)
            + 10 * np.cos(2 * np.pi * xx / 37.0) * np.sin(4 * np.pi * ss / PERIMETER + 0.4))


def test_onsager_violation_of_disordered_dirac_tube_is_a_vanishing_lattice_artefact():
    # The Wilson mass breaks time reversal, so the lattice Dirac tube obeys G(−Φ) = G(Φ) only up to a
    # lattice error that must shrink towards the continuum (Onsager relation of the continuum model:
    # Büttiker, PRL 57, 1761 (1986)); what we observe: ~3e-4 e²/h at the default spacing, halving with a.
    e = np.array([7.3, 18.1])
    dev = []
    for e_window in (40.0, 80.0):
        t = SurfaceTube.from_geometry("topological", PERIMETER, AREA, 60.0, hbar_v_meV_nm=HBAR_V,
                                      max_energy_meV=e_window)
        pot = smooth_potential(t)
        g_plus = conductance(t.chain(0.31, potential_meV=pot), e)
        g_minus = conductance(t.chain(-0.31, potential_meV=pot), e)
        dev.append(np.max(np.abs(g_plus - g_minus)))
    assert dev[0] < 1e-3
    assert dev[1] < 0.7 * dev[0]


def test_half_flux_tube_is_odd_and_zero_flux_tube_is_gapped():
    # topological tube: odd channel number at Φ0/2; at Φ = 0 even, with a gap 2πħv/P around E = 0
    t = tube("topological")
    gap = analytic.dirac_gap_meV(PERIMETER, HBAR_V)
    e = np.linspace(0.02, 0.9 * t.validity_limit_meV, 23)
    g_half = conductance(t.chain(0.5), e)
    g_zero = conductance(t.chain(0.0), e)
    assert np.all(np.round(g_half) % 2 == 1)
    assert np.all(np.round(g_zero) % 2 == 0)
    inside_gap = e < 0.45 * gap
    assert inside_gap.any() and np.all(g_zero[inside_gap] < 1e-8)


def test_lattice_subband_bottoms_approach_continuum_inside_window():
    t = tube("topological")
    latt = np.sort(t.lattice_subband_bottoms_meV(0.2))
    cont = np.sort(analytic.dirac_subband_bottoms_meV(0.2, PERIMETER, HBAR_V, np.arange(-t.n_around, t.n_around)))
    inside = latt < t.validity_limit_meV
    np.testing.assert_allclose(latt[inside], cont[: inside.sum()], rtol=0.05)


def test_spacing_rule_keeps_fermi_wavevector_small():
    t = tube("topological")
    assert t.n_around >= 8
    assert 40.0 / HBAR_V * t.spacing_nm <= 0.4 + 1e-12


def test_energy_beyond_validity_window_warns():
    t = tube("topological")
    with pytest.warns(ValidityWarning):
        t.check_energies([t.validity_limit_meV * 1.2])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        t.check_energies([t.validity_limit_meV * 0.9])


def test_doped_leads_beyond_the_band_are_rejected():
    with pytest.raises(InputError, match="lead_doping_meV"):
        tube("topological", lead_doping_meV=1e5)
