"""Mesoscopic physics of disordered tubes: universal conductance fluctuations, the perfectly transmitted
channel and its slow decay through the Wilson term, convergence of ensemble means.

Lattice units: spacing a = 2 nm and ħv = 330 meV nm give the hopping t = ħv/a = 165 meV.
"""

from __future__ import annotations

import numpy as np
import pytest

from simsurface.disorder import DisorderParameters, realize
from simsurface.geometry import CrossSection
from simsurface.models.tube import SurfaceTube
from simsurface.transport.engines import conductance

HBAR_V = 330.0
SPACING = 2.0
HOP = HBAR_V / SPACING  # t, meV


def make_tube(n_around: int, n_along: int, wilson: float = 0.5) -> SurfaceTube:
    sec = CrossSection.circle(n_around * SPACING / np.pi)
    return SurfaceTube("topological", sec.perimeter_nm, sec.area_nm2, n_along * SPACING, HBAR_V, n_around, n_along,
                       wilson)


def ensemble(tube, params, fluxes, energies, realizations, seed=1):
    """G (e²/h) of realizations 0 … R−1; shape (R, n_flux, n_energy)."""
    out = np.empty((realizations, len(fluxes), len(energies)))
    for r in range(realizations):
        real = realize(params, tube, seed, r)
        for i, phi in enumerate(fluxes):
            out[r, i] = conductance(tube.chain(phi, **real.chain_kwargs(phi)), energies)
    return out


# --- universal conductance fluctuations ------------------------------------------------------------
def ucf_check(n_around, n_along, realizations, energies_t, fluxes=(0.2, 0.35), width_t=0.8):
    """rms G pooled over (flux, energy) with a bootstrap error; the regime is checked too.

    Universal conductance fluctuations with time reversal broken (β = 2), non-degenerate channels:
    Var G = 2/(15β) (e²/h)² = 1/15 (Lee & Stone, PRL 55, 1622 (1985); Beenakker, Rev. Mod. Phys. 69,
    731 (1997)), valid for ℓ ≪ L ≪ ξ with ξ ≈ 2Nℓ (Beenakker 1997). The energies lie in the lattice
    regime (k a ≈ 1): the lattice Dirac tube still forms a disordered wire of the unitary class at a
    generic flux, which is all the universal value needs.
    """
    tube = make_tube(n_around, n_along)
    energies = np.asarray(energies_t) * HOP
    g = ensemble(tube, DisorderParameters(anderson_width_meV=width_t * HOP), fluxes, energies, realizations)
    clean = np.array([conductance(tube.chain(phi), energies) for phi in fluxes])
    # regime: ℓ from ⟨G⟩ = N/(1 + L/ℓ) at this length, ξ from Beenakker's estimate
    mean = g.mean(axis=0)
    ell = tube.modelled_length_nm * mean / (clean - mean)
    xi = 2 * clean * ell
    L = tube.modelled_length_nm
    assert np.all(L / ell > 2.5) and np.all(L / xi < 0.4), (L / ell, L / xi)
    rms = np.sqrt(g.var(axis=0, ddof=1).mean())
    rng = np.random.default_rng(0)
    boot = [np.sqrt(g[rng.integers(0, realizations, realizations)].var(axis=0, ddof=1).mean()) for _ in range(400)]
    return rms, float(np.std(boot))


def test_conductance_fluctuations_are_universal_at_generic_flux():
    rms, err = ucf_check(16, 60, realizations=80, energies_t=(0.9, 0.92))
    assert abs(rms - np.sqrt(1 / 15)) < 3 * err, (rms, err)
    assert err < 0.03  # the test is sharp enough to tell β = 2 (0.258) from β = 1 (0.365)


@pytest.mark.slow
def test_conductance_fluctuations_are_universal_with_more_channels_and_realizations():
    rms, err = ucf_check(24, 80, realizations=300, energies_t=(0.88, 0.92))
    assert abs(rms - np.sqrt(1 / 15)) < 3 * err, (rms, err)
    assert err < 0.015


# --- perfectly transmitted channel ------------------------------------------------------------------
# A topological tube of 16 sites around (P = 32 nm) at E = 1.5 π ħv/P ≈ 0.29 t: two channels at Φ = 0
# (one Kramers pair), one channel at Φ = Φ0/2. Smooth puddles (λ = 2a) keep the scattering at small
# momenta, where the Wilson term is weak.
PTC_ENERGY = 1.5 * np.pi * HBAR_V / (16 * SPACING)
PTC_DISORDER = DisorderParameters(puddle_rms_meV=0.15 * HOP, puddle_correlation_nm=2 * SPACING)


def test_half_flux_quantum_keeps_a_perfectly_transmitted_channel_while_zero_flux_localizes():
    # Bardarson, Brouwer & Moore, PRL 105, 156803 (2010); Ando & Suzuki, J. Phys. Soc. Jpn. 71, 2753
    # (2002): with an odd number of channels in the symplectic class one channel is never localized.
    # At L = 600 nm the Φ = 0 wire is several localization lengths long (ξ ≈ 2ℓ ≈ 200 nm here).
    tube = make_tube(16, 300, wilson=0.25)
    g = ensemble(tube, PTC_DISORDER, (0.0, 0.5), [PTC_ENERGY], 24)[:, :, 0]
    zero, half = g[:, 0], g[:, 1]
    assert np.log(zero).mean() < -3.0                 # localized: typical G(0) below e^-3 e²/h
    assert half.mean() > 0.75 and half.max() <= 1.0 + 1e-9
    # what remains below 1 is the weak time-reversal breaking of the Wilson term (see the slow test)


@pytest.mark.slow
def test_perfect_transmission_decays_only_through_the_wilson_term_time_reversal_breaking():
    # The Wilson mass m(k) = W(ka)²/2 σ_z breaks time reversal; backscattering of the protected channel
    # then needs the out-of-plane spin it causes, so its rate grows with W = r t. Observed here: at
    # L = 2000 nm (≈ 20 ξ of the Φ = 0 wire) ⟨ln G(Φ0/2)⟩ falls about 3 times faster for r = 0.5 than for
    # r = 0.25, while ⟨ln G(0)⟩ is ~ −19 for both.
    results = {}
    for wilson in (0.25, 0.5):
        tube = make_tube(16, 1000, wilson=wilson)
        results[wilson] = np.log(ensemble(tube, PTC_DISORDER, (0.0, 0.5), [PTC_ENERGY], 40)[:, :, 0])
    for wilson, logs in results.items():
        assert logs[:, 0].mean() < -12.0
    weak, strong = results[0.25][:, 1], results[0.5][:, 1]
    assert weak.mean() > -1.0
    err = np.hypot(weak.std(ddof=1), strong.std(ddof=1)) / np.sqrt(weak.size)
    assert strong.mean() < weak.mean() - 4 * err


# --- convergence of ensemble means ---------------------------------------------------------------------
def test_ensemble_mean_converges_like_one_over_square_root_of_realizations():
    # Independent realizations: the spread of means over batches of n realizations is σ/√n
    # (central limit theorem; common practice, no source). Correlated random streams would break it.
    tube = make_tube(8, 15)
    g = ensemble(tube, DisorderParameters(anderson_width_meV=0.8 * HOP), [0.3], [0.5 * HOP], 256)[:, 0, 0]
    sigma = g.std(ddof=1)
    for n in (4, 16):
        means = g.reshape(-1, n).mean(axis=1)
        batches = means.size
        spread = means.std(ddof=1)
        # the sample standard deviation of `batches` values has relative error ≈ 1/√(2(batches − 1))
        assert abs(spread / (sigma / np.sqrt(n)) - 1) < 3 / np.sqrt(2 * (batches - 1)), (n, spread, sigma)
