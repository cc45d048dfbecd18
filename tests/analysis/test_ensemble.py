"""Ensemble statistics over realizations, against numpy's own reductions."""

import numpy as np
import xarray as xr

from simsurface.analysis.ensemble import ensemble_summary


def test_summary_matches_numpy_mean_variance_and_percentiles():
    rng = np.random.default_rng(3)
    g = rng.gamma(2.0, 0.5, size=(40, 5, 3))
    da = xr.DataArray(g, dims=("realization", "flux", "energy"), attrs={"units": "e^2/h"})
    s = ensemble_summary(da, percentiles=(10.0, 50.0, 90.0))
    np.testing.assert_allclose(s["conductance_mean"], g.mean(axis=0), rtol=1e-13)
    np.testing.assert_allclose(s["conductance_variance"], g.var(axis=0, ddof=1), rtol=1e-12)
    np.testing.assert_allclose(s["conductance_std_error"], g.std(axis=0, ddof=1) / np.sqrt(40), rtol=1e-12)
    np.testing.assert_allclose(s["log_conductance_mean"], np.log(g).mean(axis=0), rtol=1e-12)
    np.testing.assert_allclose(s["conductance_percentile"].transpose("percentile", ...),
                               np.percentile(g, [10, 50, 90], axis=0), rtol=1e-12)
    assert s["conductance_percentile"].dims[0] == "percentile"
    assert s["conductance_mean"].attrs["units"] == "e^2/h"


def test_results_file_of_an_ensemble_sweep_carries_the_summary(tmp_path, tiny_scenario_text):
    import tomllib

    from simsurface.scenario import parse_scenario
    from simsurface.sweeps import run_scenario

    data = tomllib.loads(tiny_scenario_text)
    data["disorder"] = {"anderson_width_meV": 60.0}
    data["sweep"]["realizations"] = 3
    data["sweep"]["fermi_energy_meV"] = [20.0]
    run_scenario(parse_scenario(data), tmp_path, workers=1, progress=False)
    with xr.open_dataset(tmp_path / "results.nc") as ds:
        np.testing.assert_allclose(ds["conductance_mean"], ds["conductance"].mean("realization"))
        assert ds["conductance_variance"].dims == ("flux", "energy")
        assert float(ds["conductance_variance"].max()) > 0  # realizations differ
