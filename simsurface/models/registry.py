"""Turn a scenario into the model that a sweep calls.

Every transport model offers the same small interface (:class:`TransportModel`): it checks energies against
its validity window, describes one flux value (and optionally a disorder realization) as a
:class:`~simsurface.transport.chain.SliceChain`, and reports what it is for provenance. The analytic model
is not a chain; it gives clean conductances directly (:class:`AnalyticTube`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Protocol, runtime_checkable

import numpy as np

from ..errors import InputError
from ..transport.chain import SliceChain
from . import analytic
from .options import analytic_surface_terms, surface_model_options
from .tube import SurfaceTube


@runtime_checkable
class TransportModel(Protocol):
    """What a sweep needs from a lattice model."""

    area_nm2: float
    perimeter_nm: float

    def check_energies(self, energies_meV: np.ndarray) -> None: ...

    def chain(self, flux_quanta: float, **disorder: Any) -> SliceChain: ...

    def describe(self) -> dict[str, Any]: ...


@dataclass(frozen=True)
class AnalyticTube:
    """Clean analytic tube: conductance = channel count (e²/h), spin included for the trivial layer.

    An axial Zeeman term enters exactly: on the Dirac surface as the flux φ (1 − κ) (``flux_scale`` = 1 − κ,
    docs/fields.md), on the trivial layer as the spin splitting ±``zeeman_meV_per_flux_quanta`` · φ.
    """

    surface: str
    perimeter_nm: float
    area_nm2: float
    energy_scale: float  # ħv in meV nm, or m*/m_e
    flux_scale: float = 1.0
    zeeman_meV_per_flux_quanta: float = 0.0

    def check_energies(self, energies_meV: np.ndarray) -> None:
        """The continuum model has no lattice window; bulk bands are the user's limit (see README)."""

    def conductance(self, energies_meV: np.ndarray, flux_quanta: np.ndarray) -> np.ndarray:
        """Clean conductance in e²/h, shape (n_flux, n_energy)."""
        if self.surface == "topological":
            flux = flux_quanta if self.flux_scale == 1.0 else np.asarray(flux_quanta, float) * self.flux_scale
            return analytic.dirac_channel_count(energies_meV, flux, self.perimeter_nm,
                                                self.energy_scale).astype(float)
        if self.zeeman_meV_per_flux_quanta:
            e = np.atleast_1d(np.asarray(energies_meV, float))
            rows = [sum(analytic.parabolic_channel_count(e + sign * self.zeeman_meV_per_flux_quanta * abs(phi), [phi],
                                                         self.perimeter_nm, self.energy_scale, spin_degeneracy=1)[0]
                        for sign in (1, -1)) for phi in np.atleast_1d(np.asarray(flux_quanta, float))]
            return np.array(rows, dtype=float)
        return analytic.parabolic_channel_count(energies_meV, flux_quanta, self.perimeter_nm,
                                                self.energy_scale).astype(float)

    def describe(self) -> dict[str, Any]:
        return {"model": "surface_analytic", "surface": self.surface, "perimeter_nm": self.perimeter_nm,
                "area_nm2": self.area_nm2,
                ("hbar_v_meV_nm" if self.surface == "topological" else "mass_ratio"): self.energy_scale}


def energy_window_meV(scenario) -> float:
    """Largest |E| a model must describe for this scenario (sweep energies)."""
    return float(np.max(np.abs(scenario.energy_values())))


def analytic_model(scenario) -> AnalyticTube | None:
    """The clean analytic tube of a scenario's wire and material (whatever ``[model] kind`` says); None when
    the scenario has terms no closed form describes (tilted field, circumferential potential, Rashba)."""
    wire = scenario.wire_device()
    mat = scenario.material.material()
    scale = mat.hbar_v_meV_nm if wire.surface == "topological" else mat.effective_mass_ratio
    terms = analytic_surface_terms(scenario)
    if terms is None:
        return None
    return AnalyticTube(wire.surface, wire.section.perimeter_nm, wire.section.area_nm2, scale, **terms)


def build_model(scenario) -> TransportModel | AnalyticTube:
    """The model named by ``[model] kind`` for the scenario's wire, material and sweep."""
    wire = scenario.wire_device()
    mat = scenario.material.material()
    section = wire.section
    kind = scenario.model.kind
    if wire.surface == "topological":
        scale = {"hbar_v_meV_nm": mat.hbar_v_meV_nm}
    else:
        scale = {"mass_ratio": mat.effective_mass_ratio}
    if kind == "surface_analytic":
        return analytic_model(scenario)
    if kind == "surface_lattice":
        return SurfaceTube.from_geometry(
            wire.surface, section.perimeter_nm, section.area_nm2, wire.length_nm,
            max_energy_meV=energy_window_meV(scenario), spacing_nm=scenario.model.lattice_spacing_nm,
            wilson_ratio=scenario.model.wilson_ratio, lead_doping_meV=wire.contacts.doping_meV, **scale,
            **surface_model_options(scenario))
    if kind == "surface_modes":
        from .modes import ModeTube

        return ModeTube.from_geometry(
            section.perimeter_nm, section.area_nm2, wire.length_nm, hbar_v_meV_nm=mat.hbar_v_meV_nm,
            max_energy_meV=energy_window_meV(scenario), spacing_nm=scenario.model.lattice_spacing_nm,
            mode_cutoff_factor=scenario.model.mode_cutoff_factor, lead_doping_meV=wire.contacts.doping_meV,
            **surface_model_options(scenario))
    if kind == "bulk_lattice":
        from .bulk import BulkWire

        energies = scenario.energy_values()
        return BulkWire.from_geometry(
            section.shape, section.width_nm, section.thickness_nm, wire.length_nm,
            scenario.model.bulk_parameters(), energy_window_meV=(float(energies.min()), float(energies.max())),
            spacing_nm=scenario.model.lattice_spacing_nm, lead_doping_meV=wire.contacts.doping_meV)
    raise InputError(f"[model] kind: {kind!r} is not available")
