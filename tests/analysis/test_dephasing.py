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
