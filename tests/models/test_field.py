"""Zeeman term and tilted field on the surface models (simsurface.models.field, docs/fields.md).

Outside references: the Dirac tube spectrum (Zhang & Vishwanath, PRL 105, 206601 (2010); Bardarson,
Brouwer & Moore, PRL 105, 156803 (2010)); μ_B and h/e from scipy.constants (CODATA 2018); Onsager–Büttiker
reciprocity G(B) = G(−B) of a two-terminal conductor (Büttiker, PRL 57, 1761 (1986)); kwant's scattering
solver as the reference engine. The axial-Zeeman ↔ flux equivalence and the chiral zero mode are derived in
docs/fields.md.
"""

import numpy as np
import pytest
from scipy import constants

from simsurface.errors import InputError
from simsurface.geometry import CrossSection
from simsurface.models import analytic
from simsurface.models.field import AppliedField, zeeman_flux_shift_quanta
from simsurface.models.modes import ModeTube
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance

HBAR_V = 330.0
SECTION = CrossSection.circle(40.0)
P, A = SECTION.perimeter_nm, SECTION.area_nm2
MU_B_MEV_PER_T = constants.physical_constants["Bohr magneton in eV/T"][0] * 1e3
PHI0_T_NM2 = constants.h / constants.e * 1e18


def kappa_per_flux(g):
    """δφ per unit of φ from the derived formula δφ = g μ_B B P/(4πħv), B = φ Φ0/A (constants from scipy)."""
    return g * MU_B_MEV_PER_T * (PHI0_T_NM2 / A) * P / (4 * np.pi * HBAR_V)


def mode_tube(field=None, length_nm=200.0, section=SECTION, **kw):
    return ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, length_nm, hbar_v_meV_nm=HBAR_V,
                                  max_energy_meV=30.0, field=field, section=section, **kw)


def test_zeeman_flux_shift_formula_matches_scipy_constants():
    # 100 nm circle, g = 20, 1 T: δφ = g μ_B B P/(4πħv), each constant from scipy
    value = zeeman_flux_shift_quanta(20.0, 1.0, np.pi * 100.0, HBAR_V)
    expected = 20.0 * constants.value("Bohr magneton") / (constants.e * 1e-3) * np.pi * 100.0 / (4 * np.pi * HBAR_V)
    assert value == pytest.approx(expected, rel=1e-12)


def test_axial_zeeman_shifts_mode_tube_subband_edges_like_extra_flux():
    g, phi = 25.0, 0.3
    tube = mode_tube(AppliedField(g_factor=g))
    edges = tube.lattice_subband_bottoms_meV(phi)
    l = np.arange(-tube.max_mode - 1, tube.max_mode + 1)
    shifted = phi * (1 - kappa_per_flux(g))
    expected = analytic.dirac_subband_bottoms_meV(shifted, P, HBAR_V, l)
    np.testing.assert_allclose(np.sort(edges), np.sort(expected), rtol=1e-12)


def test_lattice_tube_zeeman_term_acts_as_the_derived_flux_shift():
    """The lattice tube adds (g μ_B B_x/2) σ·e_x on every site (no flux shift in its code); its k = 0 levels
    must follow the continuum levels at the shifted flux within the lattice error (small q a)."""
    g, phi = 25.0, 0.3
    tube = SurfaceTube.from_geometry("topological", P, A, 100.0, hbar_v_meV_nm=HBAR_V, max_energy_meV=30.0,
                                     spacing_nm=0.5, field=AppliedField(g_factor=g), section=SECTION)
    lattice = np.sort(tube.lattice_subband_bottoms_meV(phi))[:6]
    numeric = np.sort(np.abs(tube.transverse_energies_meV(phi)))[:12:2]      # the clean lead's cell at k = 0
    np.testing.assert_allclose(numeric, lattice, rtol=1e-9)
    continuum = np.sort(analytic.dirac_subband_bottoms_meV(phi * (1 - kappa_per_flux(g)), P, HBAR_V,
                                                           np.arange(-5, 5)))[:6]
    np.testing.assert_allclose(lattice, continuum, rtol=0.01)


@pytest.mark.parametrize("model", ["modes", "lattice"])
def test_zeeman_moves_the_gapless_mode_to_the_derived_flux(model):
    """Near the Dirac point only the gapless mode conducts, at effective flux 1/2: φ(1 − κ) = 1/2."""
    g = 30.0
    field = AppliedField(g_factor=g)
    if model == "modes":
        tube = mode_tube(field)
    else:
        tube = SurfaceTube.from_geometry("topological", P, A, 200.0, hbar_v_meV_nm=HBAR_V, max_energy_meV=30.0,
                                         spacing_nm=1.0, field=field, section=SECTION)
    kappa = kappa_per_flux(g)
    assert 0.15 < kappa < 0.2          # a 17 % shift: the bare flux 1/2 is far outside the window
    centre = 0.5 / (1 - kappa)
    g_centre = conductance(tube.chain(centre), [0.3], "slices")[0]
    g_bare = conductance(tube.chain(0.5), [0.3], "slices")[0]
    assert g_centre == pytest.approx(1.0, abs=1e-6)
    assert g_bare == pytest.approx(0.0, abs=1e-6)


def test_clean_conductance_with_zeeman_equals_channel_count_at_shifted_flux():
    g = 20.0
    tube = mode_tube(AppliedField(g_factor=g))
    energies = np.array([7.0, 19.0, 27.0])
    for phi in (0.1, 0.45, 0.8):
        got = conductance(tube.chain(phi), energies, "slices")
        count = analytic.dirac_channel_count(energies, [phi * (1 - kappa_per_flux(g))], P, HBAR_V)[0]
        np.testing.assert_allclose(got, count, atol=0.08)      # axial discretization error (docs/modes.md)


def test_zero_g_and_zero_angle_give_todays_chains_exactly():
    rng = np.random.default_rng(5)
    plain, zero = mode_tube(None), mode_tube(AppliedField(angle_deg=0.0, azimuth_deg=37.0, g_factor=0.0))
    pot = rng.uniform(-60, 60, (plain.n_cells, plain.n_grid))
    a, b = plain.chain(0.37, potential_meV=pot), zero.chain(0.37, potential_meV=pot)
    assert np.array_equal(a.onsite_values, b.onsite_values) and np.array_equal(a.coupling_values, b.coupling_values)
    assert np.array_equal(a.left.onsite, b.left.onsite)
    for surface, scale in (("topological", {"hbar_v_meV_nm": HBAR_V}), ("trivial", {"mass_ratio": 0.03})):
        t0 = SurfaceTube.from_geometry(surface, P, A, 60.0, max_energy_meV=20.0, **scale)
        t1 = SurfaceTube.from_geometry(surface, P, A, 60.0, max_energy_meV=20.0, section=SECTION,
                                       field=AppliedField(0.0, 45.0, 0.0), **scale)
        c0, c1 = t0.chain(0.37), t1.chain(0.37)
        assert np.array_equal(c0.onsite_values, c1.onsite_values)
        assert np.array_equal(c0.coupling_values, c1.coupling_values) and c0.degeneracy == c1.degeneracy


def test_small_g_is_continuous_with_zero_g():
    tube0, tube1 = mode_tube(None), mode_tube(AppliedField(g_factor=1e-9))
    g0 = conductance(tube0.chain(0.37), [12.0], "slices")
    g1 = conductance(tube1.chain(0.37), [12.0], "slices")
    np.testing.assert_allclose(g1, g0, atol=1e-8)


@pytest.mark.parametrize("angle", [0.0, 30.0])
def test_tilted_field_period_scales_as_one_over_cos(angle):
    """Chiral symmetry (no Zeeman, no potential) keeps an exact zero mode at axial flux n + 1/2 whatever the
    perpendicular field (docs/fields.md): G(E → 0) = 1 exactly at φ cos θ = 1/2, 3/2, and the mode is gapped
    an eighth of an axial period away."""
    tube = mode_tube(AppliedField(angle_deg=angle), length_nm=300.0)
    c = np.cos(np.radians(angle))
    for n in (0, 1):
        on = conductance(tube.chain((n + 0.5) / c), [0.05], "slices")[0]
        off = [conductance(tube.chain((n + 0.5 + d) / c), [0.05], "slices")[0] for d in (-0.125, 0.125)]
        assert on == pytest.approx(1.0, abs=1e-6)
        np.testing.assert_allclose(off, 0.0, atol=1e-3)


def test_tilted_wire_with_zeeman_and_disorder_is_onsager_symmetric():
    section = CrossSection.rectangle(40.0, 25.0)
    tube = mode_tube(AppliedField(angle_deg=50.0, azimuth_deg=20.0, g_factor=15.0), section=section)
    pot = np.random.default_rng(3).uniform(-100, 100, (tube.n_cells, tube.n_grid))
    for phi in (0.37, 1.3):
        forward = conductance(tube.chain(phi, potential_meV=pot), [12.0, 25.0], "slices")
        backward = conductance(tube.chain(-phi, potential_meV=pot), [12.0, 25.0], "slices")
        np.testing.assert_allclose(forward, backward, atol=1e-10)
        assert np.all(forward > 0.1)


def test_tilted_zeeman_trivial_tube_is_onsager_symmetric():
    section = CrossSection.rectangle(30.0, 20.0)
    tube = SurfaceTube.from_geometry("trivial", section.perimeter_nm, section.area_nm2, 60.0, mass_ratio=0.03,
                                     max_energy_meV=25.0, section=section, rashba_meV_nm=15.0,
                                     field=AppliedField(angle_deg=35.0, azimuth_deg=60.0, g_factor=-8.0))
    pot = np.random.default_rng(4).uniform(-30, 30, (tube.n_along, tube.n_around))
    forward = conductance(tube.chain(0.8, potential_meV=pot), [15.0], "slices")
    backward = conductance(tube.chain(-0.8, potential_meV=pot), [15.0], "slices")
    np.testing.assert_allclose(forward, backward, atol=1e-9)


def test_tilted_chains_agree_with_kwant():
    tube = mode_tube(AppliedField(angle_deg=40.0, g_factor=10.0), length_nm=60.0,
                     section=CrossSection.rectangle(30.0, 20.0))
    chain = tube.chain(0.9)
    np.testing.assert_allclose(conductance(chain, [8.0, 21.0], "slices"), conductance(chain, [8.0, 21.0], "kwant"),
                               atol=1e-8)
    lattice = SurfaceTube.from_geometry("topological", P, A, 30.0, hbar_v_meV_nm=HBAR_V, max_energy_meV=25.0,
                                        section=SECTION, field=AppliedField(angle_deg=40.0, g_factor=10.0))
    chain = lattice.chain(0.9)
    np.testing.assert_allclose(conductance(chain, [8.0, 21.0], "slices"), conductance(chain, [8.0, 21.0], "kwant"),
                               atol=1e-8)


def test_zeeman_splits_the_spin_degenerate_trivial_tube():
    """Without spin–orbit coupling the Zeeman term splits each subband by ±g μ_B B/2 (any field direction)."""
    g, phi, mass = -12.0, 0.35, 0.03
    tube = SurfaceTube.from_geometry("trivial", P, A, 40.0, mass_ratio=mass, max_energy_meV=25.0, spacing_nm=0.4,
                                     field=AppliedField(g_factor=g), section=SECTION)
    half = 0.5 * abs(g) * MU_B_MEV_PER_T * phi * PHI0_T_NM2 / A
    energies = np.array([3.0, 9.0, 17.0])
    expected = sum(analytic.parabolic_channel_count(energies + sign * half, [phi], P, mass, spin_degeneracy=1)[0]
                   for sign in (1, -1))
    np.testing.assert_allclose(conductance(tube.chain(phi), energies, "slices"), expected, atol=0.02)


def test_field_angle_out_of_range_names_the_field():
    with pytest.raises(InputError, match="field_angle_deg"):
        AppliedField(angle_deg=120.0)


def test_batched_stacks_take_the_field_terms():
    """The batched engine's stacks (simsurface.transport.stack) group fluxes by the mode set of the effective
    flux and carry the field terms: the same transmissions as the per-flux chains."""
    from simsurface.transport import transmission
    from simsurface.transport.batched import transmission_stack

    tube = mode_tube(AppliedField(angle_deg=25.0, g_factor=20.0), length_nm=60.0)
    pot = np.random.default_rng(8).uniform(-40, 40, (tube.n_cells, tube.n_grid))
    fluxes, energies = np.array([0.1, 0.55, 1.2]), np.array([6.0, 18.0])
    for idx, stack in tube.chain_stacks(fluxes, energies, potential_meV=pot):
        got = transmission_stack(stack).reshape(idx.size, energies.size)
        for k, i in enumerate(idx):
            ref = transmission(tube.chain(fluxes[i], potential_meV=pot), energies)
            np.testing.assert_allclose(got[k], ref, atol=1e-8)
