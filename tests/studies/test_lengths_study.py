"""Lengths study: the stored fits are those of the stored means; clean reference; resume."""

from __future__ import annotations

import json
import tomllib

import numpy as np
import pytest
import xarray as xr

from simsurface.analysis import lengths as fits
from simsurface.errors import InputError
from simsurface.scenario import parse_scenario
from simsurface.studies import run_study


def test_lengths_study_writes_fits_consistent_with_its_own_data(tmp_path, lengths_text):
    scenario = parse_scenario(tomllib.loads(lengths_text))
    ds = run_study(scenario, tmp_path, workers=1, progress=False)
    with xr.open_dataset(tmp_path / "study.nc") as disk:
        assert disk["conductance"].dims == ("length", "realization", "flux", "energy")
        assert disk["conductance"].shape == (4, 10, 1, 1)
        assert disk["mean_free_path_nm"].attrs["units"] == "nm"
    p = ds.isel(flux=0, energy=0)
    L = ds.modelled_length_nm.values
    # clean matched leads: the clean wire conducts its channel count at every length
    np.testing.assert_allclose(p.clean_conductance, p.clean_conductance[0], atol=1e-8)
    again = fits.fit_mean_free_path(L, p.conductance_mean, p.conductance_std_error, p.clean_conductance,
                                    p.mean_free_path_used.values)
    assert float(p.mean_free_path_nm) == pytest.approx(again.value_nm, rel=1e-9)
    assert float(p.mean_free_path_nm_low) < float(p.mean_free_path_nm) < float(p.mean_free_path_nm_high)
    np.testing.assert_allclose(p.conductance_mean, p.conductance.mean("realization"))
    summary = json.loads((tmp_path / "study.json").read_text())
    assert summary["kind"] == "lengths"
    assert summary["results"][0]["mean_free_path_nm"] == pytest.approx(float(p.mean_free_path_nm))
    assert summary["results"][0]["beta"] == 2
    assert (tmp_path / "points" / "length_240nm" / "results.nc").is_file()


def test_resumed_study_reuses_finished_points(tmp_path, lengths_text, monkeypatch):
    scenario = parse_scenario(tomllib.loads(lengths_text))
    first = run_study(scenario, tmp_path, workers=1, progress=False)
    import simsurface.studies.points as points_mod

    calls = []
    monkeypatch.setattr(points_mod, "run_scenario", lambda *a, **k: calls.append(a) or None)
    again = run_study(scenario, tmp_path, workers=1, progress=False, resume=True)
    assert calls == []
    np.testing.assert_array_equal(again["conductance"].values, first["conductance"].values)


def test_lengths_study_without_an_ensemble_is_refused(tmp_path, lengths_text):
    data = tomllib.loads(lengths_text)
    data["sweep"]["realizations"] = 1
    with pytest.raises(InputError, match=r"\[sweep\] realizations: a lengths study needs at least 2"):
        run_study(parse_scenario(data), tmp_path, workers=1, progress=False)
    assert not (tmp_path / "study.nc").exists()


@pytest.mark.parametrize("study,message", [
    ({"kind": "lengths"}, r"\[study\] lengths_nm: required for kind = 'lengths'"),
    ({"kind": "lengths", "lengths_nm": [10.0, 20.0]}, r"\[study\] lengths_nm: List should have at least 3 items"),
    ({"kind": "lengths", "lengths_nm": [10.0, 20.0, 10.0]}, r"\[study\] lengths_nm: the lengths must be different"),
    ({"kind": "lengths", "lengths_nm": [10.0, 20.0, -5.0]}, r"\[study\] lengths_nm: Input should be greater than 0"),
    ({"kind": "spectra"}, r"\[study\] kind: Input should be 'lengths' or 'tolerance'"),
])
def test_bad_lengths_study_tables_name_the_field(study, message, lengths_text):
    data = tomllib.loads(lengths_text)
    data["study"] = study
    with pytest.raises(InputError, match=message):
        parse_scenario(data)


def test_localization_length_of_a_five_channel_tube_follows_beenakker(tmp_path):
    # ξ ≈ (βN + 2 − β)ℓ = 2Nℓ for β = 2 (Beenakker, Rev. Mod. Phys. 69, 731 (1997)): a tube of 16 sites
    # around (a = 2 nm, t = 165 meV) at E = 0.9t has N = 5 channels at Φ = 0.2 h/e; Anderson disorder
    # W = 0.8t gives ℓ ≈ 40 nm. The energy lies outside the continuum window (a ValidityWarning), which
    # does not matter for the universality class. Measured when written: ℓ = 40 nm, ξ = 440 ± 60 nm.
    from simsurface.errors import ValidityWarning

    text = f"""
title = "QZ-3 five-channel tube (invented)"
seed = 5
[wire]
cross_section = "circle"
diameter_nm = {32.0 / np.pi!r}
length_nm = 100.0
[model]
lattice_spacing_nm = 2.0
[disorder]
anderson_width_meV = 132.0
[sweep]
flux_quanta = [0.2]
fermi_energy_meV = [148.5]
realizations = 48
[study]
kind = "lengths"
lengths_nm = [10.0, 20.0, 40.0, 80.0, 160.0, 320.0, 640.0, 960.0, 1280.0]
bootstrap_resamples = 100
"""
    with pytest.warns(ValidityWarning):
        ds = run_study(parse_scenario(tomllib.loads(text)), tmp_path, workers=2, progress=False)
    p = ds.isel(flux=0, energy=0)
    assert float(p.channels) == pytest.approx(5.0, abs=1e-6)
    ell, xi, xi_err = float(p.mean_free_path_nm), float(p.localization_length_nm), float(p.localization_length_fit_error_nm)
    assert 20.0 < ell < 80.0
    assert abs(xi - 2 * 5 * ell) < 3 * np.hypot(xi_err, 10 * float(p.mean_free_path_fit_error_nm)), (ell, xi, xi_err)
