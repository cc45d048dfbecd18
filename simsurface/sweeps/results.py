"""The results of a sweep as a labelled xarray Dataset (written as results.nc)."""

from __future__ import annotations

import datetime as _dt
import json
from typing import Any

import numpy as np
import xarray as xr

from ..io import package_versions
from ..units import field_T, period_he_T


def build_dataset(spec, model_description: dict[str, Any], conductance_e2h: np.ndarray,
                  scenario_text: str | None = None, clean_channels: np.ndarray | None = None) -> xr.Dataset:
    """Dataset with ``conductance`` (realization, flux, energy) in e²/h and its provenance.

    Parameters
    ----------
    spec : SweepSpec
    model_description : dict
        From the model's ``describe()``; must contain ``area_nm2``.
    conductance_e2h : ndarray, shape (n_realization, n_flux, n_energy)
    scenario_text : str, optional
        The scenario file as written by the user.
    clean_channels : ndarray, shape (n_flux, n_energy), optional
        Analytic clean channel count for reference.
    """
    scn = spec.scenario
    area = float(model_description["area_nm2"])
    coords = {
        "realization": ("realization", np.arange(spec.realizations),
                        {"long_name": "disorder realization index", "units": "1"}),
        "flux": ("flux", spec.flux_quanta, {"long_name": "axial flux through the surface-state contour",
                                            "units": "h/e"}),
        "energy": ("energy", spec.energies_meV, {"long_name": "Fermi energy (from the Dirac point for "
                                                 "topological surfaces, from the band bottom for trivial ones)",
                                                 "units": "meV"}),
        "field": ("flux", field_T(spec.flux_quanta, area), {"long_name": "axial magnetic field", "units": "T"}),
    }
    data_vars = {
        "conductance": (("realization", "flux", "energy"), conductance_e2h,
                        {"long_name": "two-terminal Landauer conductance", "units": "e^2/h"}),
    }
    if clean_channels is not None:
        data_vars["clean_channels"] = (("flux", "energy"), clean_channels,
                                       {"long_name": "open channels of the clean analytic tube (spin included)",
                                        "units": "1"})
    attrs = {
        "title": scn.title,
        "simsurface_kind": "sweep results",
        "model": model_description.get("model", scn.model.kind),
        "engine": spec.engine,
        "seed": scn.seed,
        "seed_rule": "realization r draws from numpy SeedSequence([seed, r]); each disorder kind uses its own child stream (simsurface.disorder.STREAMS)",
        "enclosed_area_nm2": area,
        "perimeter_nm": float(model_description.get("perimeter_nm", np.nan)),
        "period_he_T": float(period_he_T(area)),
        "model_json": json.dumps(model_description, default=float),
        "scenario_json": scn.model_dump_json(),
        "versions_json": json.dumps(package_versions()),
        "created_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
    }
    if scenario_text is not None:
        attrs["scenario_toml"] = scenario_text
    return xr.Dataset(data_vars, coords=coords, attrs=attrs)
