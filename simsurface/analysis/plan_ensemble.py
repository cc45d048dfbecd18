"""Disorder ensembles for a plan, through the sweep machinery: a scenario's tube, re-sized, with its disorder.

The plan needs the conductance of many disorder realizations of one tube section at a few flux values and
energies. It builds a derived scenario — same material, cross-section, lattice settings and ``[disorder]``
table, its own length, sweep axes and (for the calibration) Anderson width and seed — and hands its
:class:`~simsurface.sweeps.spec.SweepSpec` to :func:`simsurface.sweeps.run.compute_spec`. Realization r is
drawn by :mod:`simsurface.disorder` from ``numpy.random.SeedSequence([seed, r])``, exactly as in
``simsurface run``; ensembles get the same workers, Dask option, progress bar and resumable parts store.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from ..models.modes import MODE_CUTOFF_FACTOR, cutoff_factor_for_window
from ..resources import scenario_fields
from ..scenario import ModelSection, SweepSection
from ..sweeps.run import compute_spec
from ..sweeps.spec import make_spec


def lattice_scenario(scenario, *, length_nm: float, energies_meV: np.ndarray, flux_quanta: np.ndarray,
                     realizations: int, spacing_nm: float | None, anderson_width_meV: float | None = None,
                     seed_offset: int = 0, model_energy_meV: float | None = None):
    """A copy of ``scenario`` describing a surface-lattice tube (or its 3D wire, for ``[model] kind =
    "bulk_lattice"``, or the mode tube for ``"surface_modes"``) of ``length_nm`` and the given sweep axes
    (flux in the model's own units).

    The tube is the surface-lattice tube, or the mode tube when ``[model] kind = "surface_modes"``.
    ``spacing_nm`` pins the lattice so that every ensemble of one plan uses the same lattice (a disorder
    width means something only for a given spacing); for the mode tube ``model_energy_meV`` (the energy
    window the plan's model was built for) pins its mode set and potential grid the same way.
    ``anderson_width_meV`` replaces the ``[disorder]`` Anderson width (other disorder kinds are kept);
    ``seed_offset`` separates the random streams of different ensembles of one plan.
    """
    wire = scenario.wire.model_copy(update={"length_nm": float(length_nm)})
    if scenario.model.kind == "bulk_lattice":   # the 3D wire keeps its parameters; only the lattice is pinned
        model = scenario.model.model_copy(update={"lattice_spacing_nm": spacing_nm})
    elif scenario.model.kind == "surface_modes":
        kappa = scenario.model.mode_cutoff_factor or MODE_CUTOFF_FACTOR
        if model_energy_meV is not None:
            kappa = cutoff_factor_for_window(kappa, scenario.wire.section().perimeter_nm,
                                             scenario.material.material().hbar_v_meV_nm, model_energy_meV,
                                             float(np.max(np.abs(energies_meV))))
        model = ModelSection(kind="surface_modes", lattice_spacing_nm=spacing_nm, mode_cutoff_factor=kappa,
                             engine=scenario.model.engine)
    else:
        model = ModelSection(kind="surface_lattice", lattice_spacing_nm=spacing_nm,
                             wilson_ratio=scenario.model.wilson_ratio, engine=scenario.model.engine)
    sweep = SweepSection(flux_quanta=[float(f) for f in flux_quanta],
                         fermi_energy_meV=[float(e) for e in energies_meV], realizations=int(realizations))
    disorder = scenario.disorder
    if anderson_width_meV is not None:
        disorder = disorder.with_value("anderson_width_meV", float(anderson_width_meV))
    return scenario.model_copy(update={"wire": wire, "model": model, "sweep": sweep, "disorder": disorder,
                                       "seed": int(scenario.seed) + int(seed_offset), "study": None})


def run_ensemble(scenario, work_dir: str | Path, *, length_nm: float, energies_meV: np.ndarray,
                 flux_quanta: np.ndarray, realizations: int, spacing_nm: float | None, label: str,
                 anderson_width_meV: float | None = None, workers: int | None = None, cluster: str | None = None,
                 resume: bool = False, progress: bool = True, seed_offset: int = 0,
                 model_energy_meV: float | None = None) -> tuple[np.ndarray, Any]:
    """Conductance (e²/h) of ``realizations`` disordered tubes; shape (realization, flux, energy).

    Returns the values and the lattice model that produced them.
    """
    derived = lattice_scenario(scenario, length_nm=length_nm, energies_meV=energies_meV, flux_quanta=flux_quanta,
                               realizations=realizations, spacing_nm=spacing_nm,
                               anderson_width_meV=anderson_width_meV, seed_offset=seed_offset,
                               model_energy_meV=model_energy_meV)
    spec = make_spec(derived)
    model = spec.model()
    fields, named = plan_fields(scenario, model_energy_meV or float(np.max(np.abs(energies_meV))))
    values = compute_spec(spec, Path(work_dir) / label.replace(" ", "-"), resume=resume, workers=workers,
                          cluster=cluster, progress=progress, label=label, fields=fields, values=named)
    return values, model


def plan_fields(scenario, max_energy_meV: float) -> tuple[dict[str, str], dict]:
    """The plan's own fields behind the size of its sweeps, for resource messages
    (:func:`simsurface.resources.scenario_fields`): the Fermi energy or carrier density of ``[plan]``."""
    plan = scenario.plan
    if plan is None:  # an ensemble of a scenario without [plan] (studies, tests)
        return scenario_fields(scenario, max_energy_meV=max_energy_meV)
    energy_field = "[plan] fermi_energy_meV" if plan.fermi_energy_meV is not None else "[plan] carrier_density_per_cm2"
    fields, values = scenario_fields(scenario, max_energy_meV=max_energy_meV, energy_field=energy_field)
    fields.update(realizations="[plan] devices", flux="[plan] flux_points", energies="[plan] max_energy_points")
    values.update({energy_field: plan.fermi_energy_meV if plan.fermi_energy_meV is not None
                   else plan.carrier_density_per_cm2, "[plan] devices": plan.devices})
    return fields, values
