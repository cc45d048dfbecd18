"""``simsurface compare3d SCENARIO.toml --out DIR``: a 3D wire next to its surface tube."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

from ..errors import InputError


def register(sub) -> None:
    p = sub.add_parser(
        "compare3d", help="the same device as 3D four-band wire and as surface tube, side by side",
        description="Compute a kind = 'bulk_lattice' scenario as a 3D wire and as its equivalent surface tube: "
                    "conductance over flux and energy, k_x = 0 levels, Aharonov-Bohm area and depth. Writes "
                    "comparison.nc, comparison.json and comparison.png to --out.")
    p.add_argument("scenario", help="scenario file (TOML) with [model] kind = 'bulk_lattice'")
    p.add_argument("--out", required=True, metavar="DIR", help="output folder (created if missing)")
    p.add_argument("--engine", choices=("slices", "kwant"), default=None, help="override [model] engine")
    p.add_argument("--workers", type=int, default=1, metavar="N", help="local processes for the 3D wire")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no summary")
    p.set_defaults(func=main)


def main(args: argparse.Namespace) -> int:
    import matplotlib.pyplot as plt

    from ..analysis.bulk_vs_tube import compare_bulk_and_tube, comparison_figure
    from ..io import save_figure_atomic, write_json_atomic, write_netcdf_atomic
    from ..scenario import load_scenario

    if args.workers < 1:
        raise InputError(f"--workers: must be a whole number >= 1 (got {args.workers})")
    scenario = load_scenario(args.scenario)
    if scenario.model.kind != "bulk_lattice":
        raise InputError(f"[model] kind: compare3d needs 'bulk_lattice' (got {scenario.model.kind!r})")
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out: {str(out)!r} exists and is not a folder")
    ds = compare_bulk_and_tube(scenario, engine=args.engine, workers=args.workers, progress=not args.quiet)
    summary = json.loads(ds.attrs["summary_json"])
    out.mkdir(parents=True, exist_ok=True)
    write_netcdf_atomic(ds, out / "comparison.nc")
    write_json_atomic(out / "comparison.json", {"summary": summary, "model": json.loads(ds.attrs["model_json"])})
    fig = comparison_figure(ds, list(scenario.plots.flux_cuts_meV) or None)
    save_figure_atomic(fig, out / "comparison.png")
    plt.close(fig)
    if not args.quiet:
        print(f"wrote {out / 'comparison.nc'}, comparison.json, comparison.png: AB area "
              f"{summary['ab_area_nm2']:.4g} nm2 (depth {summary['ab_depth_nm']:.3g} nm) vs tube contour "
              f"{summary['contour_area_nm2']:.4g} nm2; 3D {summary['bulk_conductance_s']:.1f} s, "
              f"tube {summary['tube_conductance_s']:.1f} s")
    return 0
