"""Tolerance study: harmonics per disorder value, mean free path, clean reference, bad input."""

from __future__ import annotations

import json
import math
import tomllib

import numpy as np
import pytest

from simsurface.analysis.harmonics import ensemble_harmonics
from simsurface.errors import InputError
from simsurface.scenario import parse_scenario
from simsurface.studies import run_study


def test_tolerance_study_holds_the_harmonics_of_each_disorder_value(tmp_path, tolerance_text):
    scenario = parse_scenario(tomllib.loads(tolerance_text))
    ds = run_study(scenario, tmp_path, workers=1, progress=False)
    np.testing.assert_array_equal(ds.value, [0.0, 30.0])                       # sorted
    assert sorted(p.name for p in (tmp_path / "points").iterdir()) == ["clean", "puddle_rms_meV_30"]
    clean = ds.sel(value=0.0)
    # the clean value is the clean sweep: every realization identical, ℓ infinite
    assert float(clean.conductance.std("realization").max()) == 0.0
    assert math.isinf(float(clean.mean_free_path_nm.isel(energy=0)))
    direct = ensemble_harmonics(ds.conductance.sel(value=30.0), (1, 2), n_bootstrap=0)
    np.testing.assert_allclose(ds.sample_rms_amplitude.sel(value=30.0), direct.sample_rms_amplitude)
    np.testing.assert_allclose(ds.ensemble_amplitude.sel(value=30.0), direct.ensemble_amplitude)
    dirty = ds.sel(value=30.0).isel(energy=0)
    ell = float(dirty.mean_free_path_nm)
    g, n = float(dirty.conductance_mean), float(ds.clean_conductance.isel(energy=0).mean())
    assert ell == pytest.approx(ds.attrs["modelled_length_nm"] * g / (n - g))
    assert 0 < ell < math.inf
    rows = json.loads((tmp_path / "study.json").read_text())["results"]
    assert rows[1]["puddle_rms_meV"] == 30.0 and rows[1]["h_e_sample_rms_amplitude_e2h"] > 0


@pytest.mark.parametrize("change,message", [
    ({"sweep": {"flux_quanta": [0.0, 0.25, 0.5]}}, r"\[sweep\] flux_quanta: a tolerance study needs the flux to span"),
    ({"sweep": {"realizations": 1}}, r"\[sweep\] realizations: a tolerance study needs at least 2"),
])
def test_tolerance_study_without_a_period_or_an_ensemble_is_refused(tmp_path, tolerance_text, change, message):
    data = tomllib.loads(tolerance_text)
    for table, fields in change.items():
        data[table].update(fields)
    with pytest.raises(InputError, match=message):
        run_study(parse_scenario(data), tmp_path, workers=1, progress=False)
    assert not (tmp_path / "study.nc").exists()


@pytest.mark.parametrize("study,message", [
    ({"parameter": "colour_meV"}, r"\[study\] parameter: Input should be 'anderson_width_meV'"),
    ({"values": [-1.0, 2.0]}, r"\[study\] values: Input should be greater than or equal to 0"),
    ({"parameter": "vacancy_fraction", "values": [0.1, 1.5]},
     r"\[study\] values: 1.5 is not allowed for \[disorder\] vacancy_fraction"),
    ({"parameter": "roughness_rms_nm", "values": [0.5, 1.0]},
     r"\[study\] values: 0.5 is not allowed for \[disorder\] roughness_rms_nm \(.*roughness_correlation_nm: required"),
    ({"values": None}, r"\[study\] parameter and values: both required for kind = 'tolerance'"),
])
def test_bad_tolerance_study_tables_name_the_field(study, message, tolerance_text):
    data = tomllib.loads(tolerance_text)
    data["study"].update(study)
    data["study"] = {k: v for k, v in data["study"].items() if v is not None}
    with pytest.raises(InputError, match=message):
        parse_scenario(data)
