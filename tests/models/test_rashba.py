"""Trivial tube with Rashba spin–orbit coupling (simsurface.models.tube, simsurface.models.rashba).

Outside references: the clean spectrum of a round Rashba tube (derived in docs/fields.md: spin rotated with the
angle, half-integer angular momenta); kwant's scattering solver; the singlet/triplet Cooperon of Hikami, Larkin
& Nagaoka, Prog. Theor. Phys. 63, 707 (1980) and the Altshuler–Aronov–Spivak h/2e (JETP Lett. 33, 94 (1981))
for the sign crossover (from memory; the Rashba triplet gaps 1, 1, 2 likewise).
"""

import numpy as np
import pytest

from simsurface.errors import InputError
from simsurface.models import analytic
from simsurface.models.rashba import (h2e_relative_amplitude, h2e_sign_crossover_meV_nm, rashba_subbands_meV,
                                      spin_precession_length_nm)
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance

MASS, P = 0.023, 40 * np.pi


def rashba_tube(alpha, length_nm=60.0, spacing_nm=0.5, **kw):
    return SurfaceTube.from_geometry("trivial", P, P**2 / (4 * np.pi), length_nm, mass_ratio=MASS,
                                     max_energy_meV=30.0, spacing_nm=spacing_nm, rashba_meV_nm=alpha, **kw)


def right_movers(bands_meV, k, energy):
    """Channels at ``energy``: crossings of each band with positive slope (k on a fine grid)."""
    above = bands_meV > energy
    return int(np.sum(~above[:-1] & above[1:]))


def test_rashba_subbands_reduce_to_the_spin_degenerate_tube():
    e = rashba_subbands_meV([0.0, 0.07], 0.3, P, MASS, 0.0, max_angular=6)
    l = np.arange(-6, 7)
    parabolic = np.concatenate([analytic.parabolic_subband_bottoms_meV(0.3, P, MASS, l)] * 2)
    c = analytic.HBAR2_OVER_2ME_MEV_NM2 / MASS
    np.testing.assert_allclose(e[0][:10], np.sort(parabolic)[:10], atol=1e-9)
    np.testing.assert_allclose(e[1][:10], np.sort(parabolic)[:10] + c * 0.07**2, atol=1e-9)


@pytest.mark.parametrize("phi", [0.0, 0.3])
def test_lattice_rashba_levels_match_the_analytic_spectrum(phi):
    tube = rashba_tube(20.0, spacing_nm=0.25)
    lattice = np.sort(tube.lattice_subband_bottoms_meV(phi))[:10]
    exact = rashba_subbands_meV([0.0], phi, P, MASS, 20.0)[0][:10]
    np.testing.assert_allclose(lattice, exact, rtol=2e-3, atol=2e-3)


def test_clean_rashba_conductance_counts_the_analytic_right_movers():
    small = 20 * np.pi
    tube = SurfaceTube.from_geometry("trivial", small, small**2 / (4 * np.pi), 20.0, mass_ratio=MASS,
                                     max_energy_meV=40.0, spacing_nm=1.0, rashba_meV_nm=25.0)
    k = np.linspace(0, 0.4, 8001)
    bands = rashba_subbands_meV(k, 0.3, small, MASS, 25.0).T        # (bands, k): each row a band over k ≥ 0
    energies = [5.0, 14.0, 27.0]
    # k ≥ 0 only: right movers of a time-reversal-paired spectrum; each band crossing upwards is one channel
    counts = [sum(right_movers(b, k, e) for b in bands) for e in energies]
    np.testing.assert_allclose(conductance(tube.chain(0.3), energies, "slices"), counts, atol=0.02)


def test_rashba_chain_agrees_with_kwant():
    tube = rashba_tube(30.0, length_nm=20.0, spacing_nm=1.5)
    pot = np.random.default_rng(2).uniform(-20, 20, (tube.n_along, tube.n_around))
    chain = tube.chain(0.4, potential_meV=pot)
    np.testing.assert_allclose(conductance(chain, [6.0, 14.0], "slices"), conductance(chain, [6.0, 14.0], "kwant"),
                               atol=1e-8)


def test_h2e_amplitude_runs_from_weak_localization_to_antilocalization():
    assert h2e_relative_amplitude(0.0, MASS, 80.0, 200.0) == pytest.approx(1.0)
    assert h2e_relative_amplitude(1e4, MASS, 80.0, 200.0) == pytest.approx(-0.5, abs=1e-3)
    alpha = h2e_sign_crossover_meV_nm(MASS, 80.0, 200.0)
    assert 0.5 * 80 < spin_precession_length_nm(alpha, MASS) < 80        # the spin relaxes within ~one turn
    # dephasing shortens the singlet's reach: the crossover needs a shorter precession length
    assert h2e_sign_crossover_meV_nm(MASS, 80.0, 200.0, coherence_length_nm=60.0) > alpha


def test_rashba_on_a_dirac_surface_is_refused():
    with pytest.raises(InputError, match="rashba_meV_nm"):
        SurfaceTube.from_geometry("topological", P, 1000.0, 50.0, hbar_v_meV_nm=330.0, max_energy_meV=20.0,
                                  rashba_meV_nm=10.0)


def test_ensemble_h2e_turns_to_antilocalization_above_the_derived_coupling():
    """P = 80 nm, L = 200 nm, m* = 0.023, Anderson W = 200 meV (⟨G⟩ ≈ 1.4–1.7 e²/h, diffusive). Estimator
    a_2 = [(G(0) + G(Φ0/2))/2 − G(Φ0/4)]/2 averaged over four energies at which the clean lattice channel count is
    the same at Φ = 0, Φ0/4 and Φ0/2 (subband index x = 1⅛ … 1⅞). Derived crossover α* ≈ 29 meV nm (docs/fields.md);
    α = 10 meV nm (r = 0.75) must keep the weak-localization sign, α = 90 (r = −0.48) show antilocalization."""
    alpha_star = h2e_sign_crossover_meV_nm(MASS, 80.0, 200.0)
    assert 10.0 < alpha_star / 2 and 90.0 > 2 * alpha_star
    m = 24
    spacing = 80.0 / m
    hop = analytic.HBAR2_OVER_2ME_MEV_NM2 / MASS / spacing**2
    energies = 2 * hop * (1 - np.cos(2 * np.pi * (1 + (np.arange(4) + 0.5) / 4) / m))
    results = {}
    for alpha in (10.0, 90.0):
        tube = SurfaceTube.from_geometry("trivial", 80.0, 80.0**2 / (4 * np.pi), 200.0, mass_ratio=MASS,
                                         max_energy_meV=40.0, spacing_nm=spacing, rashba_meV_nm=alpha)
        a2 = []
        for r in range(24):
            pot = np.random.default_rng([7, r]).uniform(-100.0, 100.0, (tube.n_along, tube.n_around))
            g = np.array([conductance(tube.chain(p, potential_meV=pot), energies, "slices") for p in (0, 0.25, 0.5)])
            a2.append(((g[0] + g[2]) / 2 - g[1]).mean() / 2)
        results[alpha] = (np.mean(a2), np.std(a2) / np.sqrt(len(a2)))
    (low, low_err), (high, high_err) = results[10.0], results[90.0]
    assert low < -2.5 * low_err            # weak localization: minimum at Φ = 0 and Φ0/2
    assert high > 2.5 * high_err           # antilocalization: maximum at Φ = 0 and Φ0/2
