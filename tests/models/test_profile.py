"""A potential around the wire (simsurface.models.profile) in the mode and lattice tubes.

Outside references: the Dirac tube spectrum (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)); Bessel
functions from scipy.special (the Jacobi–Anger expansion e^{iz sin x} = Σ J_n(z) e^{inx}, textbook); the
tangent dispersion of the axial discretization (docs/modes.md). The gauge argument (k = 0 levels unchanged by
a zero-mean profile) and the first-order splitting ħv|J_1(2β)| k are derived in docs/fields.md.
"""

import numpy as np
import pytest
from scipy.special import jv

from simsurface.errors import InputError
from simsurface.models.modes import ModeTube
from simsurface.models.profile import checked_profile_meV, profile_at_meV
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance

HBAR_V, P = 330.0, 62.83
E0 = np.pi * HBAR_V / P                 # lowest subband edge at Φ = 0
BETA = 0.5                              # V1 P/(2π ħv)
V1 = BETA * 2 * np.pi * HBAR_V / P
PROFILE = tuple(V1 * np.cos(2 * np.pi * np.arange(64) / 64))


def tube(profile=PROFILE, **kw):
    return ModeTube.from_geometry(P, P**2 / (4 * np.pi), 300.0, hbar_v_meV_nm=HBAR_V, max_energy_meV=60.0,
                                  circumferential_potential_meV=profile, **kw)


def test_fourier_interpolation_is_exact_for_a_band_limited_profile():
    x = np.linspace(0, 1, 37)
    samples = 3 * np.cos(2 * np.pi * np.arange(16) / 16) - 2 * np.sin(4 * np.pi * np.arange(16) / 16)
    np.testing.assert_allclose(profile_at_meV(samples, x), 3 * np.cos(2 * np.pi * x) - 2 * np.sin(4 * np.pi * x),
                               atol=1e-12)
    odd = np.random.default_rng(1).normal(size=10)
    odd -= odd.mean()
    np.testing.assert_allclose(profile_at_meV(odd, np.arange(10) / 10), odd, atol=1e-12)


def test_uniform_bands_follow_the_tangent_dispersion():
    t = tube(None)
    k = np.array([0.0, 0.05, 0.2])
    q = 2 * np.pi * (t.mode_indices(0.2) + 0.5 - 0.2) / P
    tangent = (2 / t.spacing_nm) * np.tan(k * t.spacing_nm / 2)
    expected = np.sort(np.concatenate([s * HBAR_V * np.sqrt(tangent[:, None] ** 2 + q**2) for s in (1, -1)],
                                      axis=1), axis=1)
    np.testing.assert_allclose(t.clean_bands_meV(0.2, k), expected, atol=1e-9)


def test_zero_mean_profile_leaves_the_k0_edges_but_splits_kramers_pairs_linearly():
    """At k = 0 each σ_2 sector is a chiral first-order operator; a gauge e^{∓iχ}, χ = ∫U ds/ħv, removes a
    zero-mean U: the edges stay ħv|q_l|. At k ≠ 0 σ_1 k couples the sectors with the harmonic 2l + 1 of e^{2iχ}:
    the Φ = 0 pair at ħv π/P splits as ± ħv |J_1(2β)| k for U = V1 cos(2πs/P), β = V1 P/(2πħv)."""
    t = tube()
    levels = t.clean_bands_meV(0.0, [0.0])[0]
    q = 2 * np.pi * (np.arange(-3, 3) + 0.5) / P
    np.testing.assert_allclose(np.sort(levels[np.abs(levels) < 100]), np.sort(np.concatenate([HBAR_V * q, -HBAR_V * q])),
                               atol=1e-8)
    k = 1e-3
    e = t.clean_bands_meV(0.0, [k])[0]
    pair = e[np.argsort(np.abs(e - E0))][:2]
    assert (pair.max() - pair.min()) / (2 * k) == pytest.approx(HBAR_V * abs(jv(1, 2 * BETA)), rel=1e-3)


def test_profile_moves_the_h_e_phase_at_a_fixed_fermi_energy():
    """1 meV below E0 the uniform tube conducts only at Φ0/2 (G(0) = 0 < G(Φ0/2) = 1); the profile pulls the
    split pair below E0 (its minimum sits at k ≠ 0), so G(0) = 2 > G(Φ0/2) = 1: the h/e phase flips."""
    energy = E0 - 1.0
    gated, plain = tube(), tube(None)
    bottom = np.min(np.where((b := gated.clean_bands_meV(0.0, np.linspace(0, 0.2, 201))) > 0, b, np.inf))
    assert bottom < energy
    np.testing.assert_allclose([conductance(plain.chain(p), [energy], "slices")[0] for p in (0.0, 0.5)], [0, 1],
                               atol=1e-8)
    np.testing.assert_allclose([conductance(gated.chain(p), [energy], "slices")[0] for p in (0.0, 0.5)], [2, 1],
                               atol=1e-6)


def test_lattice_tube_places_the_profile_clockwise_from_the_bottom_and_agrees_with_the_mode_tube():
    samples = np.zeros(16)
    samples[1], samples[-1] = 5.0, -5.0                       # s = P/16 (towards +y) and s = −P/16
    samples -= samples.mean()
    lattice = SurfaceTube.from_geometry("topological", P, P**2 / (4 * np.pi), 100.0, hbar_v_meV_nm=HBAR_V,
                                        max_energy_meV=40.0, spacing_nm=P / 16,
                                        circumferential_potential_meV=checked_profile_meV(samples))
    diag = lattice.chain(0.0).onsite_values[0][: 2 * 16].real.reshape(16, 2)
    site_potential = diag.mean(axis=1)                         # (mass + U, −mass + U) on every site
    # the lattice coordinate runs clockwise: site 1 sits at s = −P/16 (the −5 meV sample), site 15 at +P/16
    np.testing.assert_allclose(site_potential[[0, 1, 15]], samples[[0, 15, 1]], atol=1e-12)
    fine = SurfaceTube.from_geometry("topological", P, P**2 / (4 * np.pi), 300.0, hbar_v_meV_nm=HBAR_V,
                                     max_energy_meV=40.0, spacing_nm=0.5, circumferential_potential_meV=PROFILE)
    g = [conductance(fine.chain(p), [E0 - 1.0], "slices")[0] for p in (0.0, 0.5)]
    np.testing.assert_allclose(g, [2, 1], atol=1e-3)


@pytest.mark.parametrize("values,match", [([1.0] * 8, "average to zero"), ([1.0, -1.0], "at least 8"),
                                          ([0.0] * 7 + [np.nan], "finite")])
def test_bad_profiles_are_refused_with_the_field_name(values, match):
    with pytest.raises(InputError, match="circumferential_potential_meV.*" + match):
        checked_profile_meV(values)
