"""Device plans for the three-dimensional wire (``[model] kind = "bulk_lattice"``): what differs from the tube.

The plan's machinery (:mod:`simsurface.analysis.plan`: sections of length L/n, incoherent composition,
thermal window, harmonics, verdict, reports) is the same; this module supplies the parts that the 3D
four-band wire (:class:`~simsurface.models.bulk.BulkWire`) does differently:

* **Period** from the wire's own Aharonov–Bohm area: the flux at which the two k_x = 0 levels nearest the
  surface Dirac point cross is h/2e through A_eff (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010);
  :meth:`BulkWire.effective_area_nm2`). When that crossing is not meaningful (facets hybridize, no clean
  crossing), the surface-state contour area ``area_nm2`` is used instead, and the report says which.
* **Flux** is reported through A_eff (units of h/e); the model's ``chain`` takes the flux through its
  contour, ``model_flux_per_flux`` = area_nm2 / A_eff converts.
* **No periodicity**: the field penetrates the crystal, so G(Φ + 1) ≠ G(Φ) (docs/bulk.md). The plan
  simulates the magnet's field range (extended to one h/e period when it holds less, so that the h/e
  harmonic is defined) and fits the harmonics over that window. The model is time-reversal symmetric at
  zero field, so two-terminal G(Φ) = G(−Φ) holds exactly (Onsager; Büttiker, PRL 57, 1761 (1986)) and only
  |Φ| is simulated.
* **Channel count** N for the incoherent composition: the propagating modes of the clean 3D leads at each
  flux and energy (:func:`lead_channel_count`), without edge broadening.
* **Energies** are measured from the Dirac point of the facets normal to z (the c axis), as in
  ``simsurface run``; a carrier density is refused (the facets differ and bulk bands may be occupied).
* **Born first guess** of the Anderson width (for ``mean_free_path_nm``): the Dirac-cone formula of
  :mod:`~simsurface.analysis.transport_scales` with the surface state taken as a layer of thickness 2d (d the
  single depth of the contour): K = W²a³/(12·2d). It only starts the simulated calibration.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from ..errors import InputError, ValidityWarning
from ..units import KB_MEV_PER_K, RESISTANCE_QUANTUM_OHM, flux_quanta
from . import transport_scales as ts
from .plan import _INSULATING_E2H, PlanSetup, _anderson_width, _energy_grid, coherence_sections, grid_note
from .temperature import DEFAULT_MARGIN_KT

#: the k_x = 0 crossing defines A_eff only if the two levels meet within this fraction of the subband spacing
CROSSING_GAP_FRACTION = 0.05
#: … and if A_eff stays within this factor of the contour area
AREA_RATIO_LIMITS = (0.8, 1.25)


def prepare_bulk_plan(scenario) -> PlanSetup:
    """:func:`~simsurface.analysis.plan.prepare_plan` for ``[model] kind = "bulk_lattice"``."""
    from ..models.bulk import BulkWire

    plan = scenario.plan
    if plan.carrier_density_per_cm2 is not None:
        raise InputError("[plan] carrier_density_per_cm2: not available for [model] kind = 'bulk_lattice' (the "
                         "facets of a 3D wire have different surface densities and bulk bands may be occupied); "
                         "give fermi_energy_meV in meV from the Dirac point of the facets normal to the c axis, "
                         "as in simsurface run")
    e_f = float(plan.fermi_energy_meV)
    notes: list[str] = []
    temp, kt, l_phi, n_sec, l_sec = coherence_sections(plan, scenario.wire.length_nm)
    half = DEFAULT_MARGIN_KT * kt
    section = scenario.wire.section()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ValidityWarning)
        wire = BulkWire.from_geometry(section.shape, section.width_nm, section.thickness_nm, l_sec,
                                      scenario.model.bulk_parameters(), energy_window_meV=(e_f - half, e_f + half),
                                      spacing_nm=scenario.model.lattice_spacing_nm,
                                      lead_doping_meV=scenario.contacts.lead_doping_meV)
        wire.check_energies(np.array([e_f - half, e_f + half]))
    notes += [str(w.message) for w in caught if issubclass(w.category, ValidityWarning)]
    area, area_source = ab_area_nm2(wire, notes)
    tube = wire.tube_parameters()
    hv, e_dirac = tube["hbar_v_meV_nm"], tube["dirac_point_meV"]
    # Born and correlation-energy estimates for the equivalent Dirac tube: energy from its Dirac point (at least
    # the first subband, πħv/P), surface layer of thickness 2d folded into an effective 2D spacing
    e_born = max(abs(e_f - e_dirac), math.pi * hv / wire.perimeter_nm)
    a_born = wire.spacing_nm * math.sqrt(wire.spacing_nm / (2 * wire.depth_nm))
    width, mfp = _anderson_width(scenario, a_born, e_born, hv, notes)
    e_c = ts.correlation_energy_meV("topological", l_sec, mfp, e_born, hv)
    energies = _energy_grid(e_f, kt, e_c, plan.max_energy_points)
    notes += grid_note(energies, e_c, plan.max_energy_points)
    window, simulated, index = flux_window(plan.field_range_T, area, plan.flux_points, notes)
    gap = wire.describe()["bulk_gap_edges_meV"]
    if not gap[0] < e_f < gap[1]:
        notes.append(f"E_F = {e_f:g} meV lies outside the bulk gap {gap[0]:.4g} … {gap[1]:.4g} meV of the model: "
                     "bulk subbands conduct too (they are part of the 3D model).")
    notes.append("gate map not drawn for the 3D wire (a clean G(E, Φ) map costs hundreds of 3D lead solutions; "
                 "simsurface run or compare3d draw one).")
    lattice = {**wire.describe(), "ab_area_nm2": area, "ab_area_source": area_source,
               "tube_dirac_point_meV": e_dirac}
    return PlanSetup(scenario, "topological", hv, area, wire.perimeter_nm, float(scenario.wire.length_nm), e_f,
                     temp, l_phi, n_sec, l_sec, wire.spacing_nm, mfp, width, plan.mean_free_path_nm is not None,
                     e_c, energies, simulated, lattice, tuple(notes), kind="bulk_lattice", flux_window=window,
                     flux_index=index, model_flux_per_flux=wire.area_nm2 / area, born_scales=(a_born, e_born))


def ab_area_nm2(wire, notes: list[str]) -> tuple[float, str]:
    """Aharonov–Bohm area of the 3D wire (nm²) and where it comes from ("level crossing" or "contour").

    The crossing is used when the two k_x = 0 levels nearest the surface Dirac point meet to within
    ``CROSSING_GAP_FRACTION`` of the subband spacing 2πħv/P, away from the ends of the search bracket, and
    A_eff is within ``AREA_RATIO_LIMITS`` of the contour area; otherwise the contour area is used.
    """
    phi = wire.ab_crossing_flux()
    tube = wire.tube_parameters()
    e = wire.subband_energies_meV(phi)
    pair = e[np.argsort(np.abs(e - tube["dirac_point_meV"]))[:2]]
    gap = float(abs(pair[1] - pair[0]))
    spacing = 2 * math.pi * tube["hbar_v_meV_nm"] / wire.perimeter_nm
    area = wire.area_nm2 / (2 * phi)
    ratio = area / wire.area_nm2
    if gap <= CROSSING_GAP_FRACTION * spacing and 0.21 < phi < 0.79 and \
            AREA_RATIO_LIMITS[0] < ratio < AREA_RATIO_LIMITS[1]:
        return area, "level crossing"
    notes.append(f"the k_x = 0 levels of this 3D wire do not cross cleanly (gap {gap:.3g} meV at flux {phi:.3g}, "
                 f"subband spacing {spacing:.3g} meV): the period uses the surface-state contour area "
                 f"{wire.area_nm2:.4g} nm² instead of the level-crossing area.")
    return float(wire.area_nm2), "contour"


def flux_window(field_range_T, area_nm2: float, points_per_half: int,
                notes: list[str]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Reported flux grid over the field range, the |Φ| values to simulate, and the map between them.

    Parameters
    ----------
    field_range_T : (float, float)
        Lowest and highest field of the magnet (T).
    area_nm2 : float
        Aharonov–Bohm area; flux in units of h/e through it.
    points_per_half : int
        Grid points per half flux quantum (as ``[plan] flux_points``), spacing 1/(2(points − 1)).

    Returns
    -------
    window : ndarray, shape (n,)
        Uniform flux grid covering the field range, extended upwards to one flux quantum if shorter.
    simulated : ndarray, shape (m,)
        Distinct |Φ| of the window (G(Φ) = G(−Φ)), ascending.
    index : ndarray of int, shape (n,)
        ``window`` ↔ ``simulated[index]`` (up to the sign).
    """
    lo, hi = (float(f) for f in flux_quanta(np.asarray(field_range_T, float), area_nm2))
    if hi - lo < 1.0:
        notes.append(f"the field range holds {hi - lo:.3g} h/e periods: the simulation is extended to one period "
                     f"(flux {lo:.3g} … {lo + 1:.3g} h/e) so that the h/e harmonic is defined; the verdict counts "
                     "the periods inside the field range only.")
        hi = lo + 1.0
    step = 0.5 / (points_per_half - 1)
    window = np.linspace(lo, hi, int(math.ceil((hi - lo) / step - 1e-9)) + 1)
    simulated, index = np.unique(np.round(np.abs(window), 12), return_inverse=True)
    return window, simulated, index.reshape(window.shape)


def lead_channel_count(model, flux_quanta_model: np.ndarray, energies_meV: np.ndarray,
                       broadening_meV: float = 0.0) -> np.ndarray:
    """Propagating modes of the clean leads of a 3D wire; shape (flux, energy).

    This is the clean wire's conductance in e²/h (a translation-invariant wire transmits every mode).
    ``flux_quanta_model`` is the model's own flux (through its contour). Edge broadening is not available.
    """
    from threadpoolctl import threadpool_limits

    from ..transport.leads import lead_terms

    if broadening_meV > 0:
        raise ValueError("the 3D wire's channel count has no edge broadening")
    out = np.empty((np.size(flux_quanta_model), np.size(energies_meV)))
    # one BLAS thread, as in the sweep workers: measured 8x faster for these dense eigenproblems on a busy machine
    with threadpool_limits(1):
        for i, phi in enumerate(np.atleast_1d(flux_quanta_model)):
            lead = model.chain(float(phi)).left
            out[i] = [lead_terms(lead, float(e)).n_propagating for e in np.atleast_1d(energies_meV)]
    return out


def window_field_curve(setup: PlanSetup, g_window: np.ndarray, fields_T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """G(B) and R(B)/R(B_0) from G on ``setup.flux_window`` (no periodic extension), B_0 the field nearest 0.

    Shape-preserving interpolation (PCHIP) in the flux through the Aharonov–Bohm area.
    """
    from scipy.interpolate import PchipInterpolator

    phi = setup.flux_window
    spline = PchipInterpolator(phi, g_window)
    lo, hi = setup.plan.field_range_T
    flux = np.clip(flux_quanta(np.asarray(fields_T, float), setup.area_nm2), phi[0], phi[-1])
    g = spline(flux)
    series = setup.plan.series_resistance_ohm if setup.plan.terminals == 2 else 0.0
    r = RESISTANCE_QUANTUM_OHM / np.maximum(g, _INSULATING_E2H) + series
    g0 = float(spline(np.clip(float(flux_quanta(min(max(0.0, lo), hi), setup.area_nm2)), phi[0], phi[-1])))
    return g, r / (RESISTANCE_QUANTUM_OHM / max(g0, _INSULATING_E2H) + series)


def adjust_summary(summary: dict, setup: PlanSetup) -> None:
    """Replace the tube-specific parts of a plan summary by those of the 3D wire (in place)."""
    lat = setup.lattice
    summary["device"].update({
        "material": lat["parameter_set"], "model": "bulk_lattice",
        "cross_section": f"{lat['cross_section']} {lat['modelled_width_nm']:.4g} nm x "
                         f"{lat['modelled_thickness_nm']:.4g} nm as modelled (3D crystal; surface-state depth from "
                         f"the model: {lat['surface_depth_y_nm']:.3g} nm below y facets, {lat['surface_depth_z_nm']:.3g} "
                         "nm below z facets)",
        "energy_reference": "Dirac point of the facets normal to z (c axis)",
        "carrier_density_per_cm2": None, "fermi_wavevector_per_nm": None,
        "ab_area_nm2": setup.area_nm2, "ab_area_source": lat["ab_area_source"],
        "contour_area_nm2": lat["area_nm2"], "tube_dirac_point_meV": lat["tube_dirac_point_meV"],
    })
    half = DEFAULT_MARGIN_KT * setup.temperature_K * KB_MEV_PER_K
    lo, hi = lat["validity_window_meV"]
    summary["validity"]["lattice_window_ok"] = bool(lo <= setup.fermi_energy_meV - half
                                                   and setup.fermi_energy_meV + half <= hi)
    summary["coherence"]["composition_rule"] = ("1/T = 1/N + sum_i (1/T_i - 1/N) (incoherent sections), N the "
                                                "propagating modes of the clean 3D leads (no edge broadening)")
    summary["assumptions"] = BULK_ASSUMPTIONS
    summary["compute"].update({
        "flux_symmetry": "field range in flux through A_eff, |flux| simulated (G(Phi) = G(-Phi) exact), not "
                         "periodic: harmonics fitted over the window",
        "flux_window": [float(setup.flux_window[0]), float(setup.flux_window[-1])],
        "model_flux_per_flux": setup.model_flux_per_flux,
    })


BULK_ASSUMPTIONS = [
    "Three-dimensional four-band k.p lattice model of the whole crystal (docs/bulk.md): surface and bulk states, "
    "no Zeeman coupling, no hexagonal warping, no electron-electron interaction; the axial field enters the "
    "whole cross-section by Peierls phases, so G(B) is not periodic.",
    "Period from the Aharonov-Bohm area of the 3D wire (level crossing of its k_x = 0 levels at h/2e, or the "
    "surface-state contour area when that crossing is not meaningful; device.ab_area_source says which). Flux "
    "is in units of h/e through that area.",
    "Energies are measured from the Dirac point of the facets normal to the c axis (as in simsurface run).",
    "Harmonics are least-squares Fourier fits over the simulated flux window (the field range, at least one h/e "
    "period), not over an exact period; the time-reversal symmetric model gives G(Phi) = G(-Phi) exactly, so only "
    "|Phi| is simulated.",
    "Disorder: Anderson (uncorrelated site energies, box distribution, on every site of the crystal) with the "
    "width from [plan] or [disorder], plus puddles and removed surface sites (vacancy_fraction) of the [disorder] "
    "table; roughness is not supported by the plan. A requested mean free path is calibrated by simulated "
    "ensembles from a Born first guess that treats the surface state as a layer of thickness 2d.",
    "Phase coherence: n = round(L/L_phi) sections, phase coherent inside and combined incoherently, "
    "1/T = 1/N + sum_i (1/T_i - 1/N), N the propagating modes of the clean 3D leads (no edge broadening, so with "
    "n > 1 a subband edge crossing E_F as the flux changes adds a step (n - 1) d(1/N) to 1/G).",
    "Temperature: elastic transport at each energy, then thermal smearing with -df/dE over E_F +- 5 k_BT.",
    "Contacts: the simulated wire sits between clean leads of the same 3D wire; real contacts enter only as the "
    "series resistance of a 2-terminal measurement.",
    "Statistics: amplitudes of one device are rms values over the simulated devices; intervals are bootstrap "
    "intervals (68 %) over the devices.",
]
