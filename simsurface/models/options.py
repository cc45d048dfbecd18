"""The scenario's surface terms as constructor arguments of the surface models (one place, for every caller)."""

from __future__ import annotations

from typing import Any

from ..units import BOHR_MAGNETON_MEV_PER_T, field_T
from .field import AppliedField, zeeman_flux_shift_quanta
from .profile import checked_profile_meV

__all__ = ["surface_model_options", "analytic_surface_terms"]


def surface_model_options(scenario) -> dict[str, Any]:
    """Keyword arguments of ``ModeTube.from_geometry`` / ``SurfaceTube.from_geometry`` for the field direction
    (``[field]``), the surface g-factor and Rashba coupling (``[material]``) and the circumferential potential
    (``[wire]``); empty values keep today's models unchanged.

    The Rashba term is returned only for a trivial surface (the scenario refuses it otherwise).
    """
    mat = scenario.material.material()
    field = AppliedField(scenario.field.angle_deg, scenario.field.azimuth_deg, float(mat.surface_g_factor or 0.0))
    options: dict[str, Any] = {"section": scenario.wire.section()}
    if not field.is_axial_orbital_only:
        options["field"] = field
    if scenario.wire.circumferential_potential_meV is not None:
        options["circumferential_potential_meV"] = checked_profile_meV(
            scenario.wire.circumferential_potential_meV, "[wire] circumferential_potential_meV")
    if scenario.wire.surface == "trivial" and mat.rashba_meV_nm:
        options["rashba_meV_nm"] = float(mat.rashba_meV_nm)
    return options


def analytic_surface_terms(scenario) -> dict[str, float] | None:
    """Keyword arguments of the analytic tube for the scenario's surface terms, or None when no closed form
    applies (tilted field, circumferential potential, Rashba coupling).

    Axial Zeeman term: on the Dirac surface the flux φ becomes φ (1 − κ), κ = g μ_B P Φ0/(4πħv A)
    (docs/fields.md); on the trivial layer each subband splits by ±(g μ_B/2) B, B = φ Φ0/A.
    """
    mat = scenario.material.material()
    if (scenario.field.angle_deg != 0 or scenario.wire.circumferential_potential_meV is not None
            or (scenario.wire.surface == "trivial" and mat.rashba_meV_nm)):
        return None
    g = float(mat.surface_g_factor or 0.0)
    if not g:
        return {}
    section = scenario.wire.section()
    tesla_per_flux = float(field_T(1.0, section.area_nm2))
    if scenario.wire.surface == "topological":
        kappa = float(zeeman_flux_shift_quanta(g, tesla_per_flux, section.perimeter_nm, mat.hbar_v_meV_nm))
        return {"flux_scale": 1.0 - kappa}
    return {"zeeman_meV_per_flux_quanta": 0.5 * abs(g) * BOHR_MAGNETON_MEV_PER_T * tesla_per_flux}
