"""Scenario files: TOML validated into typed, frozen objects.

A scenario describes one device and what to compute for it. Every table and field is checked; an
unknown or missing field, a wrong type or an out-of-range value raises :class:`InputError` whose
message names the field as ``[table] field`` and says what is allowed. The full reference is in the
README ("Scenario files").
"""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Discriminator, Field, Tag, ValidationError, model_validator

from .errors import InputError
from .geometry import Contacts, CrossSection, Wire
from .materials import PRESETS, Material, material_from_preset

PositiveFloat = Annotated[float, Field(gt=0, allow_inf_nan=False)]
NonNegativeFloat = Annotated[float, Field(ge=0, allow_inf_nan=False)]
FiniteFloat = Annotated[float, Field(allow_inf_nan=False)]


class Section(BaseModel):
    """Base of every scenario table: unknown fields are errors, values are immutable.

    Types are strict: a boolean is not a number and a string is not a count (``length_nm = true`` would
    otherwise become 1 nm); whole numbers are accepted where a float is expected.
    """

    model_config = ConfigDict(extra="forbid", frozen=True, strict=True)


class Span(Section):
    """Evenly spaced values ``start`` … ``stop`` (inclusive) with ``points`` values."""

    start: FiniteFloat
    stop: FiniteFloat
    points: Annotated[int, Field(ge=1, le=100_000)]

    def values(self) -> np.ndarray:
        return np.linspace(self.start, self.stop, self.points)


Values = Annotated[
    Annotated[Span, Tag("span")] | Annotated[list[FiniteFloat], Field(min_length=1, max_length=100_000), Tag("list")],
    Discriminator(lambda v: "span" if isinstance(v, (dict, Span)) else "list"),
]


def as_array(values: Values) -> np.ndarray:
    """A :data:`Values` field as a float array."""
    return values.values() if isinstance(values, Span) else np.asarray(values, dtype=float)


class MaterialSection(Section):
    preset: str = "Bi2Se3"
    dirac_velocity_m_s: PositiveFloat | None = None
    bulk_gap_meV: PositiveFloat | None = None
    effective_mass_ratio: PositiveFloat | None = None
    # Zeeman term of the surface (docs/fields.md); presets say whether a value is known
    surface_g_factor: Annotated[float, Field(ge=-1000, le=1000, allow_inf_nan=False)] | None = None
    # Rashba coupling of a trivial surface layer, meV nm (docs/fields.md)
    rashba_meV_nm: FiniteFloat | None = None
    # bulk band edges from the surface Dirac point (the gap check does not assume a mid-gap Dirac point)
    valence_band_edge_meV: Annotated[float, Field(lt=0, allow_inf_nan=False)] | None = None
    conduction_band_edge_meV: Annotated[float, Field(gt=0, allow_inf_nan=False)] | None = None

    @model_validator(mode="after")
    def _known_preset(self):
        if self.preset != "custom" and self.preset not in PRESETS:
            raise ValueError(f"preset: unknown material {self.preset!r}; allowed: "
                             f"{', '.join([*PRESETS, 'custom'])}")
        return self

    def material(self) -> Material:
        return material_from_preset(self.preset, dirac_velocity_m_s=self.dirac_velocity_m_s,
                                    bulk_gap_meV=self.bulk_gap_meV,
                                    effective_mass_ratio=self.effective_mass_ratio,
                                    surface_g_factor=self.surface_g_factor, rashba_meV_nm=self.rashba_meV_nm,
                                    valence_band_edge_meV=self.valence_band_edge_meV,
                                    conduction_band_edge_meV=self.conduction_band_edge_meV)


class WireSection(Section):
    cross_section: Literal["circle", "rectangle"]
    diameter_nm: PositiveFloat | None = None
    width_nm: PositiveFloat | None = None
    thickness_nm: PositiveFloat | None = None
    depth_nm: NonNegativeFloat = 0.0
    length_nm: PositiveFloat
    surface: Literal["topological", "trivial"] = "topological"
    # potential energy (meV) at equally spaced points around the surface-state contour, from the bottom point
    # counterclockwise seen from +x, zero mean (docs/fields.md)
    circumferential_potential_meV: Annotated[list[FiniteFloat], Field(min_length=8, max_length=4096)] | None = None

    @model_validator(mode="after")
    def _profile(self):
        if self.circumferential_potential_meV is not None:
            from .models.profile import checked_profile_meV

            try:
                checked_profile_meV(self.circumferential_potential_meV, "circumferential_potential_meV")
            except InputError as exc:
                raise ValueError(str(exc)) from None
        return self

    @model_validator(mode="after")
    def _shape_fields(self):
        if self.cross_section == "circle":
            if self.diameter_nm is None:
                raise ValueError("diameter_nm: required for cross_section = 'circle'")
            if self.width_nm is not None or self.thickness_nm is not None:
                raise ValueError("width_nm/thickness_nm: not allowed for a circle; give diameter_nm")
            smallest = self.diameter_nm
        else:
            if self.width_nm is None or self.thickness_nm is None:
                raise ValueError("width_nm and thickness_nm: both required for cross_section = 'rectangle'")
            if self.diameter_nm is not None:
                raise ValueError("diameter_nm: not allowed for a rectangle; give width_nm and thickness_nm")
            smallest = min(self.width_nm, self.thickness_nm)
        if 2 * self.depth_nm >= smallest:
            raise ValueError(f"depth_nm: {self.depth_nm:g} nm must be below half the smallest side "
                             f"({smallest / 2:g} nm)")
        return self

    def section(self) -> CrossSection:
        if self.cross_section == "circle":
            return CrossSection.circle(self.diameter_nm, self.depth_nm)
        return CrossSection.rectangle(self.width_nm, self.thickness_nm, self.depth_nm)


class ContactsSection(Section):
    leads: Literal["matched", "doped"] = "matched"
    lead_doping_meV: NonNegativeFloat = 0.0

    @model_validator(mode="after")
    def _doping(self):
        if self.leads == "doped" and self.lead_doping_meV <= 0:
            raise ValueError("lead_doping_meV: must be > 0 meV when leads = 'doped'")
        if self.leads == "matched" and self.lead_doping_meV != 0:
            raise ValueError("lead_doping_meV: only allowed with leads = 'doped'")
        return self

    def contacts(self) -> Contacts:
        return Contacts(self.leads, self.lead_doping_meV)


class FieldSection(Section):
    """``[field]``: direction of the applied field (docs/fields.md); the sweep gives its magnitude."""

    # angle between the field and the wire axis; the Aharonov–Bohm flux is B A cos(angle)
    angle_deg: Annotated[float, Field(ge=-90, le=90, allow_inf_nan=False)] = 0.0
    # direction of the perpendicular part around the wire: 0 = +z (away from the back gate), 90 = +y
    azimuth_deg: Annotated[float, Field(ge=-360, le=360, allow_inf_nan=False)] = 0.0


class ModelSection(Section):
    kind: Literal["surface_analytic", "surface_lattice", "bulk_lattice", "surface_modes"] = "surface_lattice"
    lattice_spacing_nm: PositiveFloat | None = None
    wilson_ratio: Annotated[float, Field(gt=0, le=1)] = 0.5
    # kind = "surface_modes" only: modes up to this multiple of the largest Fermi wave number (docs/modes.md)
    mode_cutoff_factor: Annotated[float, Field(ge=1, le=50, allow_inf_nan=False)] | None = None
    engine: Literal["slices", "kwant"] = "slices"
    # kind = "bulk_lattice" only: four-band parameters, a preset and optional overrides (docs/bulk.md)
    bulk_preset: str = "Bi2Se3_zhang2009"
    C_meV: FiniteFloat | None = None
    D1_meV_nm2: FiniteFloat | None = None
    D2_meV_nm2: FiniteFloat | None = None
    M0_meV: FiniteFloat | None = None
    B1_meV_nm2: FiniteFloat | None = None
    B2_meV_nm2: FiniteFloat | None = None
    A1_meV_nm: FiniteFloat | None = None
    A2_meV_nm: FiniteFloat | None = None

    @model_validator(mode="after")
    def _modes_fields(self):
        if self.mode_cutoff_factor is not None and self.kind != "surface_modes":
            raise ValueError("mode_cutoff_factor: only used with kind = 'surface_modes'")
        if self.kind == "surface_modes" and "wilson_ratio" in self.model_fields_set:
            raise ValueError("wilson_ratio: not used by kind = 'surface_modes', which has no Wilson term; remove it")
        return self

    @model_validator(mode="after")
    def _bulk_fields(self):
        from .models.bulk_params import PARAMETER_UNITS

        given = sorted(({"bulk_preset"} | set(PARAMETER_UNITS)) & self.model_fields_set)
        if self.kind != "bulk_lattice" and given:
            raise ValueError(f"{given[0]}: only used with kind = 'bulk_lattice'")
        if self.kind == "bulk_lattice":
            try:
                self.bulk_parameters()
            except InputError as exc:
                raise ValueError(str(exc).removeprefix("[model] ")) from None
        return self

    def bulk_parameters(self):
        """The four-band parameters of ``kind = "bulk_lattice"`` (preset plus overrides)."""
        from .models.bulk_params import PARAMETER_UNITS, bulk_parameters

        return bulk_parameters(self.bulk_preset, **{k: getattr(self, k) for k in PARAMETER_UNITS})


class SweepSection(Section):
    flux_quanta: Values | None = None
    field_T: Values | None = None
    fermi_energy_meV: Values
    realizations: Annotated[int, Field(ge=1, le=1_000_000)] = 1

    @model_validator(mode="after")
    def _one_axis(self):
        if (self.flux_quanta is None) == (self.field_T is None):
            raise ValueError("flux_quanta / field_T: give exactly one of them (flux in units of h/e, or field in T)")
        return self


#: [plan] fields renamed in scenario vocabulary 2 (old name -> new name); the old names are refused by name
RENAMED_PLAN_FIELDS = {"samples": "devices", "disorder_meV": "anderson_width_meV"}


class PlanSection(Section):
    """``[plan]``: a proposed device and its measurement, for ``simsurface plan`` (see docs/plan.md)."""

    fermi_energy_meV: FiniteFloat | None = None
    carrier_density_per_cm2: PositiveFloat | None = None
    temperature_K: Annotated[float, Field(ge=0, le=400, allow_inf_nan=False)]
    coherence_length_nm: PositiveFloat
    coherence_reference_K: PositiveFloat | None = None
    coherence_exponent: Annotated[float, Field(ge=0, le=3, allow_inf_nan=False)] = 0.5
    mean_free_path_nm: PositiveFloat | None = None
    anderson_width_meV: NonNegativeFloat | None = None
    field_range_T: Annotated[list[FiniteFloat], Field(min_length=2, max_length=2)]
    terminals: Literal[2, 4] = 2
    series_resistance_ohm: NonNegativeFloat = 0.0
    noise_floor_ohm: PositiveFloat | None = None
    noise_floor_e2h: PositiveFloat | None = None
    devices: Annotated[int, Field(ge=2, le=10_000)] = 16
    flux_points: Annotated[int, Field(ge=6, le=200)] = 7
    max_energy_points: Annotated[int, Field(ge=3, le=400)] = 15
    gate_map: bool = True

    @model_validator(mode="before")
    @classmethod
    def _renamed(cls, data: Any) -> Any:
        if isinstance(data, dict):
            for old, new in RENAMED_PLAN_FIELDS.items():
                if old in data:
                    raise ValueError(f"{old}: renamed to {new} (scenario vocabulary 2, see the README); "
                                     f"write {new} = {data[old]!r}")
        return data

    @model_validator(mode="after")
    def _choices(self):
        if (self.fermi_energy_meV is None) == (self.carrier_density_per_cm2 is None):
            raise ValueError("fermi_energy_meV / carrier_density_per_cm2: give exactly one of them")
        if self.mean_free_path_nm is not None and self.anderson_width_meV is not None:
            raise ValueError("mean_free_path_nm / anderson_width_meV: give at most one of them (transport mean free "
                             "path in nm, or the Anderson disorder width in meV; or a [disorder] table)")
        if (self.noise_floor_ohm is None) == (self.noise_floor_e2h is None):
            raise ValueError("noise_floor_ohm / noise_floor_e2h: give exactly one of them")
        lo, hi = self.field_range_T
        if not hi > lo:
            raise ValueError(f"field_range_T: [{lo:g}, {hi:g}] must be [lowest, highest] field with highest > lowest")
        if self.terminals == 4 and self.series_resistance_ohm != 0:
            raise ValueError("series_resistance_ohm: a 4-terminal measurement has no series resistance; "
                             "use terminals = 2 or set it to 0")
        return self


class DephasingSection(Section):
    """``[dephasing]``: loss of phase coherence inside the wire by Büttiker dephasing probes (docs/plan.md)."""

    coherence_length_nm: PositiveFloat
    # how L_phi sets the dephasing time: L_phi/v, L_phi²/D (D = v ℓ_tr/2), or the larger of the two
    regime: Literal["quasi_ballistic", "diffusive", "auto"] = "quasi_ballistic"
    mean_free_path_nm: PositiveFloat | None = None   # transport mean free path ℓ_tr (diffusive and auto)
    probe_length_nm: PositiveFloat | None = None     # length of one probe along the wire (default L_phi / 8)

    @model_validator(mode="after")
    def _regime_fields(self):
        if self.regime == "quasi_ballistic" and self.mean_free_path_nm is not None:
            raise ValueError("mean_free_path_nm: only used with regime = 'diffusive' or 'auto'; remove it")
        if self.regime != "quasi_ballistic" and self.mean_free_path_nm is None:
            raise ValueError(f"mean_free_path_nm: required with regime = '{self.regime}' (transport mean free "
                             "path in nm, D = v l / 2)")
        return self


class DisorderSection(Section):
    """``[disorder]``: disorder of the wire in physical units; every kind defaults to none.

    See :mod:`simsurface.disorder.realization` for the models and the seeding rule.
    """

    anderson_width_meV: NonNegativeFloat = 0.0
    puddle_rms_meV: NonNegativeFloat = 0.0
    puddle_correlation_nm: PositiveFloat | None = None
    roughness_rms_nm: NonNegativeFloat = 0.0
    roughness_correlation_nm: PositiveFloat | None = None
    vacancy_fraction: Annotated[float, Field(ge=0, lt=1)] = 0.0

    @model_validator(mode="after")
    def _correlations(self):
        for amp, corr in (("puddle_rms_meV", "puddle_correlation_nm"),
                          ("roughness_rms_nm", "roughness_correlation_nm")):
            if getattr(self, amp) > 0 and getattr(self, corr) is None:
                raise ValueError(f"{corr}: required when {amp} > 0 (a length in nm)")
        return self

    def parameters(self):
        from .disorder import DisorderParameters

        return DisorderParameters(**self.model_dump())

    def with_value(self, name: str, value: float) -> "DisorderSection":
        """A copy with one field changed (validated)."""
        return DisorderSection.model_validate({**self.model_dump(), name: value})


#: [disorder] fields a tolerance study may sweep
SWEEPABLE_DISORDER = ("anderson_width_meV", "puddle_rms_meV", "puddle_correlation_nm", "roughness_rms_nm",
                      "roughness_correlation_nm", "vacancy_fraction")


class StudySection(Section):
    """``[study]``: turn the scenario into a study of several sweeps.

    ``kind = "lengths"`` repeats the sweep at every wire length in ``lengths_nm`` and fits the mean free
    path and the localization length; ``kind = "tolerance"`` repeats it for every value in ``values`` of
    the ``[disorder]`` field named by ``parameter`` and reports the h/e and h/2e amplitudes.
    """

    kind: Literal["lengths", "tolerance"]
    lengths_nm: Annotated[list[PositiveFloat], Field(min_length=3, max_length=200)] | None = None
    parameter: Literal[SWEEPABLE_DISORDER] | None = None  # type: ignore[valid-type]
    values: Annotated[list[NonNegativeFloat], Field(min_length=2, max_length=200)] | None = None
    mean_free_path_fit_max_nm: PositiveFloat | None = None
    localization_fit_min_nm: PositiveFloat | None = None
    bootstrap_resamples: Annotated[int, Field(ge=0, le=100_000)] = 400

    @model_validator(mode="after")
    def _fields_of_kind(self):
        if self.kind == "lengths":
            if self.lengths_nm is None:
                raise ValueError("lengths_nm: required for kind = 'lengths' (at least 3 wire lengths in nm)")
            if len(set(self.lengths_nm)) != len(self.lengths_nm):
                raise ValueError("lengths_nm: the lengths must be different from each other")
            if self.parameter is not None or self.values is not None:
                raise ValueError("parameter/values: only allowed for kind = 'tolerance'")
        else:
            if self.parameter is None or self.values is None:
                raise ValueError("parameter and values: both required for kind = 'tolerance' "
                                 f"(parameter is one of {', '.join(SWEEPABLE_DISORDER)})")
            if len(set(self.values)) != len(self.values):
                raise ValueError("values: the values must be different from each other")
            if self.lengths_nm is not None or self.localization_fit_min_nm is not None \
                    or self.mean_free_path_fit_max_nm is not None:
                raise ValueError("lengths_nm and the fit limits: only allowed for kind = 'lengths'")
        return self


class PlotsSection(Section):
    flux_cuts_meV: Annotated[list[FiniteFloat], Field(max_length=12)] = []


class Scenario(Section):
    """A whole scenario file."""

    title: Annotated[str, Field(min_length=1, max_length=200)]
    seed: Annotated[int, Field(ge=0, lt=2**63)] = 0
    material: MaterialSection = MaterialSection()
    wire: WireSection
    contacts: ContactsSection = ContactsSection()
    field: FieldSection = FieldSection()
    model: ModelSection = ModelSection()
    sweep: SweepSection | None = None
    plots: PlotsSection = PlotsSection()
    plan: PlanSection | None = None
    disorder: DisorderSection = DisorderSection()
    study: StudySection | None = None
    dephasing: DephasingSection | None = None

    @model_validator(mode="after")
    def _disorder_needs_lattice(self):
        dirty = self.disorder.parameters().kinds or (
            self.study is not None and self.study.kind == "tolerance")
        if dirty and self.model.kind == "surface_analytic":
            raise ValueError("[disorder]: the analytic model describes a clean wire; use [model] kind = "
                             "'surface_lattice' for disorder")
        if self.study is not None and self.study.kind == "tolerance":
            for value in self.study.values:
                try:
                    self.disorder.with_value(self.study.parameter, value)
                except ValidationError as exc:
                    reason = exc.errors()[0]["msg"].removeprefix("Value error, ")
                    raise ValueError(f"[study] values: {value:g} is not allowed for [disorder] "
                                     f"{self.study.parameter} ({reason})") from None
        return self

    @model_validator(mode="after")
    def _bulk_model_fits(self):
        if self.model.kind != "bulk_lattice":
            return self
        if self.wire.surface != "topological":
            raise ValueError("[model] kind: 'bulk_lattice' models a topological insulator; [wire] surface "
                             "must be 'topological'")
        if "depth_nm" in self.wire.model_fields_set:
            raise ValueError("[wire] depth_nm: not used by kind = 'bulk_lattice', which computes the "
                             "surface-state depth itself; remove it")
        if self.material.model_fields_set:
            raise ValueError("[material]: not used by kind = 'bulk_lattice', which takes its parameters from "
                             "[model] bulk_preset and the fields C_meV … A2_meV_nm; remove the table")
        return self

    @model_validator(mode="after")
    def _modes_model_fits(self):
        if self.model.kind == "surface_modes" and self.wire.surface != "topological":
            raise ValueError("[model] kind: 'surface_modes' models a topological (Dirac) surface; for [wire] "
                             "surface = 'trivial' use kind = 'surface_lattice'")
        return self

    @model_validator(mode="after")
    def _dephasing_model_fits(self):
        if self.dephasing is not None and self.model.kind not in ("surface_modes", "surface_lattice"):
            raise ValueError(f"[dephasing]: not available for [model] kind = '{self.model.kind}'; dephasing probes "
                             "work on kind = 'surface_modes' or 'surface_lattice' (remove the table or change the "
                             "kind)")
        return self

    @model_validator(mode="after")
    def _surface_terms_fit_model(self):
        mat = self.material.material()
        asked = [name for name, on in (
            ("[material] surface_g_factor", bool(mat.surface_g_factor)),
            ("[material] rashba_meV_nm", bool(mat.rashba_meV_nm)),
            ("[field] angle_deg", self.field.angle_deg != 0),
            ("[wire] circumferential_potential_meV", self.wire.circumferential_potential_meV is not None)) if on]
        if self.model.kind == "surface_analytic":   # the closed form has the axial Zeeman term, nothing else
            asked = [name for name in asked if name != "[material] surface_g_factor"]
        if asked and self.model.kind in ("surface_analytic", "bulk_lattice"):
            raise ValueError(f"{asked[0]}: not modelled by [model] kind = '{self.model.kind}'; use "
                             "'surface_modes' (topological) or 'surface_lattice'")
        if mat.rashba_meV_nm and self.wire.surface != "trivial":
            raise ValueError("[material] rashba_meV_nm: the Rashba term is modelled on a trivial surface only "
                             "([wire] surface = 'trivial'); the Dirac surface has its own spin-momentum locking")
        return self

    @model_validator(mode="after")
    def _material_fits_surface(self):
        mat = self.material.material()
        try:
            mat.require(self.wire.surface)
        except InputError as exc:
            raise ValueError(str(exc)) from None
        return self

    # --- derived objects ------------------------------------------------------------------------
    def wire_device(self) -> Wire:
        return Wire(self.wire.section(), self.wire.length_nm, self.wire.surface, self.contacts.contacts())

    def flux_values(self) -> np.ndarray:
        """Flux sweep in units of h/e (converted from the field sweep if that was given)."""
        from .units import flux_quanta

        if self.sweep is None:
            raise InputError("[sweep]: required table is missing (it sets the flux and Fermi-energy axes)")
        if self.sweep.flux_quanta is not None:
            return as_array(self.sweep.flux_quanta)
        if self.model.kind == "bulk_lattice":  # the 3D model finds its surface-state area itself
            from .models.registry import build_model

            return flux_quanta(as_array(self.sweep.field_T), build_model(self).area_nm2)
        return flux_quanta(as_array(self.sweep.field_T), self.wire.section().area_nm2)

    def energy_values(self) -> np.ndarray:
        if self.sweep is None:
            raise InputError("[sweep]: required table is missing (it sets the flux and Fermi-energy axes)")
        return as_array(self.sweep.fermi_energy_meV)


# --- loading --------------------------------------------------------------------------------------
def _field_label(loc: tuple[Any, ...]) -> tuple[str, str]:
    """(table, field) of an error location, dropping union tags and list positions."""
    names = [str(p) for p in loc if not isinstance(p, int) and p not in ("span", "list")]
    if not names:
        return "", ""
    if len(names) == 1:
        return (names[0], "") if names[0] in Scenario.model_fields and _is_table(names[0]) else ("", names[0])
    return ".".join(names[:-1]), names[-1]


def _is_table(name: str) -> bool:
    ann = Scenario.model_fields[name].annotation
    return any(isinstance(a, type) and issubclass(a, BaseModel) for a in getattr(ann, "__args__", (ann,)))


def _message(err: dict[str, Any]) -> str:
    table, field = _field_label(tuple(err["loc"]))
    where = f"[{table}] " if table else ""
    label = " ".join(x for x in (f"[{table}]" if table else "", field) if x)
    kind = err["type"]
    if kind == "extra_forbidden":
        return f"{label}: unknown {'field' if table or not isinstance(err.get('input'), dict) else 'table'}"
    if kind == "missing":
        return f"{label}: required {'table' if not field else 'field'} is missing"
    msg = err["msg"]
    if msg.startswith("Value error, "):  # our validators name their field first
        return f"{where}{msg[len('Value error, '):]}"
    value = err.get("input")
    shown = f" (got {value!r})" if value is not None and not isinstance(value, dict) else ""
    return f"{label}: {msg}{shown}"


def _allowed_fields(model: type[BaseModel], loc: tuple[Any, ...]) -> list[str] | None:
    for part in loc[:-1]:
        field = model.model_fields.get(str(part))
        if field is None:
            return None
        ann = field.annotation
        candidates = [a for a in getattr(ann, "__args__", (ann,)) if isinstance(a, type) and issubclass(a, BaseModel)]
        if not candidates:
            return None
        model = candidates[0]
    return list(model.model_fields)


def parse_scenario(data: dict[str, Any], source: str = "scenario") -> Scenario:
    """Validate a decoded TOML document; raise :class:`InputError` naming every bad field."""
    try:
        return Scenario.model_validate(data)
    except ValidationError as exc:
        lines = []
        for err in exc.errors(include_url=False):
            line = _message(err)
            if err["type"] == "extra_forbidden":
                allowed = _allowed_fields(Scenario, tuple(err["loc"]))
                if allowed:
                    line += f"; allowed: {', '.join(allowed)}"
            if line not in lines:
                lines.append(line)
        shown = lines[:6] + ([f"... and {len(lines) - 6} more"] if len(lines) > 6 else [])
        raise InputError(f"{source}: " + "\n  ".join(shown)) from None


def load_scenario(path: str | Path) -> Scenario:
    """Read and validate a scenario file."""
    p = Path(path)
    if not p.is_file():
        raise InputError(f"scenario file {str(p)!r} not found")
    try:
        text = p.read_text(encoding="utf-8-sig")  # editors on some systems save a byte-order mark
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"scenario file {str(p)!r} cannot be read: {exc}") from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{p.name} is not valid TOML: {exc}") from None
    return parse_scenario(data, source=p.name)


def scenario_text(path: str | Path) -> str:
    """Raw text of a scenario file, stored with results for provenance."""
    return Path(path).read_text(encoding="utf-8-sig")
