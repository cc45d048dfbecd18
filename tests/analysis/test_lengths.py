"""Transport-length fits: synthetic data, and the one-dimensional Anderson chain as an outside check."""

import math

import numpy as np
import pytest

from simsurface.analysis import lengths as fits
from simsurface.transport.chain import Lead, SliceChain
from simsurface.transport.engines import transmission


def test_mean_free_path_fit_recovers_the_interpolation_formula():
    L = np.array([50.0, 100.0, 200.0, 400.0])
    n = np.full(4, 6.0)
    g = fits.interpolation_conductance(L, n, 130.0)
    f = fits.fit_mean_free_path(L, g, np.full(4, 0.01), n)
    assert f.value_nm == pytest.approx(130.0, rel=1e-6)
    np.testing.assert_allclose(fits.mean_free_path_from_mean(L, g, n), 130.0, rtol=1e-12)
    assert f.used.all()


def test_localization_fit_reads_xi_from_the_slope_of_mean_log_g():
    L = np.array([100.0, 300.0, 600.0, 900.0])
    y = 0.4 - 2 * L / 250.0
    f = fits.fit_localization_length(L, y, np.full(4, 0.05))
    assert f.value_nm == pytest.approx(250.0, rel=1e-9) and f.intercept == pytest.approx(0.4)
    assert not fits.fit_localization_length(L[:1], y[:1], [0.1]).used.sum() >= 2
    assert math.isnan(fits.fit_localization_length(L, np.zeros(4), np.full(4, 0.1)).value_nm)  # none localized
    assert fits.fit_localization_length(L, -5.0 + 1e-4 * L, np.full(4, 0.1)).value_nm == math.inf  # no decay


def test_beenakker_estimate_counts_independent_channels_of_each_class():
    # ξ ≈ (βN + 2 − β)ℓ (Beenakker, Rev. Mod. Phys. 69, 731 (1997))
    assert fits.beenakker_localization_length(10.0, 5, 2) == pytest.approx(100.0)
    assert fits.beenakker_localization_length(10.0, 1, 1) == pytest.approx(20.0)
    assert fits.beenakker_localization_length(10.0, 2, 4) == pytest.approx(20.0)        # one Kramers pair
    assert fits.beenakker_localization_length(10.0, 3, 4) == math.inf                    # odd: protected channel
    assert fits.beenakker_localization_length(10.0, 4, 1, degeneracy=2) == pytest.approx(30.0)
    assert fits.symmetry_index("topological", 0.5) == 4 and fits.symmetry_index("topological", 0.3) == 2
    assert fits.symmetry_index("trivial", 1.0) == 1


def anderson_chain(eps: np.ndarray, hop: float = 1.0) -> SliceChain:
    """A one-dimensional tight-binding chain with on-site energies ``eps`` between clean leads."""
    lead = Lead(np.zeros((1, 1), complex), -hop * np.ones((1, 1), complex))
    n = eps.size
    return SliceChain(1, np.array([0]), np.array([0]), eps[:, None].astype(complex), np.array([0]), np.array([0]),
                      -hop * np.ones((n + 1, 1), complex), lead, lead)


def test_one_dimensional_anderson_chain_has_the_perturbative_localization_length():
    # 1D Anderson model, box width W, hopping t: amplitude localization length
    # ξ = 24(4t² − E²)/W² lattice spacings to lowest order in W (Thouless 1979; Kramer & MacKinnon,
    # Rep. Prog. Phys. 56, 1469 (1993) — from memory), so ⟨ln T⟩ = −2L/ξ: this pins the fit convention.
    # Beenakker's ξ = (βN + 2 − β)ℓ with N = β = 1 then gives ℓ = ξ/2 for ⟨T⟩ = 1/(1 + L/ℓ).
    # E = 0.7t avoids the band-centre (Kappus–Wegner) anomaly.
    width, energy, realizations = 0.7, 0.7, 120
    rng = np.random.default_rng(21)
    lengths = np.array([10, 20, 40, 200, 450, 900])
    eps = rng.uniform(-width / 2, width / 2, (realizations, lengths.max()))
    t = np.array([[transmission(anderson_chain(eps[r, :n]), [energy])[0] for r in range(realizations)]
                  for n in lengths])
    logs = np.log(t)
    sem = t.std(axis=1, ddof=1) / np.sqrt(realizations)
    lsem = logs.std(axis=1, ddof=1) / np.sqrt(realizations)
    xi_theory = 24 * (4 - energy**2) / width**2                         # 172 sites
    xi = fits.fit_localization_length(lengths, logs.mean(axis=1), lsem, lengths >= 200)
    ell = fits.fit_mean_free_path(lengths, t.mean(axis=1), sem, np.ones(lengths.size), lengths <= 40)
    # statistical error (fit) plus 5 % for the next order in W² (W²/(4t² − E²) ≈ 0.14, from memory)
    assert abs(xi.value_nm - xi_theory) < 3 * xi.error_nm + 0.05 * xi_theory, (xi, xi_theory)
    assert abs(ell.value_nm - xi_theory / 2) < 3 * ell.error_nm + 0.05 * xi_theory / 2, (ell, xi_theory / 2)
