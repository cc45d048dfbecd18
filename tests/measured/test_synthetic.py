"""Synthetic data: the generator's flux curve, its dephasing damping, and the committed demo files."""

from pathlib import Path

import numpy as np
import pytest

from simsurface.measured.io import read_manifest, read_table
from simsurface.measured.synthetic import dephased_conductance_e2h, write_temperature_series
from simsurface.models.tube import SurfaceTube
from simsurface.transport import conductance

DEMO = Path(__file__).resolve().parents[2] / "demo" / "measured"


def test_disordered_tube_conductance_is_periodic_in_one_flux_quantum(small_sample):
    # flux periodicity h/e (Byers & Yang, PRL 7, 46 (1961)): why one sampled period describes every field
    s = small_sample
    tube = SurfaceTube.from_geometry("topological", s.perimeter_nm, s.area_nm2, 60.0, hbar_v_meV_nm=s.hbar_v_meV_nm,
                                     max_energy_meV=1.2 * s.energy_meV)
    pot = np.random.default_rng(0).uniform(-30, 30, (tube.n_along, tube.n_around))
    g = [conductance(tube.chain(phi, potential_meV=pot), [s.energy_meV])[0] for phi in (0.3, 1.3, 2.3)]
    np.testing.assert_allclose(g, g[0], atol=1e-8)


def test_interpolated_flux_curve_passes_through_the_samples(small_curve, small_sample):
    phi = small_curve["flux_quanta"].values
    g = dephased_conductance_e2h(small_curve, phi, small_sample.perimeter_nm, None)
    # the Nyquist harmonic is dropped, so the samples are matched up to its size
    nyq = abs(np.fft.rfft(small_curve.values)[-1]) / phi.size
    np.testing.assert_allclose(g, small_curve.values, atol=nyq + 1e-12)


def test_dephasing_damps_harmonic_n_by_exp_of_minus_n_perimeter_over_two_lphi(small_curve, small_sample):
    phi = np.arange(64) / 64
    lphi, p = 350.0, small_sample.perimeter_nm
    c0 = np.fft.rfft(dephased_conductance_e2h(small_curve, phi, p, None))
    c1 = np.fft.rfft(dephased_conductance_e2h(small_curve, phi, p, lphi))
    for n in (1, 2, 3):
        assert abs(c1[n]) / abs(c0[n]) == pytest.approx(np.exp(-n * p / (2 * lphi)), rel=1e-9)
    assert c1[0] == pytest.approx(c0[0])


def test_temperature_series_files_carry_their_temperature_and_the_synthetic_label(tmp_path, small_curve, small_sample):
    paths = write_temperature_series(tmp_path, small_curve, small_sample, temperatures_K=(2.0, 8.0, 30.0),
                                     n_points=200)
    series = read_manifest(paths[-1])
    assert [e.metadata["temperature_K"] for e in series.entries] == [2.0, 8.0, 30.0]
    ds = read_table(series.entries[0].path)
    assert ds.attrs["metadata"]["synthetic"] is True and ds.attrs["metadata"]["temperature_K"] == 2.0
    assert "SYNTHETIC" in series.entries[0].path.read_text()


def test_committed_demo_files_are_labelled_synthetic_and_readable():
    files = sorted(p for p in DEMO.iterdir() if p.suffix in (".csv", ".txt", ".tsv"))
    assert len(files) >= 8
    for p in files:
        text = p.read_text(encoding="utf-8")
        assert "SYNTHETIC" in text
        if "theory" not in p.name:
            ds = read_table(p)
            assert ds.attrs["metadata"]["synthetic"] is True
            assert ds.sizes["point"] > 100
