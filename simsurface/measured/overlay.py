"""Theory over data: a simsurface conductance curve G(Φ) mapped onto the measured field axis.

Theory sources
--------------
* ``results.nc`` (NetCDF, as ``simsurface run`` writes it): variable ``conductance`` in e²/h with dimensions (realization, flux, energy),
  coordinates ``flux`` (units of h/e) and ``energy`` (meV), attribute ``enclosed_area_nm2``. The curve is
  the average over realizations at the energy nearest to the one asked for.
* a plan's curves CSV: ``#`` comment lines, then the header
  ``field_T,flux_quanta,conductance_e2h,resistance_ratio``; the area is ``# enclosed_area_nm2 = ...`` in
  the comments or, failing that, flux_quanta·(h/e)/field_T.

Mapping and fit
---------------
Φ/Φ0 = B·A/(h/e) with A the analysed (fitted) area, the theory's own area, or a given number. The theory
is converted to the measured quantity — G in e²/h, R = (h/e²)/G in Ω, or ΔR/R = G(0)/G(B) − 1 — and
``measured ≈ scale · theory + offset`` is fitted by linear least squares (scale absorbs parallel
channels, dephasing and the number of wires; offset a parallel conductance or series resistance).
With ``fit_area`` the area is fitted too: a grid over ±``area_range`` (steps that move the phase at the
highest field by 1/20 period), then a joint nonlinear least-squares refinement of (scale, offset, area).
Uncertainties come from the Jacobian with the residual variance, i.e. they assume independent residuals
and are lower bounds when the residuals are correlated (aperiodic fluctuations).

With ``detrend`` the smooth background (same filter and window as the analysis) is removed from both the
data and the mapped theory before the fit, so only the oscillations are compared.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import xarray as xr
from scipy.optimize import least_squares

from ..errors import InputError
from ..units import RESISTANCE_QUANTUM_OHM, area_from_period_nm2, flux_quanta
from .io import _to_float, split_comments
from .process import background_operator

#: measured quantity -> (column name in the overlay CSV, unit)
QUANTITIES = {"G": ("conductance_e2h", "e^2/h"), "R": ("resistance_ohm", "ohm"),
              "dR/R": ("relative_resistance_change", "1")}
CURVES_HEADER = ["field_T", "flux_quanta", "conductance_e2h", "resistance_ratio"]


def read_theory(path: str | Path, energy_meV: float | None = None) -> xr.DataArray:
    """Theory conductance versus flux from a results.nc or a plan's curves CSV.

    Returns
    -------
    xarray.DataArray
        ``conductance_e2h`` on coordinate ``flux_quanta`` (sorted); attributes ``source``,
        ``enclosed_area_nm2`` (or NaN when unknown) and ``energy_meV`` (NaN for a CSV).
    """
    path = Path(path)
    if not path.is_file():
        raise InputError(f"--theory {path}: file not found")
    if path.suffix.lower() in (".nc", ".nc4", ".netcdf"):
        return _read_results_nc(path, energy_meV)
    return _read_curves_csv(path)


def _read_results_nc(path: Path, energy_meV: float | None) -> xr.DataArray:
    try:
        ds = xr.open_dataset(path).load()
    except Exception as exc:  # netCDF4/h5 raise many types for a damaged file
        raise InputError(f"--theory {path}: not a readable NetCDF file ({type(exc).__name__})") from None
    if "conductance" not in ds:
        raise InputError(f"--theory {path}: no variable 'conductance' (expected dims realization, flux, energy)")
    g = ds["conductance"]
    if "flux" not in g.dims:
        raise InputError(f"--theory {path}: 'conductance' has no 'flux' dimension")
    if "realization" in g.dims:
        g = g.mean("realization")
    chosen = np.nan
    if "energy" in g.dims:
        energies = g["energy"].values
        if energy_meV is None:
            if energies.size > 1:
                raise InputError(f"--theory-energy-meV: {path} holds {energies.size} energies "
                                 f"({energies.min():g} … {energies.max():g} meV); choose one")
            energy_meV = float(energies[0])
        k = int(np.argmin(np.abs(energies - energy_meV)))
        chosen = float(energies[k])
        g = g.isel(energy=k)
    extra = [d for d in g.dims if d != "flux"]
    if extra:
        raise InputError(f"--theory {path}: 'conductance' has unexpected dimension(s) {', '.join(extra)}")
    area = float(ds.attrs.get("enclosed_area_nm2", np.nan))
    out = xr.DataArray(g.values.astype(float), coords={"flux_quanta": g["flux"].values.astype(float)},
                       dims="flux_quanta", name="conductance_e2h",
                       attrs={"units": "e^2/h", "source": str(path), "enclosed_area_nm2": area,
                              "energy_meV": chosen})
    return _clean(out, path)


def _read_curves_csv(path: Path) -> xr.DataArray:
    meta, body = split_comments(path.read_text(encoding="utf-8", errors="replace"))
    header = None
    rows = []
    for lineno, s in body:
        cells = [c.strip() for c in s.split(",")]
        if header is None:
            header = cells
            missing = [c for c in ("flux_quanta", "conductance_e2h") if c not in header]
            if missing:
                raise InputError(f"--theory {path}: header lacks {', '.join(missing)}; a curves CSV has the header "
                                 f"{','.join(CURVES_HEADER)}")
            continue
        vals = [_to_float(c) for c in cells]
        if len(vals) != len(header) or any(v is None for v in vals):
            raise InputError(f"--theory {path}, line {lineno}: expected {len(header)} numbers")
        rows.append(vals)
    if header is None or not rows:
        raise InputError(f"--theory {path}: no curve rows")
    table = np.array(rows, float)
    flux = table[:, header.index("flux_quanta")]
    g = table[:, header.index("conductance_e2h")]
    area = meta.get("enclosed_area_nm2")
    area = float(area) if isinstance(area, float) else np.nan
    if not np.isfinite(area) and "field_T" in header:
        b = table[:, header.index("field_T")]
        ok = (np.abs(b) > 0) & (np.abs(flux) > 0)
        if ok.any():  # A = Φ (h/e) / B
            area = float(np.median(area_from_period_nm2(b[ok] / flux[ok])))
    out = xr.DataArray(g, coords={"flux_quanta": flux}, dims="flux_quanta", name="conductance_e2h",
                       attrs={"units": "e^2/h", "source": str(path), "enclosed_area_nm2": float(area),
                              "energy_meV": float(meta.get("energy_meV", np.nan))
                              if isinstance(meta.get("energy_meV"), float) else np.nan})
    return _clean(out, path)


def _clean(theory: xr.DataArray, path: Path) -> xr.DataArray:
    ok = np.isfinite(theory.values) & np.isfinite(theory["flux_quanta"].values)
    theory = theory.isel(flux_quanta=np.flatnonzero(ok)).sortby("flux_quanta")
    if theory.size < 4:
        raise InputError(f"--theory {path}: fewer than 4 finite points")
    if np.any(theory.values <= 0):
        raise InputError(f"--theory {path}: conductance must be > 0 e^2/h to convert to a resistance")
    return theory


def theory_at_flux(theory: xr.DataArray, flux: np.ndarray, periodic: bool = False) -> np.ndarray:
    """Theory conductance at the given fluxes; NaN outside its flux range unless ``periodic``.

    ``periodic`` repeats the curve with period one flux quantum (the model is periodic in Φ/Φ0 when the
    area is fixed and Zeeman effects are left out); the theory must then span at least one period.
    """
    phi = theory["flux_quanta"].values
    g = theory.values
    if periodic:
        if np.ptp(phi) < 1.0 - 1e-9:
            raise InputError("--periodic-theory: the theory curve spans less than one flux quantum")
        start = phi[0]
        window = (phi >= start) & (phi < start + 1.0)
        return np.interp(flux, phi[window], g[window], period=1.0)
    return np.interp(flux, phi, g, left=np.nan, right=np.nan)


def to_measured(theory_g_e2h: np.ndarray, quantity: str, g_at_zero_e2h: float | None = None) -> np.ndarray:
    """Theory conductance (e²/h) as the measured quantity: ``G``, ``R`` (Ω) or ``dR/R``."""
    g = np.asarray(theory_g_e2h, float)
    if quantity == "G":
        return g
    if quantity == "R":
        return RESISTANCE_QUANTUM_OHM / g
    if quantity == "dR/R":
        return g_at_zero_e2h / g - 1.0
    raise InputError(f"--overlay-quantity: {quantity!r} is not allowed; use G, R or dR/R")


def measured_as(field_T: np.ndarray, conductance_e2h: np.ndarray, quantity: str) -> np.ndarray:
    """Measured conductance (e²/h) as ``G``, ``R`` (Ω) or ``dR/R`` = R(B)/R(B_min) − 1 (B_min: the smallest |B|)."""
    g = np.asarray(conductance_e2h, float)
    if quantity == "dR/R":
        g0 = g[int(np.argmin(np.abs(field_T)))]
        return to_measured(g, quantity, g0)
    return to_measured(g, quantity)


@dataclass(frozen=True)
class OverlayFit:
    """Result of :func:`fit_overlay` (area in nm², scale dimensionless, offset in the quantity's unit)."""

    quantity: str
    scale: float
    scale_uncertainty: float
    offset: float
    offset_uncertainty: float
    area_nm2: float
    area_uncertainty_nm2: float | None  # None when the area was not fitted
    area_source: str
    detrended: bool
    field_T: np.ndarray
    flux_quanta: np.ndarray
    measured: np.ndarray
    theory: np.ndarray  # scaled and offset, same points

    @property
    def residual(self) -> np.ndarray:
        return self.measured - self.theory

    @property
    def rms_residual(self) -> float:
        return float(np.sqrt(np.mean(self.residual**2)))

    @property
    def unit(self) -> str:
        return QUANTITIES[self.quantity][1]


def _theory_curve(theory, field_T, area, quantity, periodic, detrend_op):
    phi = flux_quanta(field_T, area)
    g = theory_at_flux(theory, phi, periodic)
    g0 = float(theory_at_flux(theory, np.array([0.0]), periodic)[0]) if quantity == "dR/R" else None
    if quantity == "dR/R" and not np.isfinite(g0):
        raise InputError("--overlay-quantity dR/R: the theory curve does not reach zero flux")
    y = to_measured(g, quantity, g0)
    if detrend_op is not None:
        y = y - detrend_op @ y
    return phi, y


def _linear(y_th: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, float]:
    """(scale, offset) of y ≈ scale·y_th + offset and the residual sum of squares."""
    design = np.column_stack([y_th, np.ones(y.size)])
    coef = np.linalg.lstsq(design, y, rcond=None)[0]
    r = y - design @ coef
    return coef, float(r @ r)


def fit_overlay(theory: xr.DataArray, field_T: np.ndarray, measured: np.ndarray, quantity: str, area_nm2: float,
                *, area_source: str = "given", fit_area: bool = False, area_range: float = 0.1,
                periodic: bool = False, detrend_window_T: float | None = None,
                background_degree: int = 2) -> OverlayFit:
    """Fit ``measured ≈ scale · theory(Φ = B A/(h/e)) + offset`` (and A when ``fit_area``).

    Parameters
    ----------
    theory : xarray.DataArray
        From :func:`read_theory`.
    field_T, measured : ndarray, shape (n,)
        Sorted fields and the measured curve in ``quantity`` (see :func:`measured_as`).
    quantity : {"G", "R", "dR/R"}
    area_nm2 : float
        Area that maps flux to field (the start value when ``fit_area``).
    area_range : float
        Relative half-width of the area search.
    periodic : bool
        Repeat the theory with period one flux quantum.
    detrend_window_T : float, optional
        Remove the local polynomial background of this window from data and theory first.
    """
    if quantity not in QUANTITIES:
        raise InputError(f"--overlay-quantity: {quantity!r} is not allowed; use G, R or dR/R")
    if not area_nm2 > 0:
        raise InputError(f"--overlay-area: the area must be > 0 nm^2 (got {area_nm2})")
    x = np.asarray(field_T, float)
    y = np.asarray(measured, float)
    # keep the fields the theory covers for every area that will be tried
    areas = area_nm2 * np.array([1 - area_range, 1 + area_range]) if fit_area else np.array([area_nm2])
    keep = np.ones(x.size, bool)
    if not periodic:
        lo, hi = float(theory["flux_quanta"][0]), float(theory["flux_quanta"][-1])
        for a in areas:
            phi = flux_quanta(x, a)
            keep &= (phi >= lo) & (phi <= hi)
    x, y = x[keep], y[keep]
    covered = float(np.ptp(flux_quanta(x, area_nm2))) if x.size > 1 else 0.0
    if x.size < 20 or covered < 2.0:
        raise InputError(f"--theory {theory.attrs.get('source')}: covers only {covered:.2g} flux quanta "
                         f"({x.size} points) of the measured range; at least 2 flux quanta and 20 points "
                         "are needed (a longer theory curve or --periodic-theory)")
    op = background_operator(x, detrend_window_T, background_degree) if detrend_window_T else None
    if op is not None:
        y = y - op @ y

    def theory_y(area):
        return _theory_curve(theory, x, area, quantity, periodic, op)[1]

    area, area_unc = float(area_nm2), None
    if fit_area:
        phi_max = float(np.max(np.abs(flux_quanta(x, area_nm2))))
        grid = area_nm2 * np.linspace(1 - area_range, 1 + area_range,
                                      max(11, int(np.ceil(40 * area_range * phi_max)) + 1))
        a0 = float(grid[int(np.argmin([_linear(theory_y(a), y)[1] for a in grid]))])
        (s0, o0), _ = _linear(theory_y(a0), y)
        res = least_squares(lambda th: th[0] * theory_y(th[2]) + th[1] - y, [s0, o0, a0],
                            x_scale=[abs(s0) or 1.0, abs(o0) or 1.0, a0 * 1e-3],
                            bounds=([-np.inf, -np.inf, grid[0]], [np.inf, np.inf, grid[-1]]),
                            diff_step=[1e-6, 1e-6, 1e-7])
        s, o, area = (float(v) for v in res.x)
        cov = np.linalg.pinv(res.jac.T @ res.jac) * float(res.fun @ res.fun) / max(x.size - 3, 1)
        s_unc, o_unc, area_unc = (float(np.sqrt(max(c, 0))) for c in np.diag(cov))
    else:
        (s, o), rss = _linear(theory_y(area), y)
        design = np.column_stack([theory_y(area), np.ones(x.size)])
        cov = np.linalg.pinv(design.T @ design) * rss / max(x.size - 2, 1)
        s_unc, o_unc = (float(np.sqrt(c)) for c in np.diag(cov))
    phi, y_th = _theory_curve(theory, x, area, quantity, periodic, op)
    return OverlayFit(quantity, float(s), s_unc, float(o), o_unc, area, area_unc,
                      "fitted" if fit_area else area_source, op is not None, x, phi, y, s * y_th + o)
