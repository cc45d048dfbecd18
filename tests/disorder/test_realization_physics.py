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
def pooled_rms(g):
    """rms of G pooled over (flux, energy): √(mean of the variances over realizations), and its
    bootstrap standard error (realizations resampled; correlations between the points of one
    realization are kept)."""
    n = g.shape[0]
    rms = np.sqrt(g.var(axis=0, ddof=1).mean())
    rng = np.random.default_rng(0)
    boot = [np.sqrt(g[rng.integers(0, n, n)].var(axis=0, ddof=1).mean()) for _ in range(400)]
    return float(rms), float(np.std(boot))


def check_diffusive(tube, g, clean, degeneracy=1, beta=2):
    """ℓ ≪ L ≪ ξ: ℓ from ⟨G⟩ = N/(1 + L/ℓ) at this length, ξ from Beenakker's (βN + 2 − β)ℓ."""
    mean = g.mean(axis=0)
    length = tube.modelled_length_nm
    ell = length * mean / (clean - mean)
    xi = (beta * clean / degeneracy + 2 - beta) * ell
    assert np.all(length / ell > 2.5) and np.all(length / xi < 0.4), (length / ell, length / xi)


def tube_ucf_factor(flux_quanta: float, length_over_perimeter: float) -> float:
    """Var G / (2/15β) of a diffusive tube of length L and circumference P threaded by an axial flux.

    Var G is a sum over diffusion modes (q_x = πm/L, m ≥ 1; q_⊥ = 2πn/P around the tube) of
    1/(q²L²/π²)², once for the diffuson and once for the cooperon (Lee, Stone & Fukuyama, PRB 35, 1039
    (1987)); quasi-1D keeps only q_⊥ = 0 and gives 2/15β. The flux does not act on the diffuson and
    shifts the cooperon's q_⊥ by 2Φ (charge 2e, Altshuler, Aronov & Spivak, JETP Lett. 33, 94 (1981)),
    so at a "generic" flux the cooperon is suppressed only by (2πL|n + 2Φ|/P)²: in a tube a few P long
    some of it remains. Returns d (1 + c): d the transverse diffuson correction, c the cooperon residue
    relative to the diffuson (c = 1 at Φ = 0: the β = 1 value).
    """
    m = np.arange(1, 4000)[:, None]
    n = np.arange(-60, 61)[None, :]
    x = 2 * length_over_perimeter
    diffuson = (1.0 / (m**2 + (x * n) ** 2) ** 2).sum()
    cooperon = (1.0 / (m**2 + (x * (n + 2 * flux_quanta)) ** 2) ** 2).sum()
    return float(diffuson / (np.pi**4 / 90) * (1 + cooperon / diffuson))


def ucf_check(n_around, n_along, realizations, energies_t, flux=0.25, width_t=0.8):
    """Pooled rms G of the topological tube at one flux, its bootstrap error, and the expected rms.

    Energies are in the lattice regime (k a ≈ 1): the lattice Dirac tube is still a disordered wire
    whose time reversal is broken by the flux, which is all the universal value needs. Φ = h/4e shifts
    the cooperon by half a mode, its strongest suppression.
    """
    tube = make_tube(n_around, n_along)
    energies = np.asarray(energies_t) * HOP
    g = ensemble(tube, DisorderParameters(anderson_width_meV=width_t * HOP), [flux], energies, realizations)
    check_diffusive(tube, g, np.array([conductance(tube.chain(flux), energies)]))
    rms, err = pooled_rms(g)
    factor = tube_ucf_factor(flux, tube.modelled_length_nm / tube.perimeter_nm)
    return rms, err, float(np.sqrt(factor / 15))


# Universal conductance fluctuations with time reversal broken (β = 2), non-degenerate channels:
# Var G = 2/(15β) (e²/h)² = 1/15 (Lee & Stone, PRL 55, 1622 (1985); Beenakker, Rev. Mod. Phys. 69, 731
# (1997)), for ℓ ≪ L ≪ ξ with ξ ≈ 2Nℓ (Beenakker 1997), times the tube's mode-sum factor above (+2 %
# in the rms for L ≈ 3.3P). Measured when written: see docs/disorder.md.
def test_conductance_fluctuations_are_universal_at_generic_flux():
    rms, err, expected = ucf_check(24, 80, realizations=300, energies_t=(0.88, 0.91, 0.94))
    assert abs(rms - expected) < 3 * err, (rms, err, expected)
    assert abs(expected - np.sqrt(1 / 15)) < 0.01  # the tube correction is small here
    assert err < 0.015  # sharp enough to tell β = 2 (0.258) from β = 1 (0.365) or β = 4 (0.183)


@pytest.mark.slow
def test_conductance_fluctuations_are_universal_with_ten_channels():
    rms, err, expected = ucf_check(32, 100, realizations=500, energies_t=(0.88, 0.91, 0.94))
    assert abs(rms - expected) < 3 * err, (rms, err, expected)
    assert err < 0.01


def test_tube_mode_sum_reduces_to_the_quasi_one_dimensional_values():
    # long tube: 2/15β exactly, β = 1 at zero flux (cooperon = diffuson), β = 2 at generic flux
    assert tube_ucf_factor(0.0, 200.0) == pytest.approx(2.0, rel=1e-3)
    assert tube_ucf_factor(0.25, 200.0) == pytest.approx(1.0, rel=1e-3)
    assert tube_ucf_factor(0.25, 3.0) > 1.03  # a short tube keeps part of its cooperon


@pytest.mark.slow
def test_spin_degenerate_tube_fluctuates_twice_as_much_and_more_with_time_reversal():
    # Trivial (parabolic, spin-degenerate) tube: G = 2 Σ T_n, so Var G = 4 · 2/(15β) (Beenakker 1997):
    # rms √(8/15) = 0.730 at Φ = 0 (time reversal, β = 1) and √(4/15) = 0.516 at generic flux (β = 2).
    # With the tube's mode-sum factor (test above), L ≈ 3.25P. Measured when written: docs/disorder.md.
    mass, spacing, n_around = 0.05, 2.0, 40
    sec = CrossSection.circle(n_around * spacing / np.pi)
    tube = SurfaceTube("trivial", sec.perimeter_nm, sec.area_nm2, 130 * spacing, mass, n_around, 130)
    energies = np.array([1.03, 1.13]) * tube.hopping_meV  # away from the lattice subband edges
    params = DisorderParameters(anderson_width_meV=1.5 * tube.hopping_meV)
    symmetric = ensemble(tube, params, (0.0,), energies, 300, seed=2)
    broken = ensemble(tube, params, (0.25,), energies, 300, seed=2)
    check_diffusive(tube, symmetric, conductance(tube.chain(0.0), energies)[None], degeneracy=2, beta=1)
    rms_1, err_1 = pooled_rms(symmetric)
    rms_2, err_2 = pooled_rms(broken)
    aspect = tube.modelled_length_nm / tube.perimeter_nm
    expected_1 = np.sqrt(4 * tube_ucf_factor(0.0, aspect) / 15)
    expected_2 = np.sqrt(4 * tube_ucf_factor(0.25, aspect) / 15)
    assert abs(rms_1 - expected_1) < 3 * err_1, (rms_1, err_1, expected_1)
    assert abs(rms_2 - expected_2) < 3 * err_2, (rms_2, err_2, expected_2)
    assert rms_1 / rms_2 > 1.2  # √2 expected; the two classes are told apart


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


def ptc_logs(n_around: int, length_nm: float, wilson: float, realizations: int) -> np.ndarray:
    """ln G at Φ = 0 and Φ0/2 of the PTC tube (perimeter 32 nm) at lattice spacing 32/n_around nm."""
    spacing = 32.0 / n_around
    tube = SurfaceTube("topological", 32.0, 32.0**2 / (4 * np.pi), length_nm, HBAR_V, n_around,
                       int(round(length_nm / spacing)), wilson)
    return np.log(ensemble(tube, PTC_DISORDER, (0.0, 0.5), [PTC_ENERGY], realizations)[:, :, 0])


def test_perfect_transmission_decays_only_through_the_wilson_term_time_reversal_breaking():
    # The Wilson mass m(k) = W(ka)²/2 σ_z breaks time reversal; backscattering of the protected channel
    # needs the out-of-plane spin it causes, so the decay grows with W = r t. Measured when written
    # (64 realizations, 0.2–4 µm): ⟨ln G(Φ0/2)⟩ decays over 2/|slope| = 8.6 µm at r = 0.25, 3.0 µm at
    # r = 0.5 and 1.1 µm at r = 1, while ⟨ln G(0)⟩ falls with ξ ≈ 0.2 µm for all three. At 2 µm:
    logs = {wilson: ptc_logs(16, 2000.0, wilson, 40) for wilson in (0.25, 0.5)}
    for values in logs.values():
        assert values[:, 0].mean() < -12.0                       # Φ = 0: ten localization lengths
    weak, strong = logs[0.25][:, 1], logs[0.5][:, 1]
    assert weak.mean() > -1.0
    err = np.hypot(weak.std(ddof=1), strong.std(ddof=1)) / np.sqrt(weak.size)
    assert strong.mean() < weak.mean() - 4 * err


@pytest.mark.slow
def test_perfect_transmission_lasts_longer_on_a_finer_lattice():
    # At fixed physics (perimeter, energy, puddles in nm and meV) the Wilson mass at the Fermi momentum
    # is m = r ħv k² a/2: halving the spacing halves it. Measured when written (r = 0.25, 64
    # realizations): decay length of ⟨ln G(Φ0/2)⟩ 8.6 µm at a = 2 nm and 40 µm at a = 1 nm.
    coarse, fine = ptc_logs(16, 2000.0, 0.25, 48)[:, 1], ptc_logs(32, 2000.0, 0.25, 48)[:, 1]
    err = np.hypot(coarse.std(ddof=1), fine.std(ddof=1)) / np.sqrt(coarse.size)
    assert fine.mean() > -0.2 and coarse.mean() < fine.mean() - 4 * err
    assert abs(fine.mean()) < abs(coarse.mean()) / 3


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
