"""One disorder realization of a lattice wire model, reproducible from (seed, realization index) alone.

Seeding rule: realization r of a scenario with seed s draws every random number from
``numpy.random.SeedSequence([s, r])``; each disorder kind has its own child stream (fixed spawn key, see
:data:`STREAMS`), so adding or changing one kind never changes the numbers of another, and no result
depends on which worker computes which task or in what order.

Kinds (all optional, all in physical units):

* Anderson disorder — on-site potential uniform in [−W/2, W/2] (meV), independent from site to site.
* Puddles — a Gaussian-correlated potential (rms in meV, correlation length λ in nm), generated on the
  model's site grid in physical coordinates, periodic around a tube (:mod:`.fields`).
* Roughness — a Gaussian-correlated profile along the wire of the diameter (circle) or of width and
  thickness (rectangle, two independent profiles), rms and correlation length in nm. Each slice j gets
  the surface-state contour of its local section: perimeter P_j (sets the transverse quantization) and
  enclosed area A_j (sets the local flux Φ_j = Φ·A_j/A_nominal). The leads keep the nominal section and
  the flux Φ through it.
* Vacancies — each surface site removed independently with probability ``vacancy_fraction``.
"""

from __future__ import annotations

import inspect
import math
import warnings
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, ValidityWarning
from ..geometry import CrossSection, enclosed_area_nm2, perimeter_nm
from . import fields
from .layout import SiteLayout, layout_of

#: spawn key of each disorder kind's random stream; never renumber (it would change published numbers)
STREAMS = {"anderson": 0, "puddles": 1, "roughness": 2, "vacancies": 3}

#: a rough contour may not shrink below this fraction of its nominal size at any slice
MIN_CONTOUR_FRACTION = 0.1

#: scenario field and ``chain`` keywords that each disorder kind needs from a model
_FIELD_OF_KIND = {"anderson": "anderson_width_meV", "puddles": "puddle_rms_meV",
                  "roughness": "roughness_rms_nm", "vacancies": "vacancy_fraction"}
_KEYWORDS_OF_KIND = {"anderson": ("potential_meV",), "puddles": ("potential_meV",),
                     "roughness": ("slice_flux_quanta", "slice_perimeter_nm"), "vacancies": ("vacancies",)}


@dataclass(frozen=True)
class DisorderParameters:
    """Disorder of a wire in physical units (all zero: a clean wire).

    Attributes
    ----------
    anderson_width_meV : float
        Box width W of the on-site Anderson potential (uniform in [−W/2, W/2]).
    puddle_rms_meV : float
        Standard deviation of the Gaussian-correlated potential.
    puddle_correlation_nm : float or None
        Its correlation length λ (covariance rms² exp(−r²/2λ²)); required when ``puddle_rms_meV > 0``.
    roughness_rms_nm : float
        Standard deviation of the diameter (circle) or of width and thickness (rectangle) along the wire.
    roughness_correlation_nm : float or None
        Correlation length of the roughness profile along the wire.
    vacancy_fraction : float
        Probability that a surface site is missing, 0 ≤ f < 1.
    """

    anderson_width_meV: float = 0.0
    puddle_rms_meV: float = 0.0
    puddle_correlation_nm: float | None = None
    roughness_rms_nm: float = 0.0
    roughness_correlation_nm: float | None = None
    vacancy_fraction: float = 0.0

    def __post_init__(self) -> None:
        for name in ("anderson_width_meV", "puddle_rms_meV", "roughness_rms_nm", "vacancy_fraction"):
            value = getattr(self, name)
            if not math.isfinite(value) or value < 0:
                raise InputError(f"[disorder] {name}: must be a finite number >= 0 (got {value})")
        if self.vacancy_fraction >= 1:
            raise InputError(f"[disorder] vacancy_fraction: must be below 1 (got {self.vacancy_fraction})")
        for amp, corr in (("puddle_rms_meV", "puddle_correlation_nm"),
                          ("roughness_rms_nm", "roughness_correlation_nm")):
            lam = getattr(self, corr)
            if lam is not None and not (math.isfinite(lam) and lam > 0):
                raise InputError(f"[disorder] {corr}: must be a length > 0 nm (got {lam})")
            if getattr(self, amp) > 0 and lam is None:
                raise InputError(f"[disorder] {corr}: required when {amp} > 0")

    @property
    def is_clean(self) -> bool:
        return (self.anderson_width_meV == 0 and self.puddle_rms_meV == 0 and self.roughness_rms_nm == 0
                and self.vacancy_fraction == 0)

    @property
    def kinds(self) -> tuple[str, ...]:
        """The disorder kinds present, in :data:`STREAMS` order."""
        present = {"anderson": self.anderson_width_meV > 0, "puddles": self.puddle_rms_meV > 0,
                   "roughness": self.roughness_rms_nm > 0, "vacancies": self.vacancy_fraction > 0}
        return tuple(k for k in STREAMS if present[k])


def stream(seed: int, realization: int, kind: str) -> np.random.Generator:
    """Random generator of one disorder kind of one realization (child ``STREAMS[kind]`` of [seed, r])."""
    return np.random.default_rng(np.random.SeedSequence([int(seed), int(realization)], spawn_key=(STREAMS[kind],)))


@dataclass(frozen=True, eq=False)
class Realization:
    """The arrays of one disorder realization, ready for a model's ``chain``.

    Attributes
    ----------
    potential_meV : ndarray, shape (N, S) or None
        On-site potential (Anderson + puddles).
    vacancies : ndarray of bool, shape (N, S) or None
    area_ratio : ndarray, shape (N,) or None
        A_j / A_nominal of each slice's surface-state contour (roughness).
    slice_perimeter_nm : ndarray, shape (N,) or None
        Perimeter of each slice's surface-state contour (roughness).
    profile_nm : dict
        The roughness profiles (``diameter_nm`` or ``width_nm`` and ``thickness_nm``, shape (N,)).
    """

    potential_meV: np.ndarray | None = None
    vacancies: np.ndarray | None = None
    area_ratio: np.ndarray | None = None
    slice_perimeter_nm: np.ndarray | None = None
    profile_nm: dict[str, np.ndarray] | None = None

    def chain_kwargs(self, flux_quanta: float) -> dict[str, Any]:
        """Keyword arguments for ``model.chain(flux_quanta, **kwargs)``; empty for a clean wire."""
        out: dict[str, Any] = {}
        if self.potential_meV is not None:
            out["potential_meV"] = self.potential_meV
        if self.vacancies is not None:
            out["vacancies"] = self.vacancies
        if self.area_ratio is not None:
            out["slice_flux_quanta"] = float(flux_quanta) * self.area_ratio
            out["slice_perimeter_nm"] = self.slice_perimeter_nm
        return out


def check_parameters(params: DisorderParameters, layout: SiteLayout, section: CrossSection | None) -> None:
    """Validate disorder against a model's lattice: errors for impossible values, warnings with advice."""
    a = layout.min_spacing_nm
    if params.puddle_rms_meV > 0:
        note = fields.resolution_note(params.puddle_correlation_nm, a)
        if note:
            warnings.warn(f"[disorder] puddle_correlation_nm: {note}", ValidityWarning, stacklevel=3)
    if params.roughness_rms_nm > 0:
        note = fields.resolution_note(params.roughness_correlation_nm, layout.spacing_nm[0])
        if note:
            warnings.warn(f"[disorder] roughness_correlation_nm: {note.replace('potential', 'profile')}",
                          ValidityWarning, stacklevel=3)
        if section is None:
            raise InputError("[disorder] roughness_rms_nm: this model has no cross-section to roughen")
        size = min(section.width_nm, section.thickness_nm) - 2 * section.depth_nm
        if 4 * params.roughness_rms_nm >= size:
            raise InputError(
                f"[disorder] roughness_rms_nm: {params.roughness_rms_nm:g} nm is too large for a surface-state "
                f"contour {size:.3g} nm across (a 4-sigma narrowing would close it); allowed: below {size / 4:.3g} nm")


def supports(model, *names: str) -> bool:
    """Whether ``model.chain`` accepts all the keyword arguments ``names``."""
    params = inspect.signature(model.chain).parameters
    return all(n in params for n in names)


def realize(params: DisorderParameters, model, seed: int, realization: int,
            section: CrossSection | None = None, layout: SiteLayout | None = None) -> Realization:
    """Draw realization ``realization`` of ``params`` for ``model``.

    Parameters
    ----------
    params : DisorderParameters
    model : lattice model
        Anything :func:`~simsurface.disorder.layout.layout_of` understands, whose ``chain`` accepts the
        keywords the present disorder kinds need.
    seed, realization : int
        The scenario seed and the realization index; together they fix every number.
    section : CrossSection, optional
        The nominal cross-section (needed for roughness).
    layout : SiteLayout, optional
        Defaults to ``layout_of(model)``.

    Returns
    -------
    Realization
    """
    if params.is_clean:
        return Realization()
    for kind in params.kinds:
        _require(model, kind)
    layout = layout or layout_of(model)
    shape = (layout.n_slices, layout.n_sites)
    potential = None
    if params.anderson_width_meV > 0:
        potential = fields.uniform_box(stream(seed, realization, "anderson"), shape, params.anderson_width_meV)
    if params.puddle_rms_meV > 0:
        grid = fields.gaussian_correlated_field(stream(seed, realization, "puddles"), layout.grid_shape,
                                                layout.spacing_nm, params.puddle_correlation_nm,
                                                params.puddle_rms_meV, (False, *layout.periodic))
        puddles = layout.at_sites(grid)
        potential = puddles if potential is None else potential + puddles
    vacancies = None
    if params.vacancy_fraction > 0:
        drawn = fields.site_fraction_mask(stream(seed, realization, "vacancies"), shape, params.vacancy_fraction)
        vacancies = drawn & layout.surface[None, :]
    ratio = perimeter = profile = None
    if params.roughness_rms_nm > 0:
        if section is None:
            raise InputError("[disorder] roughness_rms_nm: this model has no cross-section to roughen")
        ratio, perimeter, profile = rough_slices(stream(seed, realization, "roughness"), section, layout.n_slices,
                                                 layout.spacing_nm[0], params.roughness_rms_nm,
                                                 params.roughness_correlation_nm)
    return Realization(potential, vacancies, ratio, perimeter, profile)


def rough_slices(rng: np.random.Generator, section: CrossSection, n_slices: int, spacing_nm: float,
                 rms_nm: float, correlation_nm: float) -> tuple[np.ndarray, np.ndarray, dict[str, np.ndarray]]:
    """Per-slice contour of a rough wire: (A_j/A_nominal, P_j in nm, profiles), each shape (n_slices,).

    A circle's diameter, or a rectangle's width and thickness (independent profiles drawn in that order),
    follow a Gaussian-correlated profile with standard deviation ``rms_nm`` and correlation length
    ``correlation_nm`` along the wire; the surface-state depth is unchanged.
    """
    def profile() -> np.ndarray:
        return fields.gaussian_correlated_field(rng, (n_slices,), (spacing_nm,), correlation_nm, rms_nm)

    if section.shape == "circle":
        width = section.width_nm + profile()
        thickness = width
        profiles = {"diameter_nm": width}
    else:
        width = section.width_nm + profile()
        thickness = section.thickness_nm + profile()
        profiles = {"width_nm": width, "thickness_nm": thickness}
    smallest = np.minimum(width, thickness) - 2 * section.depth_nm
    nominal = min(section.width_nm, section.thickness_nm) - 2 * section.depth_nm
    if smallest.min() < MIN_CONTOUR_FRACTION * nominal:
        raise InputError(
            f"[disorder] roughness_rms_nm: a realization narrows the surface-state contour to "
            f"{max(smallest.min(), 0):.3g} nm at one slice (nominal {nominal:.3g} nm); use a smaller roughness")
    area = enclosed_area_nm2(section.shape, width, thickness, section.depth_nm)
    perim = perimeter_nm(section.shape, width, thickness, section.depth_nm)
    return area / section.area_nm2, perim, profiles


def _require(model, kind: str) -> None:
    keywords = _KEYWORDS_OF_KIND[kind]
    if not supports(model, *keywords):
        # a model may say why in ``disorder_refusals`` (kind -> reason)
        reason = getattr(model, "disorder_refusals", {}).get(kind, f"its chain() takes no {', '.join(keywords)}")
        raise InputError(f"[disorder] {_FIELD_OF_KIND[kind]}: not supported by the {type(model).__name__} model "
                         f"({reason})")


def check_disorder(scenario, model) -> None:
    """Validate a scenario's ``[disorder]`` against the model built for it (no-op for a clean wire)."""
    params = scenario.disorder.parameters()
    if params.is_clean:
        return
    for kind in params.kinds:
        _require(model, kind)
    check_parameters(params, layout_of(model), scenario.wire.section())
    if hasattr(model, "check_disorder"):           # model-specific advice (e.g. a basis cutoff)
        model.check_disorder(params)

