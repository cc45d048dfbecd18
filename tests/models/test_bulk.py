"""3D four-band wire: bulk gap, surface Dirac cone of a slab, AB area, tube equivalence, engines."""

import warnings

import numpy as np
import pytest

from simsurface.errors import InputError, ValidityWarning
from simsurface.geometry import depth_from_area_nm
from simsurface.models import analytic
from simsurface.models import bulk_lattice as lat
from simsurface.models.bulk import BulkWire
from simsurface.models.bulk_params import (PRESETS, bulk_parameters, surface_dirac_point_meV,
                                           surface_mean_depth_nm, surface_velocity_meV_nm)
from simsurface.transport import conductance, transmission

ALL_SETS = list(PRESETS)
A = 0.5  # nm, lattice spacing of the small test wires


def isotropic(m0=300.0, a_coef=300.0):
    """Particle-hole symmetric, isotropic parameters with a short decay length (a double root λ = 2 M0/A).

    Every facet is then equivalent (same Dirac point and velocity), so a surface tube is the exact
    k_x = 0 description up to corners, lattice dispersion and the depth of the surface layer.
    """
    b = a_coef**2 / (4 * m0)
    return bulk_parameters("custom", C_meV=0.0, D1_meV_nm2=0.0, D2_meV_nm2=0.0, M0_meV=m0, B1_meV_nm2=b,
                           B2_meV_nm2=b, A1_meV_nm=a_coef, A2_meV_nm=a_coef)


def wire(params, size_nm, length_nm=1.5, shape="rectangle", **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return BulkWire.from_geometry(shape, size_nm, size_nm, length_nm, params, spacing_nm=A, **kw)


# --- bulk ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("name", ALL_SETS)
def test_lattice_bulk_gap_at_gamma_is_twice_M0(name):
    # Zhang et al., Nat. Phys. 5, 438 (2009): bands C ± M0 at Γ, each doubly degenerate
    p = PRESETS[name]
    e = np.linalg.eigvalsh(lat.bloch_hamiltonian_meV(p, np.zeros(3), 0.5))
    np.testing.assert_allclose(e, p.C_meV + p.M0_meV * np.array([-1, -1, 1, 1]), atol=1e-9)
    assert e[2] - e[1] == pytest.approx(2 * p.M0_meV)


@pytest.mark.parametrize("name", ALL_SETS)
def test_lattice_hamiltonian_reproduces_kp_model_to_third_order(name):
    # the discretization k -> sin(ka)/a, k² -> 2(1 − cos ka)/a² errs by O(k³a²) (common practice, no source):
    # halving k divides the error by 8 (A terms) to 16 (k² terms)
    p = PRESETS[name]
    direction = np.array([0.3, -0.5, 0.8])
    err = [np.abs(lat.bloch_hamiltonian_meV(p, k * direction, 0.5) - lat.bloch_hamiltonian_meV(p, k * direction, None)).max()
           for k in (0.2, 0.1)]
    assert 7.0 < err[0] / err[1] < 17.0


# --- surface states of a slab -------------------------------------------------------------------
@pytest.mark.parametrize("name", ALL_SETS)
@pytest.mark.parametrize("normal, direction", [("z", "x"), ("z", "y"), ("y", "x"), ("y", "z")])
def test_slab_surface_dirac_cone_matches_analytic_velocity(name, normal, direction):
    # Shan, Lu & Shen, New J. Phys. 12, 043048 (2010) (from memory) for the z facet:
    # E_D = C + D1 M0/B1, ħv = A2 (1 − D1²/B1²)^(1/2). For the y facet the same derivation (docs/bulk.md)
    # gives E_D = C + D2 M0/B2 and ħv_t = A_t (1 − D2²/B2²)^(1/2). The surface spinor does not depend on
    # the lattice spacing, so the lattice slab must reproduce both up to O(k²) at small k.
    p = PRESETS[name]
    e_d = surface_dirac_point_meV(p, normal)
    k = np.zeros(3)
    k["xyz".index(direction)] = 0.01 / A
    e0, _ = lat.slab_surface_states(p, A, normal, 100, e_d)
    ek, _ = lat.slab_surface_states(p, A, normal, 100, e_d, k)
    np.testing.assert_allclose(e0, e_d, atol=1e-4)
    v = (ek.max() - ek.min()) / 2 / (np.sin(0.01) / A)
    assert v == pytest.approx(surface_velocity_meV_nm(p, normal, direction), rel=1e-6)


@pytest.mark.parametrize("normal", ["y", "z"])
def test_slab_depth_converges_to_continuum_profile(normal):
    # continuum envelope e^{−λ1 r} − e^{−λ2 r} (Shan, Lu & Shen 2010, from memory); the lattice hard wall
    # sits half a spacing outside the cell edge, so lattice depth -> continuum depth − a/2 as O(a²)
    p = PRESETS["Bi2Se3_zhang2009"]
    target = surface_mean_depth_nm(p, normal)
    errs = [abs(lat.slab_mean_depth_nm(p, a, normal) - (target - a / 2)) for a in (0.5, 0.25)]
    assert errs[0] < 0.15
    assert errs[1] < errs[0] / 2.5


# --- wire: Aharonov–Bohm area and the surface tube -------------------------------------------------
def test_ab_area_is_set_by_surface_state_depth():
    # The l = 0 Dirac subbands cross at Φ = h/2e through the area enclosed by the surface state
    # (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)). The depth that reproduces the crossing must
    # be the slab's mean surface-state depth to within the lattice resolution a/2, and a few spacings.
    # The continuum envelope (double root λ = 2M0/A here, mean depth 3/(2λ); Shan, Lu & Shen 2010 form,
    # from memory) measured from the lattice cell edge is that depth minus a/2.
    p = isotropic()
    w = wire(p, 4.0)
    depth = depth_from_area_nm("rectangle", w.width_nm, w.thickness_nm, w.effective_area_nm2())
    assert abs(depth - w.depth_z_nm) < A / 2
    assert abs(depth - (surface_mean_depth_nm(p, "z") - A / 2)) < A / 2
    assert 0.5 * A < depth < 5 * A


@pytest.mark.slow
def test_ab_area_of_bi2se3_wire_follows_facet_depths():
    # Bi2Se3 (Zhang 2009 set) 10 nm x 10 nm: the surface state sits 0.54 nm below the z facets and 1.8 nm
    # below the y facets (slab); the AB area must be (w − 2 d_y)(t − 2 d_z) within ±a/2 on each depth.
    w = wire(PRESETS["Bi2Se3_zhang2009"], 10.0)
    a_eff = w.effective_area_nm2()
    lo = (w.width_nm - 2 * w.depth_y_nm - A) * (w.thickness_nm - 2 * w.depth_z_nm - A)
    hi = (w.width_nm - 2 * w.depth_y_nm + A) * (w.thickness_nm - 2 * w.depth_z_nm + A)
    assert lo < a_eff < hi


def _levels_vs_tube(w, flux, e_max):
    """3D k_x = 0 levels above the equivalent tube's Dirac point, the tube's analytic ones, the spacing."""
    tp = w.tube_parameters()
    e = w.subband_energies_meV(flux) - tp["dirac_point_meV"]
    tube = analytic.dirac_subband_bottoms_meV(flux, tp["perimeter_nm"], tp["hbar_v_meV_nm"],
                                              analytic.angular_indices(20))
    tube = np.sort(tube[tube < e_max])
    return np.sort(e[e > 0])[: tube.size], tube, 2 * np.pi * tp["hbar_v_meV_nm"] / tp["perimeter_nm"]


# stated accuracy of the tube description of a 3D wire (docs/bulk.md): subband thresholds within 0.2 of
# the subband spacing 2πħv/P, measured 0.12 (isotropic, 6 nm) and 0.17 (Bi2Se3, 10 nm)
TUBE_ACCURACY = 0.2


@pytest.mark.parametrize("flux", [0.0, 0.25])
def test_surface_tube_reproduces_3d_subband_thresholds(flux):
    w = wire(isotropic(), 6.0)
    e3d, tube, spacing = _levels_vs_tube(w, flux, 0.8 * w.params.M0_meV)
    assert tube.size >= 4
    np.testing.assert_allclose(e3d, tube, atol=TUBE_ACCURACY * spacing)


@pytest.mark.slow
@pytest.mark.parametrize("flux", [0.0, 0.25])
def test_surface_tube_reproduces_bi2se3_subband_thresholds(flux):
    # anisotropic facets: tube velocity = harmonic mean of the facet velocities, Dirac point = 1/v-weighted
    # mean of the facet Dirac points (continuum, derived in docs/bulk.md)
    w = wire(PRESETS["Bi2Se3_zhang2009"], 10.0)
    e3d, tube, spacing = _levels_vs_tube(w, flux, 150.0)
    assert tube.size >= 3
    np.testing.assert_allclose(e3d, tube, atol=TUBE_ACCURACY * spacing)


def test_clean_3d_conductance_equals_tube_channel_count():
    # clean conductance = number of open Dirac subbands (Bardarson, Brouwer & Moore 2010), no spin factor;
    # energies midway between the tube's thresholds at Φ = 0.25 h/e
    w = wire(isotropic(), 4.0, length_nm=1.0)
    tp = w.tube_parameters()
    energies = np.array([-74.0, 18.0, 74.0, 150.0])
    expected = analytic.dirac_channel_count(energies, 0.25, tp["perimeter_nm"], tp["hbar_v_meV_nm"])[0]
    np.testing.assert_array_equal(expected, [1, 0, 1, 2])
    np.testing.assert_allclose(conductance(w.chain(0.25), energies), expected, atol=1e-6)


# --- engines, disorder, roughness -------------------------------------------------------------------
@pytest.mark.parametrize("shape", ["rectangle", "circle"])
def test_slice_engine_matches_kwant_on_disordered_rough_3d_wire(shape):
    # kwant's own scattering solver (reference library) on the same lattice
    w = wire(PRESETS["Bi2Se3_zhang2009"], 3.0, length_nm=1.5, shape=shape, lead_doping_meV=40.0)
    pot = w.random_potential_meV(150.0, seed=3)
    vac = w.random_vacancies(0.2, seed=4)
    chain = w.chain(0.37, pot, vacancies=vac)
    e = np.array([-300.0, -400.0])  # a 3 nm wire is gapped from −224 to +525 meV: use its valence subbands
    reference = transmission(chain, e, engine="kwant")
    assert reference.min() > 0.1
    np.testing.assert_allclose(transmission(chain, e), reference, atol=1e-8)


def test_roughness_removes_only_surface_sites():
    w = wire(isotropic(), 4.0)
    vac = w.random_vacancies(0.5, seed=1)
    assert vac.any()
    assert not (vac & ~w.sites.surface[None, :]).any()
    assert w.sites.surface.sum() == 4 * 8 - 4


def test_circle_keeps_sites_inside_the_disc():
    w = wire(isotropic(), 6.0, shape="circle")
    r = np.hypot(w.sites.y_nm, w.sites.z_nm)
    assert r.max() <= 3.0
    assert abs(w.sites.n_sites * A**2 - np.pi * 9.0) < np.pi * 6.0 * A  # area within one perimeter strip


def test_spacing_outside_single_inversion_is_refused():
    with pytest.raises(InputError, match="lattice_spacing_nm"):
        BulkWire.from_geometry("rectangle", 10, 10, 5, PRESETS["Bi2Se3_zhang2009"], spacing_nm=1.5)


def test_energies_outside_validity_window_warn():
    w = wire(isotropic(), 4.0)
    with pytest.warns(ValidityWarning, match="validity window"):
        w.check_energies(np.array([0.0, 2 * w.validity_meV[1]]))


def test_chosen_spacing_keeps_requested_window_valid():
    p = PRESETS["Bi2Se3_zhang2009"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        w = BulkWire.from_geometry("rectangle", 10, 10, 5, p, energy_window_meV=(-150.0, 150.0))
    lo, hi = w.validity_meV
    assert lo <= -150.0 and hi >= 150.0
    assert w.spacing_nm <= 0.95 * lat.max_spacing_nm(p)


def test_clean_wire_levels_are_kramers_degenerate_at_zero_flux():
    # the four-band lattice model is time-reversal invariant (Θ = i s_y K; its Wilson-like B terms are
    # TR-even): at Φ = 0 every k_x = 0 level is doubly degenerate (Kramers); at Φ = 0.25 h/e they split
    w = wire(PRESETS["Bi2Se3_zhang2009"], 3.0)
    e0 = np.sort(w.subband_energies_meV(0.0))
    np.testing.assert_allclose(e0[0::2], e0[1::2], atol=1e-8)
    e1 = np.sort(w.subband_energies_meV(0.25))
    assert np.abs(e1[0::2] - e1[1::2]).max() > 1.0


def test_disordered_rough_wire_obeys_onsager_symmetry():
    # two-terminal G(−Φ) = G(Φ) (Onsager; Büttiker, PRL 57, 1761 (1986))
    w = wire(PRESETS["Bi2Se3_zhang2009"], 3.0, length_nm=1.5)
    pot, vac = w.random_potential_meV(150.0, seed=5), w.random_vacancies(0.2, seed=6)
    e = np.array([-300.0, -400.0])  # valence subbands of the 3 nm wire (gapped from −224 to +525 meV)
    g = transmission(w.chain(0.3, pot, vacancies=vac), e, engine="kwant")
    assert g.min() > 0.1
    np.testing.assert_allclose(g, transmission(w.chain(-0.3, pot, vacancies=vac), e, engine="kwant"), atol=1e-9)


@pytest.mark.parametrize("shape, size_nm", [("rectangle", 4.0), ("rectangle", 3.5), ("circle", 3.5)])
def test_lead_is_block_diagonal_in_the_rotation_basis(shape, size_nm):
    # C2 about the wire axis, (y, z) -> (−y, −z) with spin factor s_x, is a symmetry of the k·p model and of
    # the symmetric gauge (common practice, no source): the declared basis must split the lead in two blocks
    w = wire(PRESETS["Bi2Se3_zhang2009"], size_nm, shape=shape)
    lead = w.chain(0.37).left
    u, b = lead.transverse_basis, lead.block_size
    np.testing.assert_allclose(u.conj().T @ u, np.eye(u.shape[0]), atol=1e-12)
    for m in (lead.onsite, lead.hopping):
        x = u.conj().T @ m @ u
        assert np.abs(x[:b, b:]).max() < 1e-9 * np.abs(m).max()
        assert np.abs(x[b:, :b]).max() < 1e-9 * np.abs(m).max()


@pytest.mark.parametrize("name", ALL_SETS)
def test_band_edges_come_from_the_dispersion_not_from_gamma(name):
    """The valence maximum lies away from Γ (review: −193 meV for the Zhang set, −72 meV for the Liu set, from
    the k·p zero); checked against the eigenvalues of the continuum 4 × 4 Bloch Hamiltonian on a 3D k grid."""
    from simsurface.models.bulk_params import bulk_band_edges_meV

    p = PRESETS[name]
    valence, conduction = bulk_band_edges_meV(p)
    grid = np.linspace(0, 1.2, 61)                      # the maximum sits at k_⊥ ≈ 0.6 … 0.9 /nm
    energies = np.array([np.linalg.eigvalsh(lat.bloch_hamiltonian_meV(p, np.array([kx, 0.0, kz]), None))
                         for kx in grid for kz in grid])
    assert valence == pytest.approx(energies[:, 1].max(), abs=2.0)
    assert conduction == pytest.approx(energies[:, 2].min(), abs=2.0)
    assert valence >= energies[:, 1].max() - 1e-9 and conduction <= energies[:, 2].min() + 1e-9
    assert valence > p.C_meV - p.M0_meV + 50          # far above the Γ value C − M0
    expected = {"Bi2Se3_zhang2009": -193.0, "Bi2Se3_liu2010": -72.0}[name]
    assert valence == pytest.approx(expected, abs=1.0)
    edges = BulkWire.from_geometry("rectangle", 8.0, 8.0, 5.0, p, energy_window_meV=(-20.0, 20.0),
                                   spacing_nm=0.8).describe()["bulk_gap_edges_meV"]
    np.testing.assert_allclose(edges, np.array([valence, conduction]) - surface_dirac_point_meV(p, "z"))
