"""Dephasing: L_phi(T) power law and the incoherent composition of phase-coherent sections."""

import numpy as np
import pytest

from simsurface.analysis import dephasing as dp


def test_coherence_length_follows_the_power_law():
    # L_phi ∝ T^(−1/2) for 2D electron–electron dephasing (Altshuler, Aronov & Khmelnitsky, J. Phys. C 15,
    # 7367 (1982)): four times the temperature halves L_phi
    assert dp.coherence_length_nm(8.0, 600.0, 2.0, 0.5) == pytest.approx(300.0)
    assert dp.coherence_length_nm(2.0, 600.0, 2.0, 0.5) == pytest.approx(600.0)
    assert dp.coherence_length_nm(16.0, 600.0, 2.0, 1 / 3) == pytest.approx(300.0)
    with pytest.raises(ValueError):
        dp.coherence_length_nm(0.0, 600.0, 2.0, 0.5)


def test_two_single_channel_scatterers_combine_as_incoherent_series():
    # one channel, phase lost between the scatterers: T12 = T1 T2 / (1 − R1 R2)
    # (Datta, Electronic Transport in Mesoscopic Systems, CUP 1995, sec. 2.5)
    t1, t2 = 0.7, 0.4
    expected = t1 * t2 / (1 - (1 - t1) * (1 - t2))
    assert dp.compose_incoherent([t1, t2], 1.0) == pytest.approx(expected)


def test_section_resistances_add_beyond_the_contact_resistance():
    # N channels: 1/T = 1/N + Σ (1/T_i − 1/N); n equal sections of a diffusive wire give Ohm's law
    n_ch, t_one = 10.0, 2.5
    for n in (1, 2, 5):
        t = dp.compose_incoherent(np.full(n, t_one), n_ch)
        assert 1 / t - 1 / n_ch == pytest.approx(n * (1 / t_one - 1 / n_ch))
    # broadcasting over flux and energy, sections on axis 1
    ts = np.random.default_rng(0).uniform(1, 3, size=(4, 3, 5))
    out = dp.compose_incoherent(ts, np.full(5, 6.0), axis=1)
    assert out.shape == (4, 5)
    np.testing.assert_allclose(1 / out, 1 / 6 + (1 / ts - 1 / 6).sum(axis=1))


def test_a_blocked_section_or_no_channels_blocks_the_wire():
    assert dp.compose_incoherent([0.0, 1.0], 2.0) == 0.0
    assert dp.compose_incoherent([0.0, 0.0], 0.0) == 0.0


def test_section_count_rounds_but_keeps_one_coherent_section():
    assert dp.section_count(1000.0, 300.0) == 3
    assert dp.section_count(1000.0, 2000.0) == 1
    assert dp.section_count(1000.0, 400.0) == 2


def test_broadened_channel_count_is_the_clean_lattice_transmission_without_broadening():
    # reference: the slice engine's clean transmission of the same lattice tube equals its channel count
    from simsurface.models.tube import SurfaceTube
    from simsurface.transport.engines import conductance

    for surface, kw, energies in (("topological", {"hbar_v_meV_nm": 329.0}, [-30.0, 12.0, 40.0, 65.0]),
                                  ("trivial", {"mass_ratio": 0.023}, [3.0, 20.0, 47.0])):
        tube = SurfaceTube.from_geometry(surface, 50.0, 199.0, 10.0, max_energy_meV=70.0, **kw)
        flux = np.array([0.0, 0.2, 0.45])
        counted = dp.broadened_channel_count(tube.lattice_subband_bottoms_meV(flux), energies, 0.0,
                                             degeneracy=1 if surface == "topological" else 2,
                                             dirac=surface == "topological")
        clean = np.array([conductance(tube.chain(f), energies) for f in flux])
        np.testing.assert_allclose(counted, clean, atol=1e-6)


def test_wide_broadening_removes_the_flux_dependence_of_the_channel_count():
    # edges E_l(Φ) = ε (l − Φ)², γ ≫ ε: N_γ hardly depends on Φ while the clean count jumps by two
    eps = 1.0
    flux = np.linspace(0, 0.5, 6)
    bottoms = eps * (np.arange(-30, 31)[None, :] - flux[:, None]) ** 2
    sharp = dp.broadened_channel_count(bottoms, [6.2], 0.0, degeneracy=2, dirac=False)[:, 0]
    wide = dp.broadened_channel_count(bottoms, [6.2], 5.0, degeneracy=2, dirac=False)[:, 0]
    assert np.ptp(sharp) == 2.0
    assert np.ptp(wide) < 0.05 * np.ptp(sharp)


def test_coherence_length_sets_the_dephasing_energy_in_each_regime():
    # η = ħ/(2τ_φ); quasi-ballistic τ_φ = L_phi/v, diffusive τ_φ = L_phi²/D with D = vℓ/2 in two dimensions
    # (L_phi = (Dτ_φ)^(1/2): Altshuler, Aronov & Khmelnitsky, J. Phys. C 15, 7367 (1982); D = vℓ/2: Einstein
    # relation of a 2D Fermi gas, common practice, no source)
    hv, l_phi, ell = 330.0, 600.0, 150.0
    assert dp.dephasing_energy_meV(l_phi, hv) == pytest.approx(hv / (2 * l_phi))
    tau_ratio = (l_phi**2 / (hv * ell / 2)) / (l_phi / hv)          # τ_diffusive / τ_ballistic = 2 L_phi / ℓ
    assert dp.dephasing_energy_meV(l_phi, hv, "diffusive", ell) == pytest.approx(hv / (2 * l_phi) / tau_ratio)
    # "auto" takes the slower time and is continuous where the two cross, at L_phi = ℓ/2
    lengths = np.array([0.3, 0.5, 0.7, 4.0]) * ell
    auto = dp.dephasing_energy_meV(lengths, hv, "auto", ell)
    np.testing.assert_allclose(auto, np.minimum(hv / (2 * lengths), hv * ell / (4 * lengths**2)))
    assert dp.dephasing_energy_meV(ell / 2, hv, "diffusive", ell) == pytest.approx(dp.dephasing_energy_meV(ell / 2, hv))
    assert dp.diffusive_regime(600.0, 150.0) and not dp.diffusive_regime(60.0, 150.0)
    with pytest.raises(ValueError):
        dp.dephasing_energy_meV(l_phi, hv, "diffusive")


def test_parabolic_layer_velocity_is_hbar_k_over_mass():
    # ħv = ħ²k/m* with E = ħ²k²/(2m*) (free electron, scipy.constants)
    from scipy import constants as c

    from simsurface.models.tube import SurfaceTube

    tube = SurfaceTube.from_geometry("trivial", 60.0, 280.0, 50.0, mass_ratio=0.03, max_energy_meV=40.0)
    e_meV = 25.0
    k = np.sqrt(2 * 0.03 * c.m_e * e_meV * 1e-3 * c.e) / c.hbar                        # 1/m
    expected = c.hbar**2 * k / (0.03 * c.m_e) / (1e-3 * c.e) * 1e9                   # meV nm
    assert dp.hbar_velocity_meV_nm(tube, [e_meV])[0] == pytest.approx(expected, rel=1e-10)


def test_quasi_ballistic_dephasing_damps_the_coherent_transmission_as_exp_minus_length_over_lphi():
    # the probes' self-energy −iη makes an amplitude decay as exp(−ηx/ħv); with η = ħv/(2L_phi) the
    # coherent transmission of a clean channel is exp(−L/L_phi) (definition of L_phi = vτ_φ)
    from simsurface.transport.chain import Lead, SliceChain
    from simsurface.transport.probes import terminal_matrix

    n_sites, energy = 400, 0.5                      # hopping 1 meV, spacing 1 nm: ħv = 2 sin(ka) meV nm
    hv = 2 * np.sin(np.arccos(-energy / 2))
    lead = Lead(np.zeros((1, 1)), -np.ones((1, 1)))
    zero = np.array([0])
    chain = SliceChain(1, zero, zero, np.zeros((n_sites, 1), complex), zero, zero, -np.ones((n_sites + 1, 1), complex),
                       lead, lead)
    for l_phi in (200.0, 800.0):
        eta = dp.dephasing_energy_meV(l_phi, hv)
        coherent = terminal_matrix(chain, [energy], eta, units_per_probe=50)[0, -1, 0]
        assert coherent == pytest.approx(np.exp(-n_sites / l_phi), rel=2e-3)


def test_probe_units_cover_an_eighth_of_lphi():
    assert dp.probe_units(600.0, 8.0) == 9
    assert dp.probe_units(10.0, 8.0) == 1
