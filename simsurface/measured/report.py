"""What an analysis writes: ``analysis.json``, processed curves as CSV, and PNG plots.

Everything is rendered in memory first (figures to PNG bytes) and only then written, each file
atomically, so a failure while computing or plotting leaves the output folder untouched.
"""

from __future__ import annotations

import io as _io
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .. import __version__
from ..io import atomic_path, write_text_atomic
from ..units import FLUX_QUANTUM_WB
from .analysis import DETECTION_SNR, AnalysisOptions, CurveAnalysis, SeriesAnalysis, analyze_curve, area_summary, combine
from .io import ColumnSpec, count_sweeps, read_table
from .outputs import json_text, table_text
from .overlay import QUANTITIES, OverlayFit

SCHEMA = "simsurface.measured.analysis/1"

METHODS = {
    "symmetrization": "two-terminal / one file with both signs: [y(B) + y(-B)]/2 at the measured B >= 0 "
                      "(Onsager; Buttiker, PRL 57, 1761 (1986)); reciprocal four-terminal pair: "
                      "[R_ij,kl(B) + R_kl,ij(B)]/2 (reciprocity R_ij,kl(B) = R_kl,ij(-B), Buttiker 1986)",
    "background": "locally weighted quadratic regression, tricube weights (Cleveland, J. Am. Stat. Assoc. 74, 829 "
                  "(1979), no robustness iterations), window of background_periods expected h/e periods",
    "spectrum": "Lomb-Scargle periodogram on uneven fields (scipy's unnormalized convention, shown as amplitude "
                "(4P/N)^(1/2)); FFT with Hann window on even fields",
    "period": "least-squares fit of h/e and h/2e harmonics with a common frequency",
    "period_uncertainty": "standard deviation over a moving-block bootstrap of the fit residuals (blocks one "
                          "period long; Kunsch, Ann. Stat. 17, 1217 (1989)); period_resolution_T is the "
                          "Rayleigh limit P^2/range, the peak width",
    "detection": f"a harmonic is detected when its amplitude is >= {DETECTION_SNR:g} x the median spectral "
                 "amplitude (noise floor) in the search band",
    "area": "A = (h/e)/period; circle diameter 2 (A/pi)^(1/2); square side A^(1/2); depth d solves the nominal "
            "cross-section's (w - 2d)(t - 2d) = A or pi (w/2 - d)^2 = A",
    "dephasing_model": "A_n(T) = A_n(0) exp(-n P/(2 L_phi(T))), L_phi = L_ref (T/T_ref)^(-p); common practice for "
                       "loops, written from memory (no source pinned); n = 1 h/e, n = 2 h/2e",
}
ASSUMPTIONS = [
    "the oscillation comes from one loop, the surface-state contour, threaded by the axial field",
    "h/e periodicity in B (no Zeeman or orbital-penetration drift of the period across the field range)",
    "the background varies slowly on the scale of the window (several periods); features narrower than "
    "that (the weak-antilocalization cusp) must be excluded with --exclude-below-T",
    "L_phi model: single loop, no thermal averaging, no ensemble averaging along a wire longer than L_phi",
]


@dataclass
class Rendered:
    """Files ready to be written: name -> bytes or text."""

    files: dict[str, bytes | str] = field(default_factory=dict)

    def write(self, out_dir: str | Path) -> list[Path]:
        """Write every file atomically into ``out_dir`` (created when needed); ``analysis.json`` last."""
        out = Path(out_dir)
        written = []
        for name in sorted(self.files, key=lambda n: n == "analysis.json"):
            content = self.files[name]
            if isinstance(content, bytes):
                with atomic_path(out / name) as tmp:
                    tmp.write_bytes(content)
            else:
                write_text_atomic(out / name, content)
            written.append(out / name)
        return written


def stem_of(label: str, taken: set[str]) -> str:
    """File-name-safe, unique stem for a curve label."""
    base = re.sub(r"[^A-Za-z0-9_.\-]+", "_", Path(label).stem) or "curve"
    stem, k = base, 2
    while stem in taken:
        stem, k = f"{base}_{k}", k + 1
    taken.add(stem)
    return stem


# --- JSON ---------------------------------------------------------------------------------------------

def curve_summary(c: CurveAnalysis, options: AnalysisOptions) -> dict[str, Any]:
    he, h2e = c.harmonic(1), c.harmonic(2)
    out = {
        "label": c.label, "file": c.source, "metadata": c.metadata, "quantity": c.quantity, "unit": c.unit,
        "n_points": int(c.field_T.size), "field_min_T": float(c.field_T[0]), "field_max_T": float(c.field_T[-1]),
        "symmetrization": c.symmetrization, "reciprocity_rms": c.reciprocity_rms,
        "dropped_rows": int(c.raw.attrs.get("dropped_rows", 0)), "n_sweeps": count_sweeps(c.raw["sweep"].values),
        "background_window_T": c.window_T, "background_window_periods": c.window_T / c.period_T,
        "background_transfer_he": c.background_transfer,
        "spectrum_method": c.spectrum.attrs["method"], "search_band_per_T": list(c.search_band_per_T),
        "expected_period_T": c.expected_period_T, "expected_period_source": c.expected_source,
        "frequency_per_T": c.frequency_per_T, "frequency_uncertainty_per_T": c.frequency_uncertainty_per_T,
        "period_T": c.period_T, "period_uncertainty_T": c.period_uncertainty_T,
        "period_resolution_T": c.period_resolution_T, "points_per_period": c.points_per_period,
        "n_bootstrap": c.n_bootstrap, "bootstrap_block_points": c.block_points,
        "noise_floor": c.noise_floor,
        "harmonics": {h.label: {"frequency_per_T": h.frequency_per_T, "amplitude": h.amplitude,
                                "amplitude_uncertainty": h.amplitude_uncertainty, "phase_rad": h.phase_rad,
                                "snr": h.snr, "detected": h.detected} for h in c.harmonics},
        "h2e_to_he_ratio": h2e.amplitude / he.amplitude if he.amplitude > 0 else None,
        "notes": c.notes,
    }
    out.update(area_summary(c.period_T, c.period_uncertainty_T, options))
    return out


def series_summary(s: SeriesAnalysis) -> dict[str, Any] | None:
    if s.temperature_K is None:
        return None
    out: dict[str, Any] = {
        "temperatures_K": s.temperature_K, "common_frequency_per_T": s.frequency_per_T,
        "amplitude_he": s.amplitudes[:, 0], "amplitude_he_uncertainty": s.amplitude_uncertainties[:, 0],
        "amplitude_h2e": s.amplitudes[:, 1], "amplitude_h2e_uncertainty": s.amplitude_uncertainties[:, 1],
        "detected_he": s.detected[:, 0], "detected_h2e": s.detected[:, 1], "unit": s.curves[0].unit,
        "loop_perimeter_nm": s.perimeter_nm, "loop_perimeter_source": s.perimeter_source,
        "model": METHODS["dephasing_model"], "fit": None,
    }
    d = s.dephasing
    if d is not None:
        t = s.temperature_K
        out["fit"] = {
            "harmonics_used": [{1: "h/e", 2: "h/2e"}[n] for n in d.harmonics], "n_amplitudes": d.n_points,
            "reference_K": d.reference_K, "lphi_ref_nm": d.lphi_ref_nm,
            "lphi_ref_uncertainty_nm": d.lphi_ref_uncertainty_nm, "exponent": d.exponent,
            "exponent_uncertainty": d.exponent_uncertainty, "exponent_fixed": d.exponent_fixed,
            "amplitude0": dict(zip([{1: "h/e", 2: "h/2e"}[n] for n in d.harmonics], d.amplitude0)),
            "chi2_per_dof": d.chi2_per_dof,
            "lphi_nm": d.lphi_nm(t), "lphi_uncertainty_nm": d.lphi_uncertainty_nm(t),
        }
        for n in d.harmonics:
            k = n - 1
            lp, sg = d.pointwise_lphi_nm(t, s.amplitudes[:, k], s.amplitude_uncertainties[:, k], n)
            key = {1: "he", 2: "h2e"}[n]
            out["fit"][f"pointwise_lphi_{key}_nm"] = np.where(s.detected[:, k], lp, np.nan)
            out["fit"][f"pointwise_lphi_{key}_uncertainty_nm"] = np.where(s.detected[:, k], sg, np.nan)
    return out


def overlay_summary(o: OverlayFit, theory_attrs: dict[str, Any], curve_label: str) -> dict[str, Any]:
    return {
        "curve": curve_label, "theory": theory_attrs.get("source"), "theory_energy_meV": theory_attrs.get("energy_meV"),
        "theory_area_nm2": theory_attrs.get("enclosed_area_nm2"),
        "quantity": o.quantity, "unit": o.unit, "detrended": o.detrended,
        "scale": o.scale, "scale_uncertainty": o.scale_uncertainty,
        "offset": o.offset, "offset_uncertainty": o.offset_uncertainty,
        "area_nm2": o.area_nm2, "area_uncertainty_nm2": o.area_uncertainty_nm2, "area_source": o.area_source,
        "rms_residual": o.rms_residual, "n_points": int(o.field_T.size),
        "uncertainty_note": "from the fit Jacobian with the residual variance; lower bounds when residuals are correlated",
    }


def document(curves: list[CurveAnalysis], series: SeriesAnalysis, options: AnalysisOptions,
             overlay: dict[str, Any] | None, outputs: dict[str, list[str]]) -> dict[str, Any]:
    """The content of ``analysis.json``."""
    top = area_summary(series.period_T, series.period_uncertainty_T, options)
    doc: dict[str, Any] = {
        "schema": SCHEMA, "software": f"simsurface {__version__}",
        "period_T": series.period_T, "period_uncertainty_T": series.period_uncertainty_T,
        "frequency_per_T": series.frequency_per_T,
        **top,
        "h2e_to_he_ratio": curve_summary(curves[0], options)["h2e_to_he_ratio"] if len(curves) == 1 else None,
        "n_curves": len(curves), "period_consistency_chi2_per_dof": series.consistency_chi2_per_dof,
        "synthetic_input": any(bool(c.metadata.get("synthetic")) for c in curves),
        "options": {k: v for k, v in vars(options).items()},
        "methods": METHODS, "assumptions": ASSUMPTIONS,
        "curves": [dict(curve_summary(c, options), outputs=outputs.get(c.label, [])) for c in curves],
        "temperature_series": series_summary(series), "overlay": overlay,
        "notes": series.notes,
    }
    if len(curves) > 1:
        doc["combined_note"] = ("period_T is the inverse-variance weighted mean over curves with a detected h/e "
                                "peak (uncertainty scaled by sqrt(chi2/dof) when they disagree)")
    return doc


# --- CSV -----------------------------------------------------------------------------------------------

def processed_csv(c: CurveAnalysis) -> str:
    """Analysed curve: field, value, background, oscillation, fitted harmonics model."""
    q = {"conductance": "conductance_e2h", "resistance": "resistance_ohm"}[c.quantity]
    comments = [f"processed curve of {c.source} ({c.label}) by simsurface analyze",
                f"symmetrization: {c.symmetrization}",
                f"background: local quadratic, window {c.window_T:.4g} T",
                f"period_T = {c.period_T:.6g} +- {c.period_uncertainty_T:.2g}"]
    if c.metadata.get("synthetic"):
        comments.insert(0, "SYNTHETIC input data")
    return table_text({"field_T": c.field_T, q: c.values, f"background_{q}": c.background,
                       f"oscillation_{q}": c.oscillation, f"harmonic_fit_{q}": c.fit_model}, comments)


def overlay_csv(o: OverlayFit, theory_source: str) -> str:
    name = QUANTITIES[o.quantity][0]
    comments = [f"overlay of {theory_source}: theory scaled {o.scale:.6g} and offset {o.offset:.6g} ({o.unit}), "
                f"area {o.area_nm2:.6g} nm^2 ({o.area_source}){', detrended' if o.detrended else ''}"]
    return table_text({"field_T": o.field_T, "flux_quanta": o.flux_quanta, f"measured_{name}": o.measured,
                       f"theory_{name}": o.theory, f"residual_{name}": o.residual}, comments)


# --- plots ---------------------------------------------------------------------------------------------

def _png(fig) -> bytes:
    import matplotlib.pyplot as plt

    buf = _io.BytesIO()
    try:
        fig.savefig(buf, format="png", dpi=110)
    finally:
        plt.close(fig)
    return buf.getvalue()


def _title(c: CurveAnalysis) -> str:
    bits = [Path(c.source).name]
    t = c.metadata.get("temperature_K")
    if isinstance(t, (int, float)):
        bits.append(f"T = {t:g} K")
    if c.metadata.get("synthetic"):
        bits.append("SYNTHETIC")
    return ", ".join(bits)


def _qlabel(c: CurveAnalysis) -> str:
    return {"conductance": "G (e$^2$/h)", "resistance": "R (Ω)"}[c.quantity]


def plot_raw(c: CurveAnalysis) -> bytes:
    import matplotlib.pyplot as plt

    ds = c.raw
    q = ds.attrs["quantity"]
    var = {"resistance": "resistance_ohm", "conductance": "conductance_e2h"}[q]
    fig, ax = plt.subplots(figsize=(7, 4), layout="constrained")
    b, y, sweep = ds["field_T"].values, ds[var].values, ds["sweep"].values
    for d, name, col in ((1, "field rising", "C0"), (-1, "field falling", "C3")):
        m = sweep == d
        if m.any():
            ax.plot(b[m], y[m], ".", ms=2, color=col, label=name)
    ax.set_xlabel("B (T)")
    ax.set_ylabel({"resistance": "R (Ω)", "conductance": "G (e$^2$/h)"}[q])
    ax.set_title(f"raw: {_title(c)}")
    ax.legend(fontsize=8)
    return _png(fig)


def plot_oscillation(c: CurveAnalysis) -> bytes:
    import matplotlib.pyplot as plt

    fig, (a1, a2) = plt.subplots(2, 1, figsize=(7, 6), sharex=True, layout="constrained")
    how = "not symmetrized" if c.symmetrization == "none" else "symmetrized: " + c.symmetrization.split(" [")[0]
    a1.plot(c.field_T, c.values, ".", ms=2, label=f"analysed ({how})")
    a1.plot(c.field_T, c.background, "-", color="k", lw=1,
            label=f"background (window {c.window_T:.3g} T = {c.window_T / c.period_T:.2g} periods)")
    a1.set_ylabel(_qlabel(c))
    a1.legend(fontsize=8)
    a1.set_title(f"background subtraction: {_title(c)}")
    a2.plot(c.field_T, c.oscillation, ".", ms=2, label="data − background")
    a2.plot(c.field_T, c.fit_model, "-", color="C1", lw=1, label="h/e + h/2e fit")
    a2.set_xlabel("B (T)")
    a2.set_ylabel("Δ" + _qlabel(c))
    a2.legend(fontsize=8)
    area_m2 = c.frequency_per_T * FLUX_QUANTUM_WB
    sec = a2.secondary_xaxis("top", functions=(lambda b: b * area_m2 / FLUX_QUANTUM_WB,
                                               lambda p: p * FLUX_QUANTUM_WB / area_m2))
    sec.set_xlabel("Φ/(h/e) with the fitted area")
    return _png(fig)


def plot_spectrum(c: CurveAnalysis) -> bytes:
    import matplotlib.pyplot as plt

    f = c.spectrum["frequency_per_T"].values
    a = c.spectrum.values
    fig, ax = plt.subplots(figsize=(7, 4), layout="constrained")
    ax.plot(f, a, "-", lw=1, color="k")
    ax.axvspan(*c.search_band_per_T, color="0.9", zorder=0, label="h/e search band")
    ax.axhline(c.noise_floor, ls=":", color="0.4", lw=1, label="noise floor (median)")
    ax.axvline(c.frequency_per_T, color="C0", label=f"h/e found: {c.period_T:.4g} T")
    ax.axvline(2 * c.frequency_per_T, color="C3", label="h/2e found (2f)")
    if c.expected_period_T is not None:
        fe = 1 / c.expected_period_T
        ax.axvline(fe, color="C0", ls="--", label=f"h/e expected: {c.expected_period_T:.4g} T")
        ax.axvline(2 * fe, color="C3", ls="--", label="h/2e expected")
    ax.set_xlim(0, min(f[-1], 3.5 * c.frequency_per_T, max(3.5 / c.expected_period_T if c.expected_period_T else 0,
                                                            2.5 * c.frequency_per_T)))
    ax.set_xlabel("frequency (1/T)")
    ax.set_ylabel("amplitude, " + _qlabel(c))
    ax.set_title(f"spectrum ({c.spectrum.attrs['method']}): {_title(c)}")
    ax.legend(fontsize=8)
    sec = ax.secondary_xaxis("top", functions=(lambda x: x * FLUX_QUANTUM_WB * 1e18,
                                               lambda s: s / (FLUX_QUANTUM_WB * 1e18)))
    sec.set_xlabel("area for h/e at this frequency (nm$^2$)")
    return _png(fig)


def plot_lphi(s: SeriesAnalysis) -> bytes:
    import matplotlib.pyplot as plt

    d = s.dephasing
    t = s.temperature_K
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(10, 4), layout="constrained")
    tt = np.geomspace(t.min() * 0.8, t.max() * 1.25, 100)
    for k, (n, name, col) in enumerate(((1, "h/e", "C0"), (2, "h/2e", "C3"))):
        det = s.detected[:, k]
        a1.errorbar(t[det], s.amplitudes[det, k], s.amplitude_uncertainties[det, k], fmt="o", color=col, label=name)
        if (~det).any():
            a1.plot(t[~det], s.amplitudes[~det, k], "o", mfc="none", color=col, label=f"{name} not detected")
        if d is not None and n in d.harmonics:
            a1.plot(tt, d.amplitude(tt, n), "-", color=col, lw=1)
            lp, sg = d.pointwise_lphi_nm(t, s.amplitudes[:, k], s.amplitude_uncertainties[:, k], n)
            a2.errorbar(t[det], lp[det], sg[det], fmt="o", color=col, label=f"from {name}")
    a1.set_yscale("log")
    a1.set_xlabel("T (K)")
    a1.set_ylabel("amplitude, " + _qlabel(s.curves[0]))
    a1.legend(fontsize=8)
    a1.set_title("harmonic amplitudes")
    if d is not None:
        lp = d.lphi_nm(tt)
        sg = d.lphi_uncertainty_nm(tt)
        pe = "fixed" if d.exponent_fixed else f"± {d.exponent_uncertainty:.2g}"
        a2.plot(tt, lp, "-", color="k", lw=1,
                label=f"L_phi = {d.lphi_ref_nm:.3g} nm (T/{d.reference_K:g} K)^-{d.exponent:.2g} ({pe})")
        a2.fill_between(tt, lp - sg, lp + sg, color="0.85")
        from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

        a2.set_xscale("log")
        a2.set_yscale("log")
        for axis in (a2.xaxis, a2.yaxis):  # plain numbers at 1, 2, 5 x 10^k
            axis.set_major_locator(LogLocator(subs=(1.0, 2.0, 5.0)))
            axis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
            axis.set_minor_formatter(NullFormatter())
        a2.legend(fontsize=8)
    a2.set_xlabel("T (K)")
    a2.set_ylabel("L_phi (nm)")
    a2.set_title(f"coherence length (loop perimeter {s.perimeter_nm or float('nan'):.3g} nm)")
    return _png(fig)


def plot_overlay(o: OverlayFit, title: str) -> bytes:
    import matplotlib.pyplot as plt

    ylab = {"G": "G (e$^2$/h)", "R": "R (Ω)", "dR/R": "ΔR/R"}[o.quantity]
    fig, (a1, a2) = plt.subplots(2, 1, figsize=(7, 6), sharex=True, height_ratios=(3, 1), layout="constrained")
    a1.plot(o.field_T, o.measured, ".", ms=2, label="measured" + (" (detrended)" if o.detrended else ""))
    a1.plot(o.field_T, o.theory, "-", lw=1, color="C1",
            label=f"theory × {o.scale:.3g} + {o.offset:.3g}, A = {o.area_nm2:.4g} nm$^2$ ({o.area_source})")
    a1.set_ylabel(ylab)
    a1.legend(fontsize=8)
    a1.set_title(f"overlay: {title}")
    a2.plot(o.field_T, o.residual, ".", ms=2, color="k")
    a2.axhline(0, color="0.5", lw=1)
    a2.set_xlabel("B (T)")
    a2.set_ylabel("residual")
    return _png(fig)


def render(curves: list[CurveAnalysis], series: SeriesAnalysis, options: AnalysisOptions,
           overlay: tuple[OverlayFit, dict[str, Any], CurveAnalysis] | None = None) -> Rendered:
    """All output files of an analysis, in memory."""
    out = Rendered()
    taken: set[str] = set()
    per_curve: dict[str, list[str]] = {}
    for c in curves:
        stem = stem_of(c.label, taken)
        names = {f"raw_{stem}.png": plot_raw(c), f"oscillation_{stem}.png": plot_oscillation(c),
                 f"spectrum_{stem}.png": plot_spectrum(c), f"processed_{stem}.csv": processed_csv(c)}
        out.files.update(names)
        per_curve[c.label] = list(names)
    if series.dephasing is not None or series.temperature_K is not None:
        out.files["lphi.png"] = plot_lphi(series)
    ov = None
    if overlay is not None:
        o, attrs, curve = overlay
        out.files["overlay.png"] = plot_overlay(o, f"{Path(attrs.get('source', '')).name} on {_title(curve)}")
        out.files["overlay.csv"] = overlay_csv(o, str(attrs.get("source")))
        ov = overlay_summary(o, attrs, curve.label)
    doc = document(curves, series, options, ov, per_curve)
    doc["outputs"] = sorted([*out.files, "analysis.json"])
    out.files["analysis.json"] = json_text(doc)
    return out


def analyze_files(paths: list[str | Path], options: AnalysisOptions = AnalysisOptions(),
                  columns: ColumnSpec | None = None, temperatures_K: list[float] | None = None) -> dict[str, Any]:
    """Analyse data files and return the ``analysis.json`` document without writing anything.

    A convenience for scripts and round-trip tests; the command line does the same and also writes the
    files and plots. ``temperatures_K`` (one per file) overrides the files' ``temperature_K`` metadata.
    """
    curves = []
    for k, path in enumerate(paths):
        meta = {"temperature_K": temperatures_K[k]} if temperatures_K is not None else None
        curves.append(analyze_curve(read_table(path, columns, meta), options, label=str(path)))
    return document(curves, combine(curves, options), options, None, {})
