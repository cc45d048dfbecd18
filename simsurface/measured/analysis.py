"""From an imported curve to the h/e period, enclosed area and harmonic amplitudes; series of curves.

Steps of :func:`analyze_curve` (each is a small function in :mod:`.process` or :mod:`.spectrum`):

1. symmetrize in B (both signs in one file, or a reciprocal four-terminal partner), in the imported
   quantity (resistance or conductance), then convert to the analysed quantity (G in e²/h by default,
   G = (h/e²)/R; for a four-terminal resistance this is simply its inverse in units of e²/h);
2. drop |B| below ``exclude_below_T`` (the weak-antilocalization cusp);
3. subtract the local quadratic background with a window of ``background_periods`` h/e periods — the
   period expected from ``expected_period_T`` or the nominal cross-section, else one found in a first
   pass with a window of half the range; repeated with the found period when it differs by > 10 %;
4. spectrum; the h/e peak is the largest peak in the search band: 0.67 … 1.5 times the frequency of
   ``expected_period_T``; 0.3 … 1.2 times the frequency expected from the nominal section (the
   surface state encloses less than the section); 3/range … the frequency of 6 points per period
   when nothing is expected. When a peak at half that frequency is at least 30 % as high, 3 times
   above the noise and inside the band with at least 4 periods in the range, the strongest peak is
   taken as h/2e and the half-frequency one as h/e;
5. joint fit of h/e and h/2e for the period, moving-block bootstrap for its uncertainty;
6. enclosed area A = (h/e)/period, circle diameter, square side, and the surface-state depth for the
   nominal cross-section.

Bad input (too few points, fewer than 6 points per expected period, a range shorter than two periods)
raises :class:`~simsurface.errors.InputError`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import xarray as xr

from .. import geometry
from ..errors import InputError
from ..units import RESISTANCE_QUANTUM_OHM, area_from_period_nm2, period_he_T
from . import process, spectrum
from .io import SIGNAL_NAMES
from .temperature import DephasingFit, fit_dephasing

MIN_POINTS = 20
MIN_POINTS_PER_PERIOD = 6
MIN_PERIODS = 2.0
#: a harmonic counts as detected when its amplitude is this many times the spectral noise floor
DETECTION_SNR = 3.0
HALF_PEAK_RATIO = 0.3
#: the half-frequency reading needs at least this many h/e periods in the field range
HALF_PEAK_MIN_PERIODS = 4
UNITS = {"conductance": "e^2/h", "resistance": "ohm"}


@dataclass(frozen=True)
class AnalysisOptions:
    """Choices of the analysis (units in the names; see the module docstring for their use)."""

    quantity: str = "conductance"
    symmetrize: bool = True
    expected_period_T: float | None = None
    shape: str | None = None
    width_nm: float | None = None
    thickness_nm: float | None = None
    depth_nm: float = 0.0
    size_uncertainty_nm: float = 0.0
    perimeter_nm: float | None = None
    background_periods: float = 5.0
    background_degree: int = 2
    exclude_below_T: float = 0.0
    spectrum: str = "auto"
    n_bootstrap: int = 200
    seed: int = 0
    lphi_exponent: float | None = None

    def __post_init__(self) -> None:
        if self.quantity not in UNITS:
            raise InputError(f"--quantity: {self.quantity!r} is not allowed; use conductance or resistance")
        if self.spectrum not in ("auto", "fft", "lombscargle"):
            raise InputError(f"--spectrum: {self.spectrum!r} is not allowed; use auto, fft or lombscargle")
        for name in ("expected_period_T", "width_nm", "thickness_nm", "perimeter_nm"):
            v = getattr(self, name)
            if v is not None and not v > 0:
                raise InputError(f"--{name.replace('_', '-')}: must be > 0 (got {v})")
        if self.shape is not None:
            if self.shape not in ("circle", "rectangle"):
                raise InputError(f"--shape: {self.shape!r} is not allowed; use circle or rectangle")
            if self.width_nm is None or (self.shape == "rectangle" and self.thickness_nm is None):
                raise InputError("--shape: give --width-nm (the diameter of a circle) and, for a rectangle, "
                                 "--thickness-nm")
        if not 0 <= self.depth_nm:
            raise InputError(f"--depth-nm: must be >= 0 (got {self.depth_nm})")
        if not 0 <= self.size_uncertainty_nm:
            raise InputError(f"--size-uncertainty-nm: must be >= 0 (got {self.size_uncertainty_nm})")
        if not self.background_periods >= 2:
            raise InputError(f"--background-periods: must be >= 2 h/e periods (got {self.background_periods}); "
                             "shorter windows remove the oscillation itself")
        if self.background_degree not in (0, 1, 2, 3):
            raise InputError(f"--background-degree: {self.background_degree} is not allowed; use 0, 1, 2 or 3")
        if self.exclude_below_T < 0:
            raise InputError(f"--exclude-below-T: must be >= 0 (got {self.exclude_below_T})")
        if self.n_bootstrap < 10:
            raise InputError(f"--bootstrap: at least 10 resamples are needed (got {self.n_bootstrap})")
        if self.lphi_exponent is not None and not 0 < self.lphi_exponent <= 5:
            raise InputError(f"--lphi-exponent: must be in 0 < p <= 5 (got {self.lphi_exponent})")

    @property
    def thickness(self) -> float | None:
        return self.width_nm if self.shape == "circle" else self.thickness_nm

    def nominal_area_nm2(self) -> float | None:
        """Area enclosed at ``depth_nm`` inside the nominal cross-section, if one is given."""
        if self.shape is None:
            return None
        area = float(geometry.enclosed_area_nm2(self.shape, self.width_nm, self.thickness, self.depth_nm))
        if area <= 0:
            raise InputError(f"--depth-nm: {self.depth_nm} nm leaves no enclosed area in the nominal cross-section")
        return area

    def expected_period(self) -> tuple[float | None, str]:
        """Expected h/e period and where it comes from."""
        if self.expected_period_T is not None:
            return self.expected_period_T, "--expected-period-T"
        area = self.nominal_area_nm2()
        if area is not None:
            return float(period_he_T(area)), f"nominal cross-section at depth {self.depth_nm:g} nm"
        return None, "none (first pass with a window of half the range)"


@dataclass(frozen=True)
class Harmonic:
    """One harmonic of the AB oscillation: n = 1 (h/e) or n = 2 (h/2e)."""

    harmonic: int
    frequency_per_T: float
    amplitude: float
    amplitude_uncertainty: float
    phase_rad: float
    snr: float

    @property
    def detected(self) -> bool:
        return bool(self.snr >= DETECTION_SNR)

    @property
    def label(self) -> str:
        return {1: "h/e", 2: "h/2e"}.get(self.harmonic, f"h/{self.harmonic}e")


class _Period:
    """Period and its uncertainty from ``frequency_per_T`` and ``frequency_uncertainty_per_T``."""

    frequency_per_T: float
    frequency_uncertainty_per_T: float

    @property
    def period_T(self) -> float:
        return 1.0 / self.frequency_per_T

    @property
    def period_uncertainty_T(self) -> float:
        return self.frequency_uncertainty_per_T / self.frequency_per_T**2


@dataclass
class CurveAnalysis(_Period):
    """Everything one curve's analysis produced (arrays sorted by field)."""

    label: str
    source: str
    metadata: dict[str, Any]
    raw: xr.Dataset
    quantity: str
    symmetrization: str
    reciprocity_rms: float | None
    field_T: np.ndarray
    values: np.ndarray
    background: np.ndarray
    window_T: float
    expected_period_T: float | None
    expected_source: str
    spectrum: xr.DataArray
    search_band_per_T: tuple[float, float]
    frequency_per_T: float
    frequency_uncertainty_per_T: float
    harmonics: tuple[Harmonic, ...]
    fit_model: np.ndarray
    noise_floor: float
    background_transfer: float
    n_bootstrap: int
    block_points: int
    notes: list[str] = field(default_factory=list)

    @property
    def unit(self) -> str:
        return UNITS[self.quantity]

    @property
    def oscillation(self) -> np.ndarray:
        return self.values - self.background

    @property
    def field_range_T(self) -> float:
        return float(np.ptp(self.field_T))

    @property
    def period_resolution_T(self) -> float:
        """Rayleigh resolution expressed as a period: P²/range."""
        return self.period_T**2 / self.field_range_T

    @property
    def points_per_period(self) -> float:
        return self.period_T / float(np.median(np.diff(self.field_T)))

    def harmonic(self, n: int) -> Harmonic:
        return next(h for h in self.harmonics if h.harmonic == n)


def to_quantity(values: np.ndarray, imported: str, quantity: str) -> np.ndarray:
    """Convert between resistance in Ω and conductance in e²/h (G = (h/e²)/R)."""
    if imported == quantity:
        return np.asarray(values, float)
    return RESISTANCE_QUANTUM_OHM / np.asarray(values, float)


def signal_of(ds: xr.Dataset) -> np.ndarray:
    """The signal variable of an imported curve (resistance_ohm or conductance_e2h)."""
    return ds[SIGNAL_NAMES[ds.attrs["quantity"]]].values


def prepare(ds: xr.Dataset, options: AnalysisOptions, partner: xr.Dataset | None = None
            ) -> tuple[np.ndarray, np.ndarray, str, float | None, list[str]]:
    """Symmetrize, convert and cut one curve: (field_T, values, symmetrization, reciprocity_rms, notes)."""
    f, y = ds["field_T"].values, signal_of(ds)
    notes: list[str] = []
    rms = None
    if partner is not None:
        if partner.attrs["quantity"] != ds.attrs["quantity"]:
            raise InputError(f"--reciprocal {partner.attrs['source']}: holds a {partner.attrs['quantity']} but "
                             f"{ds.attrs['source']} a {ds.attrs['quantity']}; a reciprocal pair has one quantity")
        pf, py = partner["field_T"].values, signal_of(partner)
        rms = process.reciprocity_deviation(f, y, pf, py)
        f, y = process.symmetrize_reciprocal(f, y, pf, py)
        how = "reciprocal pair [R_ij,kl(B) + R_kl,ij(B)]/2"
    elif options.symmetrize and process.covers_both_signs(f):
        f, y = process.symmetrize(f, y)
        how = "field-even part [y(B) + y(-B)]/2"
    else:
        if options.symmetrize and np.min(f) < 0 < np.max(f):
            notes.append("both signs of B are present but the range covered at both signs is under half of "
                         "the largest |B|; not symmetrized")
        how = "none"
    f, y = process.merge_duplicates(f, y)
    if ds.attrs["quantity"] != options.quantity and np.any(y <= 0):
        raise InputError(f"DATA {ds.attrs.get('source')}: {ds.attrs['quantity']} values <= 0 cannot be converted to a "
                         f"{options.quantity}; analyse with --quantity {ds.attrs['quantity']}")
    y = to_quantity(y, ds.attrs["quantity"], options.quantity)
    keep = np.abs(f) >= options.exclude_below_T
    f, y = f[keep], y[keep]
    return f, y, how, rms, notes


def analyze_curve(ds: xr.Dataset, options: AnalysisOptions = AnalysisOptions(), partner: xr.Dataset | None = None,
                  label: str | None = None) -> CurveAnalysis:
    """Period, area and harmonic amplitudes of one imported curve (see the module docstring).

    Parameters
    ----------
    ds : xarray.Dataset
        A curve from :func:`simsurface.measured.io.read_table`.
    options : AnalysisOptions
    partner : xarray.Dataset, optional
        The reciprocal four-terminal curve (current and voltage contacts swapped).
    label : str, optional
        Name used in messages and file names; default the file name.
    """
    source = ds.attrs.get("source", "data")
    label = label or source
    where = f"DATA {source}"
    f, y, how, rms, notes = prepare(ds, options, partner)
    if f.size < MIN_POINTS:
        raise InputError(f"{where}: only {f.size} usable field points after symmetrization and cuts; "
                         f"at least {MIN_POINTS} are needed")
    span = float(np.ptp(f))
    step = float(np.median(np.diff(f)))
    expected, expected_source = options.expected_period()
    if expected is not None:
        if span < MIN_PERIODS * expected:
            raise InputError(f"{where}: the field range {span:.3g} T is shorter than two expected h/e periods "
                             f"({MIN_PERIODS * expected:.3g} T, expected period from {expected_source}); "
                             "measure a longer range")
        if expected / step < MIN_POINTS_PER_PERIOD:
            raise InputError(f"{where}: {expected / step:.2g} points per expected h/e period "
                             f"({expected:.3g} T from {expected_source}); at least {MIN_POINTS_PER_PERIOD} "
                             "are needed (measure a finer field step)")
    f_hi = 1.0 / (MIN_POINTS_PER_PERIOD * step)
    if expected is not None:
        # a surface state below the surface encloses less than the nominal section: from the nominal
        # section the band reaches down to 0.3 of the expected frequency (area ratio 0.3)
        lo, hi = (0.67, 1.5) if options.expected_period_T is not None else (0.3, 1.2)
        band = (max(lo / expected, MIN_PERIODS / span), min(hi / expected, f_hi))
    else:
        band = (3.0 / span, f_hi)
    if band[0] >= band[1]:
        raise InputError(f"{where}: the field range ({span:.3g} T) and step ({step:.3g} T) leave no frequency band "
                         "with two periods in range and six points per period")

    period_ref = expected
    if period_ref is None:  # first pass: window of half the range (the band starts at 3 periods in range)
        bg = process.local_quadratic_background(f, y, span / 2, options.background_degree)
        spec = spectrum.amplitude_spectrum(f, y - bg, f_hi, options.spectrum)
        i = _pick_he(spec, band, 1.0 / span, notes=[])
        if i is None:
            raise InputError(f"{where}: no oscillation peak between {band[0]:.3g} and {band[1]:.3g} 1/T")
        period_ref = 1.0 / float(spec["frequency_per_T"][i])
    for _ in range(3):
        window = options.background_periods * period_ref
        bg = process.local_quadratic_background(f, y, window, options.background_degree)
        spec = spectrum.amplitude_spectrum(f, y - bg, min(f_hi * 2.2, 0.5 / step), options.spectrum)
        pick_notes: list[str] = []
        i = _pick_he(spec, band, 1.0 / span, pick_notes)
        if i is None:
            raise InputError(f"{where}: no oscillation peak between {band[0]:.3g} and {band[1]:.3g} 1/T "
                             "(h/e search band); check --expected-period-T or the nominal dimensions")
        f_peak = float(spec["frequency_per_T"][i])
        if abs(f_peak * period_ref - 1) <= 0.1:
            break
        period_ref = 1.0 / f_peak
    notes += pick_notes
    osc = y - bg
    f_fit = spectrum.refine_frequency(f, osc, f_peak, (1, 2))
    fit = spectrum.fit_harmonics(f, osc, f_fit, (1, 2))
    if span * f_fit < MIN_PERIODS:
        raise InputError(f"{where}: the field range {span:.3g} T holds fewer than two h/e periods "
                         f"(period {1 / f_fit:.3g} T)")
    if 1.0 / (f_fit * step) < MIN_POINTS_PER_PERIOD:
        raise InputError(f"{where}: fewer than {MIN_POINTS_PER_PERIOD} points per h/e period "
                         f"({1 / (f_fit * step):.2g}); measure a finer field step")
    block = int(np.ceil(1.0 / (f_fit * step)))
    rng = np.random.default_rng(options.seed)
    boot_f, boot_a = spectrum.bootstrap_fit(f, fit, options.n_bootstrap, block, rng)
    floor = spectrum.noise_floor(spec, band[0], min(2.2 * band[1], float(spec["frequency_per_T"][-1])),
                                 [f_fit, 2 * f_fit], 1.0 / span)
    harmonics = tuple(
        Harmonic(n, n * f_fit, float(fit.amplitudes[k]), float(np.std(boot_a[:, k], ddof=1)),
                 float(fit.phases_rad[k]), float(fit.amplitudes[k] / floor) if floor > 0 else float("inf"))
        for k, n in enumerate(fit.harmonics))
    transfer = process.background_transfer(f, window, 1.0 / f_fit, options.background_degree)
    if not harmonics[0].detected:
        notes.append(f"the h/e amplitude is only {harmonics[0].snr:.2g} times the spectral noise floor "
                     f"(detection needs {DETECTION_SNR:g}); the period is not reliable (h/e searched in "
                     f"{band[0]:.3g} … {band[1]:.3g} 1/T)")
    return CurveAnalysis(
        label=label, source=source, metadata=dict(ds.attrs.get("metadata", {})), raw=ds,
        quantity=options.quantity, symmetrization=how, reciprocity_rms=rms, field_T=f, values=y, background=bg,
        window_T=window, expected_period_T=expected, expected_source=expected_source, spectrum=spec,
        search_band_per_T=band, frequency_per_T=f_fit, frequency_uncertainty_per_T=float(np.std(boot_f, ddof=1)),
        harmonics=harmonics, fit_model=fit.model, noise_floor=floor, background_transfer=transfer,
        n_bootstrap=options.n_bootstrap, block_points=block, notes=notes)


def _pick_he(spec: xr.DataArray, band: tuple[float, float], resolution: float, notes: list[str]) -> int | None:
    """Index of the h/e peak (see the module docstring for the half-frequency rule)."""
    fr, amp = spec["frequency_per_T"].values, spec.values
    i = spectrum.peak_in_band(fr, amp, *band)
    if i is None:
        return None
    half = fr[i] / 2
    if half >= max(band[0], HALF_PEAK_MIN_PERIODS * resolution):
        j = spectrum.peak_in_band(fr, amp, max(band[0], half - 1.5 * resolution), half + 1.5 * resolution)
        floor = spectrum.noise_floor(spec, band[0], band[1], [fr[i], half], resolution)
        if j is not None and amp[j] >= HALF_PEAK_RATIO * amp[i] and amp[j] >= DETECTION_SNR * floor:
            notes.append(f"the strongest peak ({fr[i]:.4g} 1/T) is read as h/2e: a peak at half its frequency "
                         f"({fr[j]:.4g} 1/T) is {amp[j] / amp[i]:.2f} as high")
            return int(j)
    return i


# --- geometry of the result ---------------------------------------------------------------------------

def area_summary(period_T: float, period_uncertainty_T: float, options: AnalysisOptions) -> dict[str, Any]:
    """Enclosed area, equivalent circle and square, and the surface-state depth for the nominal section."""
    area = float(area_from_period_nm2(period_T))
    area_unc = area * period_uncertainty_T / period_T
    out: dict[str, Any] = {
        "area_nm2": area, "area_uncertainty_nm2": area_unc,
        "circle_diameter_nm": float(geometry.circle_diameter_nm(area)),
        "circle_diameter_uncertainty_nm": float(geometry.circle_diameter_nm(area)) * 0.5 * area_unc / area,
        "square_side_nm": float(geometry.square_side_nm(area)),
        "square_side_uncertainty_nm": float(geometry.square_side_nm(area)) * 0.5 * area_unc / area,
    }
    if options.shape is not None:
        w, t = options.width_nm, options.thickness
        depth = geometry.depth_from_area_nm(options.shape, w, t, area)
        d_lo = geometry.depth_from_area_nm(options.shape, w, t, area + area_unc)
        d_hi = geometry.depth_from_area_nm(options.shape, w, t, max(area - area_unc, 1e-9))
        from_period = 0.5 * abs(d_hi - d_lo)
        # nominal sizes (AFM/SEM) carry their own error: vary width and thickness independently
        su = options.size_uncertainty_nm
        from_size = 0.0
        if su > 0:
            dw = geometry.depth_from_area_nm(options.shape, w + su, t, area) - geometry.depth_from_area_nm(
                options.shape, w - su, t, area)
            dt = 0.0 if options.shape == "circle" else geometry.depth_from_area_nm(
                options.shape, w, t + su, area) - geometry.depth_from_area_nm(options.shape, w, t - su, area)
            from_size = 0.5 * float(np.hypot(dw, dt))
        out.update({
            "nominal": {"shape": options.shape, "width_nm": w, "thickness_nm": t, "size_uncertainty_nm": su,
                        "geometric_area_nm2": float(geometry.enclosed_area_nm2(options.shape, w, t, 0.0))},
            "depth_nm": depth, "depth_uncertainty_nm": float(np.hypot(from_period, from_size)),
            "depth_uncertainty_from_period_nm": from_period, "depth_uncertainty_from_size_nm": from_size,
        })
        if depth < 0:
            out["depth_note"] = ("the measured area exceeds the nominal cross-section: the nominal size is too "
                                 "small or the oscillation does not come from the surface of this section")
    return out


def loop_perimeter_nm(area_nm2: float, options: AnalysisOptions) -> tuple[float, str]:
    """Circumference of the interfering loop: given, from the nominal section at the fitted depth, or a circle."""
    if options.perimeter_nm is not None:
        return options.perimeter_nm, "--perimeter-nm"
    if options.shape is not None:
        w, t = options.width_nm, options.thickness
        depth = geometry.depth_from_area_nm(options.shape, w, t, area_nm2)
        if depth >= 0:
            return float(geometry.perimeter_nm(options.shape, w, t, depth)), \
                f"nominal {options.shape} at the fitted depth {depth:.3g} nm"
    return 2 * float(np.sqrt(np.pi * area_nm2)), "circle of the measured area (no nominal section given)"


# --- several curves -----------------------------------------------------------------------------------

@dataclass
class SeriesAnalysis(_Period):
    """Combined period of several curves and, for a temperature series, the coherence length."""

    curves: list[CurveAnalysis]
    frequency_per_T: float
    frequency_uncertainty_per_T: float
    consistency_chi2_per_dof: float | None
    temperature_K: np.ndarray | None = None
    amplitudes: np.ndarray | None = None               # (n_curves, 2) at the common frequency
    amplitude_uncertainties: np.ndarray | None = None
    detected: np.ndarray | None = None
    perimeter_nm: float | None = None
    perimeter_source: str = ""
    dephasing: DephasingFit | None = None
    harmonics_used: tuple[int, ...] = ()
    notes: list[str] = field(default_factory=list)


def combine(curves: list[CurveAnalysis], options: AnalysisOptions) -> SeriesAnalysis:
    """Weighted mean period of the curves with a detected h/e peak; L_phi(T) when temperatures differ.

    The combined frequency is the inverse-variance weighted mean; its uncertainty is scaled by
    (χ²/dof)^(1/2) when the curves disagree by more than their uncertainties. The amplitudes of the
    temperature series are refitted at the common frequency (bootstrap uncertainties, same blocks),
    and L_phi(T) is fitted (see :mod:`.temperature`) to the harmonics detected at two or more
    temperatures when at least three distinct temperatures are present.
    """
    good = [c for c in curves if c.harmonic(1).detected] or curves
    fr = np.array([c.frequency_per_T for c in good])
    sig = np.array([max(c.frequency_uncertainty_per_T, 1e-12 * c.frequency_per_T) for c in good])
    w = 1 / sig**2
    f_mean = float(np.sum(w * fr) / np.sum(w))
    f_unc = float(np.sqrt(1 / np.sum(w)))
    chi2 = None
    if len(good) > 1:
        chi2 = float(np.sum(w * (fr - f_mean) ** 2) / (len(good) - 1))
        f_unc *= max(1.0, np.sqrt(chi2))
    series = SeriesAnalysis(curves, f_mean, f_unc, chi2)
    temps = [c.metadata.get("temperature_K") for c in curves]
    if len(curves) < 3:
        if len(curves) == 2:
            series.notes.append("two curves: a coherence-length fit needs three or more temperatures")
        return series
    if any(not isinstance(t, (int, float)) for t in temps):
        series.notes.append("not every file has a temperature (header '# temperature_K = ...', the manifest or "
                            "--temperature-K); no coherence-length fit")
        return series
    t = np.asarray(temps, float)
    if np.unique(t).size < 3:
        series.notes.append("fewer than three distinct temperatures; no coherence-length fit")
        return series
    amps = np.empty((len(curves), 2))
    uncs = np.empty((len(curves), 2))
    det = np.empty((len(curves), 2), bool)
    rng = np.random.default_rng(options.seed)
    for i, c in enumerate(curves):
        fit = spectrum.fit_harmonics(c.field_T, c.oscillation, f_mean, (1, 2))
        _, boot_a = spectrum.bootstrap_fit(c.field_T, fit, options.n_bootstrap, c.block_points, rng, refine=False)
        amps[i] = fit.amplitudes
        uncs[i] = np.std(boot_a, axis=0, ddof=1)
        det[i] = fit.amplitudes >= DETECTION_SNR * c.noise_floor
    series.temperature_K, series.amplitudes, series.amplitude_uncertainties, series.detected = t, amps, uncs, det
    used = tuple(n for k, n in enumerate((1, 2)) if np.unique(t[det[:, k]]).size >= 2)
    if not used:
        series.notes.append("no harmonic is detected at two or more temperatures; no coherence-length fit")
        return series
    area = float(area_from_period_nm2(1 / f_mean))
    series.perimeter_nm, series.perimeter_source = loop_perimeter_nm(area, options)
    cols = [(1, 2).index(n) for n in used]
    series.harmonics_used = used
    series.dephasing = fit_dephasing(t, amps[:, cols], uncs[:, cols], series.perimeter_nm, used,
                                     options.lphi_exponent, det[:, cols])
    return series

