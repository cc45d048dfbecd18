"""Device plan: what a proposed wire will show in a magnetoresistance measurement.

Pipeline (each step is a small function below; ``docs/plan.md`` explains the physics and the rules):

1. :func:`prepare_plan` — derive physical scales from the scenario's ``[plan]`` table: periods
   (h/e)/A_eff and (h/2e)/A_eff, Fermi energy or density, L_phi(T), the number n of phase-coherent sections,
   the lattice, the energy grid (Fermi window ± 5 k_BT, spaced by the correlation energy) and the flux grid.
2. :func:`calibrate_width` — when a mean free path is given: Anderson width from the Born approximation, then
   corrected by a small simulated ensemble until the simulated ℓ matches (power-law secant steps).
3. :func:`run_plan` — an ensemble of ``devices × n`` section realizations through the sweep machinery, the
   mean free path it shows, incoherent composition of n sections per device with disorder-broadened channel
   counts (:mod:`~simsurface.analysis.dephasing`), thermal smearing (:mod:`~simsurface.analysis.temperature`),
   harmonics per device and of the ensemble with bootstrap intervals (:mod:`~simsurface.analysis.harmonics`),
   the dominant harmonic, the phase, the verdict (:mod:`~simsurface.analysis.verdict`).

Flux symmetry used to halve the work: two-terminal G(Φ) = G(−Φ) (Onsager; Büttiker, PRL 57, 1761 (1986)) and
G(Φ + 1) = G(Φ) (the flux enters only as a phase around the tube), so G on [0, 1/2] fixes the whole period.

Model (:func:`with_default_plan_model`): a topological surface is planned on the mode tube of
:mod:`simsurface.models.modes`, which keeps time reversal exactly and so shows the weak-antilocalization h/2e
component of ⟨G⟩ that the Wilson lattice loses (docs/modes.md); the surface-lattice tube when the scenario asks
for it and for trivial surfaces; the 3D wire (``bulk_lattice``) through :mod:`.plan_bulk`.
"""

from __future__ import annotations

import datetime as _dt
import math
import time
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, Callable

import numpy as np
import xarray as xr

from .. import __version__
from ..errors import InputError
from ..models.tube import SurfaceTube
from ..units import KB_MEV_PER_K, RESISTANCE_QUANTUM_OHM, flux_quanta, period_he_T
from . import transport_scales as ts
from .dephasing import broadened_channel_count, coherence_length_nm, compose_incoherent, section_count
from .plan_ensemble import run_ensemble
from .harmonics import HARMONIC_NAMES, dominance, ensemble_harmonics, harmonics_of
from .temperature import DEFAULT_MARGIN_KT, thermal_average
from .verdict import RULE_TEXT, best, verdict

HARMONICS = (1, 2, 3, 4)
BOOTSTRAP = 1000
CALIBRATION_REALIZATIONS = 24
CALIBRATION_TOLERANCE = 0.1
CALIBRATION_STEPS = 4
#: conductance below this (e²/h) is treated as insulating when converting to resistance
_INSULATING_E2H = 1e-6


@dataclass(frozen=True)
class PlanSetup:
    """Physical scales and numerical grids of one plan (all derived from the scenario, nothing computed)."""

    scenario: Any
    surface: str
    energy_scale: float
    area_nm2: float
    perimeter_nm: float
    length_nm: float
    fermi_energy_meV: float
    temperature_K: float
    coherence_length_nm: float
    n_sections: int
    section_length_nm: float
    spacing_nm: float
    transport_mfp_nm: float          # requested, or Born estimate of the given width
    width_meV: float                 # given, or the Born first guess
    mfp_given: bool
    correlation_energy_meV: float
    energies_meV: np.ndarray
    flux_simulated: np.ndarray       # [0, 1/2] (mirrored) or the whole period [0, 1) (symmetrized)
    lattice: dict
    notes: tuple[str, ...] = ()
    kind: str = "surface_lattice"               # [model] kind
    flux_window: np.ndarray | None = None       # 3D wire: reported flux grid over the field range (not periodic)
    flux_index: np.ndarray | None = None        # 3D wire: flux_window = ±flux_simulated[flux_index]
    model_flux_per_flux: float = 1.0            # flux through the model's own contour per reported flux quantum
    born_scales: tuple[float, float] | None = None  # (spacing nm, energy meV) of the Born estimates if not a, E_F

    @property
    def plan(self):
        return self.scenario.plan

    @property
    def period_he_T(self) -> float:
        return float(period_he_T(self.area_nm2))

    @property
    def period_h2e_T(self) -> float:
        return self.period_he_T / 2

    @property
    def field_span_T(self) -> float:
        lo, hi = self.plan.field_range_T
        return hi - lo

    def periods(self, harmonic: int) -> float:
        """Periods of harmonic k inside the field range."""
        return self.field_span_T / (self.period_he_T / harmonic)

    @property
    def section_realizations(self) -> int:
        return self.plan.devices * self.n_sections

    @property
    def bulk(self) -> bool:
        """True for the 3D wire: G(B) is not periodic, results live on the field range (:mod:`.plan_bulk`)."""
        return self.kind == "bulk_lattice"

    @property
    def mirrored(self) -> bool:
        """True when only [0, 1/2] is simulated (the model obeys G(Φ) = G(−Φ) exactly)."""
        return self.flux_window is None and self.flux_simulated[-1] == 0.5

    @property
    def born_spacing_nm(self) -> float:
        return self.spacing_nm if self.born_scales is None else self.born_scales[0]

    @property
    def born_energy_meV(self) -> float:
        return self.fermi_energy_meV if self.born_scales is None else self.born_scales[1]

    def model_flux(self, flux: np.ndarray) -> np.ndarray:
        """Reported flux (units of h/e through ``area_nm2``) -> the flux argument of the model's ``chain``."""
        return np.asarray(flux, float) * self.model_flux_per_flux

    @property
    def flux_full(self) -> np.ndarray:
        """Flux grid on which results are reported: one period [0, 1), or the 3D wire's field window."""
        if self.flux_window is not None:
            return self.flux_window
        if self.mirrored:
            return np.concatenate([self.flux_simulated, 1.0 - self.flux_simulated[-2:0:-1]])
        return self.flux_simulated

    def cost_units(self) -> int:
        """Slice-chain solves at one energy (for time estimates)."""
        return self.section_realizations * self.flux_simulated.size * self.energies_meV.size


def _energy_scale(scenario) -> float:
    mat = scenario.material.material()
    return mat.hbar_v_meV_nm if scenario.wire.surface == "topological" else float(mat.effective_mass_ratio)


def prepare_plan(scenario) -> PlanSetup:
    """Derive the plan's scales and grids from a validated scenario with a ``[plan]`` table."""
    if scenario.plan is None:
        raise InputError("[plan]: required table is missing (see docs/plan.md for its fields)")
    planned = with_default_plan_model(scenario)
    setup = _preparer(planned.model.kind)(planned)
    if planned is not scenario:
        setup = replace(setup, notes=setup.notes + (
            "model: the mode tube ([model] kind = 'surface_modes'), the plan's default for a topological "
            "surface: it keeps time reversal exactly, so the antilocalization h/2e and the h/e phase come out "
            "right; set [model] kind = 'surface_lattice' for the Wilson lattice tube.",))
    return setup


#: [model] fields that ask for the Wilson lattice tube (or another model) explicitly
_LATTICE_CHOICES = {"kind", "wilson_ratio", "lattice_spacing_nm"}


def with_default_plan_model(scenario):
    """The scenario a plan simulates: a topological surface is planned on the mode tube
    (``surface_modes``) unless the ``[model]`` table names a kind, a Wilson ratio or a lattice spacing, or the
    ``[disorder]`` table asks for vacancies (which need lattice sites). The Wilson lattice breaks time
    reversal weakly, which removes the antilocalization h/2e of ⟨G⟩ and shifts subband edges (docs/plan.md,
    docs/modes.md); trivial surfaces keep the lattice tube. Returns ``scenario`` itself when nothing changes.
    """
    if (scenario.wire.surface != "topological" or scenario.model.model_fields_set & _LATTICE_CHOICES
            or scenario.disorder.vacancy_fraction > 0):
        return scenario
    return scenario.model_copy(update={"model": scenario.model.model_copy(update={"kind": "surface_modes"})})


def _preparer(kind: str) -> Callable[[Any], PlanSetup]:
    """The plan's one dispatch on ``[model] kind``: the function that prepares a setup for that model."""
    if kind == "bulk_lattice":
        from .plan_bulk import prepare_bulk_plan

        return prepare_bulk_plan
    return _prepare_tube_plan


def coherence_sections(plan, length_nm: float) -> tuple[float, float, float, int, float]:
    """(T in K, k_BT in meV, L_phi(T) in nm, sections n, section length in nm) of a ``[plan]`` table."""
    temp = float(plan.temperature_K)
    kt = temp * KB_MEV_PER_K
    t_ref = plan.coherence_reference_K or temp
    if temp > 0:
        l_phi = float(coherence_length_nm(temp, plan.coherence_length_nm, t_ref, plan.coherence_exponent))
    else:
        if plan.coherence_reference_K not in (None, 0.0) and plan.coherence_exponent > 0:
            raise InputError("[plan] temperature_K: 0 K makes L_phi(T) = L_phi(T0)(T/T0)^(-p) infinite; "
                             "give a temperature > 0 K")
        l_phi = float(plan.coherence_length_nm)
    n_sec = section_count(float(length_nm), l_phi)
    return temp, kt, l_phi, n_sec, float(length_nm) / n_sec


def grid_note(energies: np.ndarray, e_c: float, max_points: int) -> list[str]:
    """A note when the energy grid is coarser than the correlation energy (amplitudes are then upper bounds)."""
    if energies.size > 1 and np.diff(energies)[0] > 1.5 * e_c:
        return [f"energy grid spacing {np.diff(energies)[0]:.3g} meV is coarser than the correlation energy "
                f"{e_c:.3g} meV of a section (limit [plan] max_energy_points = {max_points}): thermal "
                "averaging of sample-specific oscillations is underestimated, their amplitudes are upper bounds."]
    return []


def _prepare_tube_plan(scenario) -> PlanSetup:
    """:func:`prepare_plan` for the surface tubes: the lattice tube, the mode tube (``surface_modes``); also
    used for ``surface_analytic`` scenarios, which are planned on the lattice tube."""
    plan = scenario.plan
    surface = scenario.wire.surface
    scale = _energy_scale(scenario)
    section = scenario.wire.section()
    notes: list[str] = []
    if plan.fermi_energy_meV is not None:
        e_f = float(plan.fermi_energy_meV)
    else:
        e_f = ts.fermi_energy_from_density_meV(surface, plan.carrier_density_per_cm2, scale)
    if surface == "trivial" and e_f <= 0:
        raise InputError(f"[plan] fermi_energy_meV: {e_f:g} meV is below the band bottom of a trivial surface; "
                         "give a value > 0")
    mat = scenario.material.material()
    if mat.bulk_gap_meV is not None and surface == "topological" and abs(e_f) > mat.bulk_gap_meV / 2:
        notes.append(f"|E_F| = {abs(e_f):.3g} meV exceeds half the bulk gap ({mat.bulk_gap_meV / 2:.3g} meV): "
                     "bulk bands would conduct too; the surface-only model does not describe them.")
    temp, kt, l_phi, n_sec, l_sec = coherence_sections(plan, scenario.wire.length_nm)
    length = float(scenario.wire.length_nm)

    # the lattice: valid up to the top of the Fermi window
    e_top = abs(e_f) + DEFAULT_MARGIN_KT * kt
    tube = _section_model(scenario, section, l_sec, e_top, scale)
    a = tube.spacing_nm
    if e_top > tube.validity_limit_meV:
        notes.append(f"the Fermi window reaches {e_top:.3g} meV, beyond the lattice validity limit "
                     f"{tube.validity_limit_meV:.3g} meV; set a smaller [model] lattice_spacing_nm.")
    cell = _disorder_cell_nm(tube)
    width, mfp = _anderson_width(scenario, cell, e_f, scale, notes)
    e_c = ts.correlation_energy_meV(surface, l_sec, mfp, e_f, scale)
    energies = _energy_grid(e_f, kt, e_c, plan.max_energy_points)
    notes += grid_note(energies, e_c, plan.max_energy_points)
    modes = scenario.model.kind == "surface_modes"
    flux = _flux_grid(surface, plan.flux_points, exact_time_reversal=modes)
    return PlanSetup(scenario, surface, scale, section.area_nm2, section.perimeter_nm, length, e_f, temp, l_phi,
                     n_sec, l_sec, a, mfp, width, plan.mean_free_path_nm is not None, e_c, energies, flux,
                     tube.describe(), tuple(notes), **({"kind": "surface_modes", "born_scales": (cell, e_f)}
                                                      if modes else {}))


def _section_model(scenario, section, length_nm: float, max_energy_meV: float, scale: float):
    """The model of one phase-coherent section: the surface-lattice tube, or the mode tube when asked for."""
    surface = scenario.wire.surface
    if scenario.model.kind == "surface_modes":
        if surface != "topological":      # the scenario refuses it too; plans may be built by hand
            raise InputError("[model] kind: 'surface_modes' models a topological (Dirac) surface; for [wire] "
                             "surface = 'trivial' use kind = 'surface_lattice'")
        from ..models.modes import ModeTube

        return ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, length_nm, hbar_v_meV_nm=scale,
                                      max_energy_meV=max_energy_meV, spacing_nm=scenario.model.lattice_spacing_nm,
                                      mode_cutoff_factor=scenario.model.mode_cutoff_factor)
    return SurfaceTube.from_geometry(
        surface, section.perimeter_nm, section.area_nm2, length_nm, max_energy_meV=max_energy_meV,
        spacing_nm=scenario.model.lattice_spacing_nm, wilson_ratio=scenario.model.wilson_ratio,
        **({"hbar_v_meV_nm": scale} if surface == "topological" else {"mass_ratio": scale}))


def _disorder_cell_nm(model) -> float:
    """√(area of one cell on which the Anderson potential takes an independent value), nm.

    The square lattice: the spacing a. The mode tube: its potential grid, a along the wire × P/n_grid around;
    white noise on that grid has Fourier components of variance W²/12/n_grid in every mode difference the
    basis keeps, so K = W² a (P/n_grid)/12 as for a lattice of that cell (common practice, no source).
    """
    from ..disorder.layout import layout_of

    return float(math.sqrt(np.prod(layout_of(model).spacing_nm)))


def _anderson_width(scenario, spacing_nm: float, e_f: float, scale: float, notes: list[str]) -> tuple[float, float]:
    """Anderson width W (meV) of the plan and the transport mean free path (nm) used to size its grids.

    W comes from ``[plan] anderson_width_meV``, from ``[plan] mean_free_path_nm`` (Born first guess, calibrated in
    :func:`calibrate_width`) or from ``[disorder] anderson_width_meV``; the other ``[disorder]`` kinds
    (puddles, vacancies) are simulated as given.
    """
    plan, dis, surface = scenario.plan, scenario.disorder, scenario.wire.surface
    if dis.roughness_rms_nm > 0:
        raise InputError("[disorder] roughness_rms_nm: not supported by simsurface plan (roughness gives every "
                         "slice its own flux, so G(B) has no single period to simulate); remove it here and "
                         "study roughness with simsurface run")
    given = plan.mean_free_path_nm is not None or plan.anderson_width_meV is not None
    if given and dis.anderson_width_meV > 0:
        raise InputError("[plan] mean_free_path_nm / anderson_width_meV: [disorder] anderson_width_meV is set too; give "
                         "the Anderson width in one place")
    if plan.mean_free_path_nm is not None:
        mfp = float(plan.mean_free_path_nm)
        width = ts.born_width_meV(surface, mfp, spacing_nm, e_f, scale)
    else:
        width = float(plan.anderson_width_meV if plan.anderson_width_meV is not None else dis.anderson_width_meV)
        mfp = float(ts.born_transport_mfp_nm(surface, width, spacing_nm, e_f, scale)) if width > 0 else math.inf
    others = [k for k in dis.parameters().kinds if k != "anderson"]
    if others:
        notes.append(f"[disorder] {', '.join(others)}: simulated as given; the energy grid was sized from the "
                     "Anderson part alone (its correlation energy may be too large).")
    if width == 0 and not others:
        notes.append("clean wire: no disorder given ([plan] mean_free_path_nm / anderson_width_meV or a [disorder] "
                     "table); the prediction is that of a ballistic tube.")
    return width, mfp


def _flux_grid(surface: str, points_per_half: int, exact_time_reversal: bool = False) -> np.ndarray:
    """Simulated flux values: [0, 1/2] for the trivial tube and the mode tube (``exact_time_reversal``), the
    whole period for the topological lattice tube.

    The trivial lattice tube is time-reversal symmetric at zero flux, so two-terminal G(Φ) = G(−Φ) holds
    exactly (Onsager; Büttiker, PRL 57, 1761 (1986)) and [0, 1/2] fixes the period. The Wilson term of the
    Dirac lattice tube breaks time reversal, and with on-site disorder G(Φ) − G(−Φ) is not zero (measured:
    several per cent of G, not shrinking with the lattice spacing); the whole period is simulated and the
    even part kept (:func:`even_part`), as a real two-terminal measurement of a time-reversal symmetric
    surface would show.
    """
    if surface == "trivial" or exact_time_reversal:
        return np.linspace(0.0, 0.5, points_per_half)
    n = 2 * (points_per_half - 1)
    return np.arange(n) / n


def even_part(setup: PlanSetup, g: np.ndarray) -> tuple[np.ndarray, float]:
    """G on ``setup.flux_full`` (last axis) from the simulated flux values, and the relative odd part.

    Mirrored grids are extended by G(1 − Φ) = G(Φ); whole periods are symmetrized, (G(Φ) + G(−Φ))/2. The
    second value is rms[(G(Φ) − G(−Φ))/2] / mean G (0 for mirrored grids), a diagnostic of the lattice's
    broken time reversal.
    """
    if setup.flux_index is not None:   # 3D wire: G(Φ) = G(−Φ) exactly, |Φ| was simulated
        return g[..., setup.flux_index], 0.0
    if setup.mirrored:
        return np.concatenate([g, g[..., -2:0:-1]], axis=-1), 0.0
    reverse = np.concatenate([g[..., :1], g[..., :0:-1]], axis=-1)   # G(−Φ) on the same grid
    odd = (g - reverse) / 2
    return (g + reverse) / 2, float(np.sqrt(np.mean(odd**2)) / np.mean(g)) if np.mean(g) > 0 else 0.0


def _energy_grid(e_f: float, kt: float, e_c: float, max_points: int) -> np.ndarray:
    """Fermi window E_F ± 5 k_BT, one point per correlation energy, 3 … ``max_points`` points (1 at T = 0)."""
    if kt == 0:
        return np.array([e_f])
    half = DEFAULT_MARGIN_KT * kt
    n = int(np.clip(math.ceil(2 * half / e_c) + 1, 3, max_points))
    if n % 2 == 0:  # odd, so that E_F itself is on the grid
        n = n + 1 if n < max_points else n - 1
    return np.linspace(e_f - half, e_f + half, n)


# --- calibration ----------------------------------------------------------------------------------------
def modelled_length_nm(model) -> float:
    """Length of the modelled scattering region (a whole number of lattice spacings)."""
    return float(getattr(model, "modelled_length_nm", None) or model.length_nm)


def channel_count(model, flux_quanta: np.ndarray, energies_meV: np.ndarray, broadening_meV: float = 0.0
                  ) -> np.ndarray:
    """Open channels (e²/h per channel) of the plan's lattice tube, shape (flux, energy), edges broadened by γ.

    A model without analytic subband edges (the 3D wire) counts the propagating modes of its clean leads
    (:func:`~simsurface.analysis.plan_bulk.lead_channel_count`, no broadening).
    """
    if not hasattr(model, "lattice_subband_bottoms_meV"):
        from .plan_bulk import lead_channel_count

        return lead_channel_count(model, flux_quanta, energies_meV, broadening_meV)
    bottoms = model.lattice_subband_bottoms_meV(flux_quanta)
    topological = model.surface == "topological"
    return broadened_channel_count(bottoms, energies_meV, broadening_meV, degeneracy=1 if topological else 2,
                                   dirac=topological)


def calibrate_width(setup: PlanSetup, work_dir: Path, *, log: Callable[[str], None], **run) -> tuple[float, list]:
    """Anderson width whose simulated Landauer ℓ equals (π/2)·ℓ_tr(requested).

    Each step simulates ``CALIBRATION_REALIZATIONS`` tubes of length L_c = clip(ℓ, 10a, 4 L_section) (short
    enough to stay far from localization, ξ ≳ Nℓ) at flux Φ0/4 and E_F, fits ℓ from ⟨G⟩ = N/(1 + L/ℓ), and
    updates W by a secant step in log W – log ℓ (slope 2 = Born, ℓ ∝ W⁻², until two steps measure it).
    Returns W and the steps [(W_meV, ℓ_tr simulated in nm), …]; the last step is the returned W when it met
    the 10 % tolerance, otherwise the returned W is the final secant estimate (checked by the main ensemble).
    """
    target_fit = ts.LANDAUER_OVER_TRANSPORT_2D * setup.transport_mfp_nm
    l_cal = float(np.clip(target_fit, 10 * setup.spacing_nm, 4 * setup.section_length_nm))
    width, slope = setup.width_meV, 2.0
    steps: list[tuple[float, float]] = []
    flux, energy = np.array([0.25]), np.array([setup.fermi_energy_meV])
    for step in range(CALIBRATION_STEPS):
        g, model = run_ensemble(setup.scenario, work_dir, length_nm=l_cal, energies_meV=energy, flux_quanta=flux,
                                realizations=CALIBRATION_REALIZATIONS, anderson_width_meV=width,
                                spacing_nm=setup.spacing_nm, model_energy_meV=float(np.max(np.abs(setup.energies_meV))),
                                label=f"calibrate {step + 1}", seed_offset=1_000_003 * (step + 1), **run)
        n = float(channel_count(model, flux, energy)[0, 0])
        l_fit = float(ts.landauer_mfp_nm(np.mean(g[:, 0, 0]), n, modelled_length_nm(model)))
        l_tr = l_fit / ts.LANDAUER_OVER_TRANSPORT_2D
        steps.append((width, l_tr))
        log(f"calibration step {step + 1}: W = {width:.4g} meV -> simulated l_tr = {l_tr:.4g} nm "
            f"(target {setup.transport_mfp_nm:.4g} nm)")
        if not math.isfinite(l_fit) or abs(l_tr / setup.transport_mfp_nm - 1) < CALIBRATION_TOLERANCE:
            break
        if len(steps) >= 2:
            (w0, l0), (w1, l1) = steps[-2], steps[-1]
            if w1 != w0 and l0 > 0 and l1 > 0 and l0 != l1:
                slope = float(np.clip(-math.log(l1 / l0) / math.log(w1 / w0), 0.5, 6.0))
        width = width * (l_tr / setup.transport_mfp_nm) ** (1.0 / slope)
    return width, steps


# --- the run ----------------------------------------------------------------------------------------------
@dataclass
class PlanResult:
    """Everything a report needs: the JSON summary, per-device curves over one flux period, the setup."""

    summary: dict
    devices: xr.Dataset
    setup: PlanSetup
    notes: list[str] = field(default_factory=list)


def run_plan(setup: PlanSetup, work_dir: str | Path, *, workers: int | None = None, cluster: str | None = None,
             resume: bool = False, progress: bool = True, log: Callable[[str], None] | None = None) -> PlanResult:
    """Simulate the plan's device ensemble and turn it into predictions (see the module docstring)."""
    log = log or (lambda _msg: None)
    work = Path(work_dir)
    run = {"workers": workers, "cluster": cluster, "resume": resume, "progress": progress}
    started = time.perf_counter()
    notes = list(setup.notes)
    width, calibration = setup.width_meV, []
    if setup.mfp_given:
        width, calibration = calibrate_width(setup, work, log=log, **run)
    plan = setup.plan
    common = {"length_nm": setup.section_length_nm, "energies_meV": setup.energies_meV,
              "flux_quanta": setup.model_flux(setup.flux_simulated), "spacing_nm": setup.spacing_nm}
    log(f"ensemble: {plan.devices} devices x {setup.n_sections} sections, {setup.flux_simulated.size} flux x "
        f"{setup.energies_meV.size} energies, W = {width:.4g} meV")
    sections, model = run_ensemble(setup.scenario, work, realizations=setup.section_realizations,
                                   anderson_width_meV=width, label="ensemble", **common, **run)
    mu = setup.fermi_energy_meV
    # transport lengths seen by the simulation (per section, thermally averaged, flux averaged)
    channels = channel_count(model, setup.model_flux(setup.flux_simulated), setup.energies_meV)  # clean
    g_sec = float(np.mean(thermal_average(setup.energies_meV, sections.mean(axis=0), mu, setup.temperature_K)))
    n_bar = float(np.mean(thermal_average(setup.energies_meV, channels, mu, setup.temperature_K)))
    l_fit = float(ts.landauer_mfp_nm(g_sec, n_bar, modelled_length_nm(model)))
    l_tr_sim = l_fit / ts.LANDAUER_OVER_TRANSPORT_2D
    # 0 for a ballistic wire; the 3D wire's leads are counted without broadening (docs/plan.md)
    gamma = 0.0 if setup.bulk else ts.broadening_meV(setup.surface, mu, setup.energy_scale, l_tr_sim)
    broadened = channels if gamma == 0 else channel_count(model, setup.model_flux(setup.flux_simulated),
                                                          setup.energies_meV, gamma)
    sections = sections.reshape(plan.devices, setup.n_sections, *channels.shape)
    wire = compose_incoherent(sections, broadened[None], axis=1)          # (device, flux, energy)
    g_sim = thermal_average(setup.energies_meV, wire, mu, setup.temperature_K)      # (device, flux)
    g, odd = even_part(setup, g_sim)
    phi = setup.flux_full
    if setup.surface == "topological" and math.isfinite(l_tr_sim) and not setup.bulk and not setup.mirrored:
        notes.append(f"lattice time-reversal breaking: the Wilson term of the Dirac lattice breaks time reversal, "
                     f"here the odd part G(Φ) − G(−Φ) is {100 * odd:.1f} % of ⟨G⟩ (rms, removed by symmetrizing). "
                     "With on-site disorder the tube behaves as a unitary-class wire: the weak-antilocalization "
                     "(Altshuler–Aronov–Spivak) h/2e component that a real topological surface adds to ⟨G⟩ is "
                     "absent from this model, so h/2e amplitudes are likely underestimated; [model] kind = 'surface_modes' "
                     "keeps time reversal exactly (see docs/plan.md and docs/modes.md).")

    if np.min(g) < _INSULATING_E2H:
        notes.append("some devices are insulating at some flux (G < 1e-6 e²/h): resistances there are clipped "
                     "and ΔR/R is not meaningful.")
    devices = _device_dataset(setup, phi, g)
    summary = _summarize(setup, devices, width=width, calibration=calibration, l_fit=l_fit, n_bar=n_bar,
                         g_sec=g_sec, odd_part=odd, gamma=gamma, lattice=model.describe(), notes=notes)
    if setup.bulk:
        from .plan_bulk import adjust_summary

        adjust_summary(summary, setup)
    summary["compute"]["wall_time_s"] = round(time.perf_counter() - started, 2)
    summary["compute"]["workers"] = workers
    return PlanResult(summary, devices, setup, notes)


def _device_dataset(setup: PlanSetup, phi: np.ndarray, g: np.ndarray) -> xr.Dataset:
    """Per-device conductance and measured resistance over one flux period."""
    plan = setup.plan
    r_wire = RESISTANCE_QUANTUM_OHM / np.maximum(g, _INSULATING_E2H)
    r_meas = r_wire + (plan.series_resistance_ohm if plan.terminals == 2 else 0.0)
    coords = {"device": ("device", np.arange(g.shape[0]), {"long_name": "simulated device"}),
              "flux": ("flux", phi, {"units": "h/e"})}
    return xr.Dataset({
        "conductance": (("device", "flux"), g, {"units": "e^2/h", "long_name": "wire conductance at temperature"}),
        "resistance": (("device", "flux"), r_meas, {"units": "ohm", "long_name": "measured resistance"}),
        "measured_conductance": (("device", "flux"), RESISTANCE_QUANTUM_OHM / r_meas,
                                 {"units": "e^2/h", "long_name": "1/(measured resistance)"}),
    }, coords=coords)


def _harmonic_block(ens: xr.Dataset, k: int) -> dict:
    sel = ens.sel(harmonic=k)
    out = {"sample_rms": float(sel["sample_rms_amplitude"]), "ensemble": float(sel["ensemble_amplitude"])}
    if "sample_rms_amplitude_low" in sel:
        out["sample_rms_interval"] = [float(sel["sample_rms_amplitude_low"]), float(sel["sample_rms_amplitude_high"])]
        out["ensemble_interval"] = [float(sel["ensemble_amplitude_low"]), float(sel["ensemble_amplitude_high"])]
        # the even curve's component is a_k cos(2πkΦ): its sign is the phase, its interval may include 0
        out["ensemble_cosine"] = float(sel["ensemble_cosine"])
        out["ensemble_cosine_interval"] = [float(sel["ensemble_cosine_low"]), float(sel["ensemble_cosine_high"])]
    return out


#: where the maxima of the ensemble-averaged harmonic sit for a positive / negative cosine coefficient
_MAXIMA = {1: ("integer", "half-integer"),
           2: ("n/2 (antilocalization sign)", "n/2 + 1/4 (localization sign)")}


def _maxima(ens: xr.Dataset, k: int) -> str | None:
    """Where the ensemble maxima of harmonic k sit, when the 68 % interval of its cosine excludes zero."""
    if k not in _MAXIMA:
        return None
    sel = ens.sel(harmonic=k)
    lo, hi = float(sel["ensemble_cosine_low"]), float(sel["ensemble_cosine_high"])
    if lo > 0:
        return _MAXIMA[k][0]
    if hi < 0:
        return _MAXIMA[k][1]
    return "not resolved (sample-specific phase)"


def _summarize(setup: PlanSetup, devices: xr.Dataset, *, width: float, calibration: list, l_fit: float,
               n_bar: float, g_sec: float, odd_part: float, gamma: float, lattice: dict, notes: list[str]) -> dict:
    plan = setup.plan
    seed = int(setup.scenario.seed)
    boot = {"harmonics": HARMONICS, "n_bootstrap": BOOTSTRAP, "seed": seed}
    g_ens = ensemble_harmonics(devices["conductance"].rename(device="realization"), **boot)
    r = devices["resistance"]
    r_rel = (r / r.mean("flux")).rename(device="realization").assign_attrs(units="1")
    rel_ens = ensemble_harmonics(r_rel, **boot)
    noise_in_ohm = plan.noise_floor_ohm is not None
    measured = devices["resistance"] if noise_in_ohm else devices["measured_conductance"]
    meas_ens = ensemble_harmonics(measured.rename(device="realization"), **boot)
    noise = plan.noise_floor_ohm if noise_in_ohm else plan.noise_floor_e2h
    per = harmonics_of(devices["conductance"], HARMONICS, dim="flux")["amplitude"]   # (device, harmonic)
    dom = dominance(per.sel(harmonic=1).values, per.sel(harmonic=2).values, n_bootstrap=BOOTSTRAP, seed=seed)
    signs = harmonics_of(devices["conductance"], (1,), dim="flux")["cosine"].sel(harmonic=1).values

    harmonics: dict[str, dict] = {}
    verdicts = []
    for k in HARMONICS:
        name = HARMONIC_NAMES[k]
        amp = float(meas_ens["sample_rms_amplitude"].sel(harmonic=k))
        block = {
            "period_T": setup.period_he_T / k,
            "periods_in_field_range": setup.periods(k),
            "delta_G_e2h": _harmonic_block(g_ens, k),
            "delta_R_over_R": _harmonic_block(rel_ens, k),
            "measured_amplitude": {"value": amp, "unit": "ohm" if noise_in_ohm else "e^2/h"},
            "signal_to_noise": amp / noise,
            "ensemble_maxima": _maxima(g_ens, k),
        }
        if k in (1, 2):
            block["verdict"] = verdict(amp, noise, setup.periods(k))
            verdicts.append(block["verdict"])
        harmonics[name] = block
    dominant = "h/e" if dom["a_dominates"] else "h/2e"
    mean_g = float(devices["conductance"].mean())
    lattice_ok = setup.fermi_energy_meV + DEFAULT_MARGIN_KT * setup.temperature_K * KB_MEV_PER_K \
        <= lattice.get("validity_limit_meV", math.inf)
    l_tr_sim = l_fit / ts.LANDAUER_OVER_TRANSPORT_2D
    return {
        "title": setup.scenario.title,
        "simsurface_version": __version__,
        "created_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "period_he_T": setup.period_he_T,
        "period_h2e_T": setup.period_h2e_T,
        "dominant_harmonic": dominant,
        "verdict": best(verdicts),
        "verdict_rule": RULE_TEXT,
        "dominance": {"ratio_he_over_h2e": dom["ratio"], "ratio_interval": [dom["ratio_low"], dom["ratio_high"]],
                      "confidence": dom["confidence"], "fraction_of_devices": dom["per_sample_fraction"],
                      "definition": "ratio of rms (over devices) Fourier amplitudes of G; confidence = fraction "
                                    f"of {BOOTSTRAP} bootstrap resamples of the devices with the same winner"},
        "phase": {"he_ensemble_maxima": harmonics["h/e"]["ensemble_maxima"],
                  "h2e_ensemble_maxima": harmonics["h/2e"]["ensemble_maxima"],
                  "fraction_of_devices_with_he_maxima_at_half_integer_flux": float(np.mean(signs < 0))},
        "harmonics": harmonics,
        "device": {
            "surface": setup.surface, "material": setup.scenario.material.preset,
            "cross_section": setup.scenario.wire.section().describe(), "enclosed_area_nm2": setup.area_nm2,
            "perimeter_nm": setup.perimeter_nm, "length_nm": setup.length_nm,
            "fermi_energy_meV": setup.fermi_energy_meV,
            "carrier_density_per_cm2": ts.density_per_cm2(setup.surface, setup.fermi_energy_meV, setup.energy_scale),
            "fermi_wavevector_per_nm": ts.fermi_wavevector_per_nm(setup.surface, setup.fermi_energy_meV,
                                                                   setup.energy_scale),
            "clean_channels_at_fermi_energy": n_bar,
        },
        "measurement": {
            "temperature_K": setup.temperature_K, "thermal_energy_meV": setup.temperature_K * KB_MEV_PER_K,
            "field_range_T": list(plan.field_range_T), "terminals": plan.terminals,
            "series_resistance_ohm": plan.series_resistance_ohm if plan.terminals == 2 else 0.0,
            "noise_floor": {"value": noise, "unit": "ohm" if noise_in_ohm else "e^2/h"},
            "mean_conductance_e2h": mean_g, "mean_resistance_ohm": float(devices["resistance"].mean()),
        },
        "coherence": {"coherence_length_nm": setup.coherence_length_nm, "sections": setup.n_sections,
                      "section_length_nm": setup.section_length_nm,
                      "composition_rule": "1/T = 1/N_g + sum_i (1/T_i - 1/N_g) (incoherent sections), N_g the "
                                          "channel count with subband edges broadened by g = hbar/2tau",
                      "edge_broadening_meV": gamma},
        "disorder": {
            "kind": "Anderson (site energies uniform in [-W/2, W/2])" + "".join(
                f" + {k}" for k in setup.scenario.disorder.parameters().kinds if k != "anderson"),
            "anderson_width_meV": width,
            "table": {**setup.scenario.disorder.model_dump(), "anderson_width_meV": width},
            "requested_transport_mfp_nm": setup.transport_mfp_nm if setup.mfp_given else None,
            "born_transport_mfp_nm": float(ts.born_transport_mfp_nm(setup.surface, width, setup.born_spacing_nm,
                                                                    setup.born_energy_meV, setup.energy_scale))
            if width > 0 else None,
            "simulated_transport_mfp_nm": l_tr_sim if math.isfinite(l_tr_sim) else None,
            "section_mean_conductance_e2h": g_sec,
            "calibration_steps": [{"anderson_width_meV": w, "simulated_transport_mfp_nm": l} for w, l in calibration],
        },
        "validity": {"lattice_window_ok": bool(lattice_ok), "notes": list(notes)},
        "assumptions": assumptions(setup),
        "compute": {"devices": plan.devices, "section_realizations": setup.section_realizations,
                    "flux_points_simulated": int(setup.flux_simulated.size),
                    "flux_symmetry": "mirrored from [0, 1/2]" if setup.mirrored else "whole period, symmetrized",
                    "odd_part_relative": odd_part,
                    "energies_meV": setup.energies_meV.tolist(), "correlation_energy_meV": setup.correlation_energy_meV,
                    "engine": setup.scenario.model.engine, "lattice": lattice, "seed": seed},
    }


ASSUMPTIONS = [
    "The field is along the wire axis and enters only through the flux Phi = B*A_eff through the surface-state "
    "contour; Zeeman energy and the field's orbital effect on the surface itself are neglected, so G(B) is "
    "periodic in B.",
    "Surface transport only: a single Dirac surface (topological) or a 2D electron layer (trivial) on the wire "
    "surface, described by the surface-lattice tube; no bulk conduction.",
    "Disorder: Anderson (uncorrelated site energies, box distribution) with the width from [plan], plus the "
    "puddles and vacancies of the [disorder] table if any (simsurface.disorder, seeded per realization); "
    "surface roughness is not supported by the plan.",
    "Phase coherence: the wire is cut into n = round(L/L_phi) sections that are phase coherent inside and "
    "combined incoherently, 1/T = 1/N + sum_i (1/T_i - 1/N), with N the tube's channel count, subband edges "
    "broadened by the disorder width hbar/2tau (from the simulated mean free path); "
    "L_phi(T) = L_phi(T0) (T/T0)^(-p).",
    "Temperature: elastic transport at each energy, then thermal smearing of the composed conductance with "
    "-df/dE over E_F +- 5 k_BT.",
    "Contacts: the simulated wire sits between clean leads of the same tube; real contacts enter only as the "
    "series resistance of a 2-terminal measurement. A 4-terminal measurement is taken to read h/(e^2 G) of the "
    "wire (non-invasive probes).",
    "Symmetry: a two-terminal measurement gives G(Phi) = G(-Phi) = G(1 - Phi); the trivial tube obeys it exactly "
    "and half a period is simulated; the Dirac lattice tube breaks time reversal (Wilson term), so the whole "
    "period is simulated and its even part kept.",
    "Statistics: amplitudes of one device are rms values over the simulated devices; intervals are bootstrap "
    "intervals (68 %) over the devices.",
]


#: replacements of the lattice-specific assumptions when the plan uses the mode tube
_MODES_ASSUMPTIONS = {
    1: "Surface transport only: a single Dirac surface described by the mode tube (transverse modes up to a "
       "cutoff, tangent axial discretization; docs/modes.md); no bulk conduction.",
    6: "Symmetry: the mode tube keeps time reversal exactly, so G(Phi) = G(-Phi) = G(1 - Phi) holds to rounding "
       "and half a period is simulated; the weak-antilocalization (Altshuler-Aronov-Spivak) h/2e component of "
       "the ensemble mean is part of the result.",
}


def assumptions(setup: PlanSetup) -> list[str]:
    """The plan's assumptions, with the model-specific ones of the model it used."""
    if setup.kind != "surface_modes":
        return list(ASSUMPTIONS)
    return [_MODES_ASSUMPTIONS.get(i, text) for i, text in enumerate(ASSUMPTIONS)]


def field_curve(setup: PlanSetup, g_period: np.ndarray, fields_T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """G(B) and R(B)/R(0) from one flux period of G (on ``setup.flux_full``).

    Interpolation is shape preserving (PCHIP on three periodic copies), so step-like quasi-ballistic curves
    do not ring. R includes the series resistance of a 2-terminal measurement.
    """
    from scipy.interpolate import PchipInterpolator

    if setup.flux_window is not None:
        from .plan_bulk import window_field_curve

        return window_field_curve(setup, g_period, fields_T)
    phi = setup.flux_full
    spline = PchipInterpolator(np.concatenate([phi - 1, phi, phi + 1, [2.0]]),
                               np.concatenate([g_period, g_period, g_period, g_period[:1]]))
    flux = flux_quanta(fields_T, setup.area_nm2)
    g = spline(np.mod(flux, 1.0))
    series = setup.plan.series_resistance_ohm if setup.plan.terminals == 2 else 0.0
    r = RESISTANCE_QUANTUM_OHM / np.maximum(g, _INSULATING_E2H) + series
    r0 = RESISTANCE_QUANTUM_OHM / max(float(spline(0.0)), _INSULATING_E2H) + series
    return g, r / r0


def gate_maps(setup: PlanSetup, energy_points: int = 241) -> list[tuple[str, xr.Dataset, float | None]]:
    """Clean gate maps of a topological and a trivial tube with the plan's contour, side by side.

    Both cover the same range of Fermi wavevector, 0 … max(1.5 k_F, 4·2π/P), so the same number of subbands
    is crossed. The partner surface takes its parameter from ``[material]`` when given, otherwise from the
    Bi2Se3 (Dirac velocity) or InAs (effective mass) preset. Returns (label, map, E_F mark or None).
    """
    from ..materials import PRESETS
    from ..units import hbar_v_meV_nm
    from .gatemap import gate_map

    if setup.bulk:   # a clean 3D G(E, Φ) map costs hundreds of lead solutions: not drawn (docs/plan.md)
        return []
    mat = setup.scenario.material.material()
    hv = mat.hbar_v_meV_nm if mat.dirac_velocity_m_s else float(hbar_v_meV_nm(PRESETS["Bi2Se3"].dirac_velocity_m_s))
    mass = mat.effective_mass_ratio or PRESETS["InAs"].effective_mass_ratio
    k_f = ts.fermi_wavevector_per_nm(setup.surface, setup.fermi_energy_meV, setup.energy_scale)
    k_max = max(1.5 * k_f, 4 * 2 * math.pi / setup.perimeter_nm)
    out = []
    for surface, scale, src in (("topological", hv, "Bi2Se3" if not mat.dirac_velocity_m_s else mat.name),
                                ("trivial", mass, "InAs" if not mat.effective_mass_ratio else mat.name)):
        e_max = hv * k_max if surface == "topological" else 0.5 * ts.hbar2_over_m_meV_nm2(mass) * k_max**2
        ds = gate_map(surface, setup.perimeter_nm, scale, np.linspace(0.0, e_max, energy_points), setup.temperature_K)
        what = f"ħv = {scale:.4g} meV nm" if surface == "topological" else f"m* = {scale:.3g} m_e"
        label = f"{surface} tube ({src}, {what}), P = {setup.perimeter_nm:.4g} nm, T = {setup.temperature_K:g} K"
        out.append((label, ds, setup.fermi_energy_meV if surface == setup.surface else None))
    return out
