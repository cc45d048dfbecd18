"""``simsurface analyze``: period, enclosed area, coherence length and theory overlay of measured curves."""

from __future__ import annotations

import argparse
from dataclasses import fields
from pathlib import Path

from ..errors import InputError
from ..measured import io
from ..measured.analysis import AnalysisOptions, analyze_curve, area_summary, combine, to_quantity
from ..measured.overlay import fit_overlay, measured_as, read_theory
from ..measured.report import render
from ..units import area_from_period_nm2


def register(sub) -> None:
    p = sub.add_parser(
        "analyze", help="h/e period, enclosed area, L_phi(T) and theory overlay of measured R(B) or G(B) files",
        description=(
            "Analyse measured magnetotransport along the wire axis: symmetrize, subtract a smooth background, "
            "find the h/e and h/2e peaks, report the period with its uncertainty, the enclosed area and the "
            "surface-state depth; for a temperature series fit L_phi(T); optionally lay a simsurface theory "
            "curve over the data. Writes DIR/analysis.json, CSV files and PNG plots."))
    p.add_argument("data", nargs="*", metavar="DATA", help="delimited text files (one curve each)")
    p.add_argument("--out", required=True, metavar="DIR", help="output folder (created when needed)")
    p.add_argument("--manifest", metavar="TOML", help="series manifest: [sample], [columns], [[file]] tables "
                                                      "(instead of DATA)")
    g = p.add_argument_group("columns (when the header does not say; name or 1-based index)")
    for name, what in (("field", "T, mT or G"), ("signal", "resistance: ohm, kohm; conductance: S, uS, e2/h"),
                       ("voltage", "V, mV, uV, nV"), ("current", "A, mA, uA, nA, pA")):
        g.add_argument(f"--{name}-column", metavar="COL")
        g.add_argument(f"--{name}-unit", metavar="UNIT", help=what)
    g = p.add_argument_group("metadata")
    g.add_argument("--temperature-K", metavar="T1,T2,...",
                   help="temperature of each DATA file, comma-separated, in order (overrides '# temperature_K = ...')")
    g.add_argument("--reciprocal", metavar="FILE", help="four-terminal partner R_kl,ij of a single DATA file R_ij,kl")
    g = p.add_argument_group("sample (nominal cross-section)")
    g.add_argument("--shape", choices=("circle", "rectangle"))
    g.add_argument("--width-nm", type=float, help="width, or diameter of a circle")
    g.add_argument("--thickness-nm", type=float)
    g.add_argument("--depth-nm", type=float, help="surface-state depth used for the expected period (default 0)")
    g.add_argument("--size-uncertainty-nm", type=float,
                   help="1-sigma error of the nominal width and thickness, propagated to the depth (default 0)")
    g.add_argument("--perimeter-nm", type=float, help="loop circumference for the L_phi model (default: from the "
                                                      "nominal section at the fitted depth, else a circle)")
    g = p.add_argument_group("analysis")
    g.add_argument("--quantity", choices=("conductance", "resistance"),
                   help="analyse G in e^2/h (default) or R in ohm")
    g.add_argument("--no-symmetrize", action="store_true", help="keep the data as measured")
    g.add_argument("--expected-period-T", type=float, help="expected h/e period (default: from the nominal section)")
    g.add_argument("--background-periods", type=float, help="background window in expected h/e periods (default 5)")
    g.add_argument("--background-degree", type=int, help="degree of the local background polynomial (default 2)")
    g.add_argument("--exclude-below-T", type=float, help="drop |B| below this field (weak-antilocalization cusp)")
    g.add_argument("--spectrum", choices=("auto", "fft", "lombscargle"), help="default auto: FFT on even steps")
    g.add_argument("--bootstrap", type=int, dest="n_bootstrap", help="bootstrap resamples (default 200)")
    g.add_argument("--seed", type=int, help="seed of the bootstrap (default 0)")
    g.add_argument("--lphi-exponent", type=float, help="fix p in L_phi ∝ T^-p (default: fitted)")
    g = p.add_argument_group("theory overlay")
    g.add_argument("--theory", metavar="FILE", help="results.nc or a plan's curves CSV")
    g.add_argument("--theory-energy-meV", type=float, help="energy to take from a results.nc")
    g.add_argument("--overlay-quantity", choices=("G", "R", "dR/R"),
                   help="compare as G (e^2/h), R (ohm) or dR/R (default: G, or R with --quantity resistance)")
    g.add_argument("--overlay-area", default="fitted", metavar="SOURCE",
                   help="area mapping flux to field: 'fitted' (from the period, default), 'theory' (the file's), "
                        "'fit' (fitted in the overlay) or a number in nm^2")
    g.add_argument("--periodic-theory", action="store_true", help="repeat the theory with period h/e")
    g.add_argument("--overlay-detrend", action="store_true", help="remove the background from data and theory first")
    p.set_defaults(func=run)


def _options(args: argparse.Namespace, sample: dict) -> AnalysisOptions:
    """Analysis options: defaults, then the manifest's [sample], then the command line."""
    values = {}
    for key in ("shape", "width_nm", "thickness_nm", "depth_nm", "size_uncertainty_nm", "expected_period_T",
                "perimeter_nm"):
        if key in sample:
            values[key] = sample[key]
    for f in fields(AnalysisOptions):
        v = getattr(args, f.name, None)
        if v is not None:
            values[f.name] = v
    if args.no_symmetrize:
        values["symmetrize"] = False
    return AnalysisOptions(**values)


def _inputs(args: argparse.Namespace) -> io.Series:
    cli_columns = io.ColumnSpec(field=args.field_column, field_unit=args.field_unit, signal=args.signal_column,
                                signal_unit=args.signal_unit, voltage=args.voltage_column,
                                voltage_unit=args.voltage_unit, current=args.current_column,
                                current_unit=args.current_unit)
    if args.manifest and args.data:
        raise InputError("DATA: give either DATA files or --manifest, not both")
    if args.manifest:
        series = io.read_manifest(args.manifest)
        series = io.Series(series.entries, series.sample, series.columns.merged(cli_columns))
        if args.reciprocal:
            raise InputError("--reciprocal: with --manifest, name partners in the manifest ([[file]] reciprocal = ...)")
    elif args.data:
        rec = Path(args.reciprocal) if args.reciprocal else None
        if rec is not None and len(args.data) != 1:
            raise InputError("--reciprocal: pairs with exactly one DATA file; use a manifest for several pairs")
        series = io.Series(tuple(io.SeriesEntry(Path(d), {}, rec) for d in args.data), {}, cli_columns)
    else:
        raise InputError("DATA: no input; give one or more data files or --manifest")
    if args.temperature_K is not None:
        try:
            temps = [float(t) for t in args.temperature_K.split(",")]
        except ValueError:
            raise InputError(f"--temperature-K: {args.temperature_K!r} is not a comma-separated list of numbers "
                             "(e.g. 1.6,3,6)") from None
        if len(temps) != len(series.entries) or any(not t > 0 for t in temps):
            raise InputError(f"--temperature-K: {len(temps)} values for {len(series.entries)} files; "
                             "give one temperature > 0 K per file, in order")
        series = io.Series(tuple(io.SeriesEntry(e.path, {**e.metadata, "temperature_K": t}, e.reciprocal)
                                 for e, t in zip(series.entries, temps)), series.sample, series.columns)
    return series


def _overlay_area(args, curve_area: float, theory) -> tuple[float, str, bool]:
    choice = args.overlay_area.strip().lower()
    if choice == "fitted":
        return curve_area, "analysed period", False
    if choice == "fit":
        return curve_area, "fitted", True
    if choice == "theory":
        a = float(theory.attrs.get("enclosed_area_nm2", float("nan")))
        if not a > 0:
            raise InputError("--overlay-area theory: the theory file states no enclosed area")
        return a, "theory file", False
    try:
        return float(choice), "--overlay-area", False
    except ValueError:
        raise InputError(f"--overlay-area: {args.overlay_area!r} is not allowed; use fitted, theory, fit or a number "
                         "in nm^2") from None


def run(args: argparse.Namespace) -> int:
    series = _inputs(args)
    options = _options(args, series.sample)
    theory = read_theory(args.theory, args.theory_energy_meV) if args.theory else None
    datasets = []
    for e in series.entries:
        ds = io.read_table(e.path, series.columns, e.metadata)
        partner = io.read_table(e.reciprocal, series.columns) if e.reciprocal else None
        datasets.append((e, ds, partner))
    curves = [analyze_curve(ds, options, partner, label=str(e.path)) for e, ds, partner in datasets]
    combined = combine(curves, options)

    overlay = None
    if theory is not None:
        c = curves[0]
        quantity = args.overlay_quantity or ("R" if options.quantity == "resistance" else "G")
        area, source, fit_area = _overlay_area(args, float(area_from_period_nm2(c.period_T)), theory)
        g = to_quantity(c.values, c.quantity, "conductance")
        o = fit_overlay(theory, c.field_T, measured_as(c.field_T, g, quantity), quantity, area,
                        area_source=source, fit_area=fit_area, periodic=args.periodic_theory,
                        detrend_window_T=c.window_T if args.overlay_detrend else None,
                        background_degree=options.background_degree)
        overlay = (o, dict(theory.attrs), c)

    rendered = render(curves, combined, options, overlay)
    written = rendered.write(args.out)
    _print_summary(curves, combined, options, overlay, written)
    return 0


def _print_summary(curves, combined, options, overlay, written) -> None:
    for c in curves:
        he, h2e = c.harmonic(1), c.harmonic(2)
        flag = "" if he.detected else "  (h/e NOT detected)"
        print(f"{c.label}: period {c.period_T:.5g} ± {c.period_uncertainty_T:.2g} T, h/e {he.amplitude:.3g} "
              f"(S/N {he.snr:.3g}), h/2e {h2e.amplitude:.3g} (S/N {h2e.snr:.3g}) {c.unit}{flag}")
        for note in c.notes:
            print(f"  note: {note}")
    a = area_summary(combined.period_T, combined.period_uncertainty_T, options)
    print(f"period {combined.period_T:.5g} ± {combined.period_uncertainty_T:.2g} T -> area {a['area_nm2']:.5g} ± "
          f"{a['area_uncertainty_nm2']:.2g} nm^2 (square side {a['square_side_nm']:.4g} nm, circle diameter "
          f"{a['circle_diameter_nm']:.4g} nm)" + (f", depth {a['depth_nm']:.3g} ± {a['depth_uncertainty_nm']:.2g} nm"
                                                  if "depth_nm" in a else ""))
    d = combined.dephasing
    if d is not None:
        p = f"{d.exponent:.3g} (fixed)" if d.exponent_fixed else f"{d.exponent:.3g} ± {d.exponent_uncertainty:.2g}"
        print(f"L_phi({d.reference_K:g} K) = {d.lphi_ref_nm:.4g} ± {d.lphi_ref_uncertainty_nm:.2g} nm, exponent p = {p}")
    for note in combined.notes:
        print(f"note: {note}")
    if overlay is not None:
        o = overlay[0]
        print(f"overlay ({o.quantity}): scale {o.scale:.4g}, offset {o.offset:.4g} {o.unit}, area {o.area_nm2:.5g} nm^2 "
              f"({o.area_source}), rms residual {o.rms_residual:.3g}")
    print(f"wrote {len(written)} files to {written[0].parent if written else '?'}")
