"""Statistics of conductance over disorder realizations.

For every point of the other coordinates (flux, energy, ...): mean ⟨G⟩, variance Var G (unbiased,
ddof = 1), the standard error of the mean (Var G / n)^(1/2), the mean of ln G (the typical conductance
exp⟨ln G⟩ is what decays with the localization length) and percentiles.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np
import xarray as xr

#: percentiles stored by default: the median, the quartiles and a 90 % band
DEFAULT_PERCENTILES = (5.0, 16.0, 25.0, 50.0, 75.0, 84.0, 95.0)

#: conductances below this (e²/h) are clipped before taking the logarithm (a fully blocked sample)
LOG_FLOOR = 1e-300


def ensemble_summary(conductance: xr.DataArray, dim: str = "realization",
                     percentiles: Sequence[float] = DEFAULT_PERCENTILES) -> xr.Dataset:
    """Mean, variance, standard error, ⟨ln G⟩ and percentiles of G over ``dim``.

    Parameters
    ----------
    conductance : DataArray
        Conductance in e²/h with a ``dim`` dimension (at least 2 entries for the variance).
    percentiles : sequence of float
        In percent.

    Returns
    -------
    Dataset with ``conductance_mean``, ``conductance_variance``, ``conductance_std_error``,
    ``log_conductance_mean`` (dims: the others) and ``conductance_percentile`` (dim ``percentile`` first).
    """
    n = conductance.sizes[dim]
    units = conductance.attrs.get("units", "e^2/h")
    mean = conductance.mean(dim)
    var = conductance.var(dim, ddof=1) if n > 1 else xr.full_like(mean, np.nan)
    logs = np.log(conductance.clip(min=LOG_FLOOR)).mean(dim)
    pct = conductance.quantile(np.asarray(percentiles) / 100.0, dim=dim).rename(quantile="percentile")
    pct = pct.assign_coords(percentile=("percentile", np.asarray(percentiles, float), {"units": "%"}))
    out = xr.Dataset({
        "conductance_mean": mean.assign_attrs(units=units, long_name=f"mean over {n} realizations"),
        "conductance_variance": var.assign_attrs(units=f"({units})^2", long_name="variance over realizations (ddof=1)"),
        "conductance_std_error": np.sqrt(var / n).assign_attrs(units=units, long_name="standard error of the mean"),
        "log_conductance_mean": logs.assign_attrs(units="1", long_name=f"mean of ln(G / ({units}))"),
        "conductance_percentile": pct.assign_attrs(units=units, long_name="percentiles over realizations"),
    })
    return out

