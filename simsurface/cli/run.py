"""``simsurface run SCENARIO.toml --out DIR``: flux × Fermi-energy sweep, results.nc and figures."""

from __future__ import annotations

import argparse
import time
from pathlib import Path

import matplotlib.pyplot as plt

from ..errors import InputError
from ..io import save_figure_atomic
from ..models.registry import AnalyticTube
from ..report import plots
from ..scenario import load_scenario, scenario_text
from ..sweeps import run_scenario
from ..sweeps.executor import default_workers


def register(sub) -> None:
    p = sub.add_parser("run", help="run a scenario's sweep: results.nc and figures in --out",
                       description="Run the flux x Fermi-energy (x disorder realization) sweep of a scenario.")
    add_compute_options(p, "run")
    p.add_argument("--engine", choices=("slices", "kwant"), default=None,
                   help="override [model] engine")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no summary")
    p.set_defaults(func=main)


def add_compute_options(p: argparse.ArgumentParser, what: str) -> None:
    """Scenario, --out, --workers, --cluster and --resume: shared by the commands that run sweeps."""
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--out", required=True, metavar="DIR", help="output folder (created if missing)")
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help=f"local worker processes (default: all cores, here {default_workers()})")
    p.add_argument("--cluster", metavar="ADDRESS", default=None,
                   help="send the tasks to a running Dask scheduler, e.g. tcp://10.0.0.5:8786")
    p.add_argument("--resume", action="store_true",
                   help=f"continue an interrupted {what} in the same --out without recomputing finished tasks")
    p.add_argument("--allow-oversize", action="store_true",
                   help="run even when the estimated memory, disk or time does not fit this machine")


def checked_inputs(args: argparse.Namespace):
    """The validated scenario and the output folder of :func:`add_compute_options` arguments."""
    if args.workers is not None and args.workers < 1:
        raise InputError(f"--workers: must be a whole number >= 1 (got {args.workers})")
    scenario = load_scenario(args.scenario)
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out: {str(out)!r} exists and is not a folder")
    return scenario, out


def main(args: argparse.Namespace) -> int:
    scenario, out = checked_inputs(args)
    text = scenario_text(args.scenario)
    started = time.perf_counter()
    if scenario.study is not None:
        return _run_study(scenario, text, out, args, started)
    ds = run_scenario(scenario, out, scenario_text=text, workers=args.workers, cluster=args.cluster,
                      resume=args.resume, progress=not args.quiet, engine=args.engine)
    write_sweep_figures(scenario, ds, out)
    if ds.sizes["realization"] > 1:
        write_ensemble_figure(scenario, ds, out)
    if not args.quiet:
        elapsed = time.perf_counter() - started
        model = ds.attrs["model"]
        print(f"wrote {out / 'results.nc'} and figures ({model}, {ds.sizes['flux']} flux x "
              f"{ds.sizes['energy']} energies x {ds.sizes['realization']} realizations, {elapsed:.1f} s)")
    return 0


def write_sweep_figures(scenario, ds, out: Path) -> None:
    """G versus flux at chosen energies, the G(E, Φ) map, subbands versus flux."""
    import json

    cuts = list(scenario.plots.flux_cuts_meV) or plots.default_cut_energies(ds.energy.values)
    figures = {"conductance_vs_flux.png": plots.flux_cuts_figure(ds, cuts),
               "conductance_map.png": plots.conductance_map_figure(ds)}
    desc = json.loads(ds.attrs["model_json"])
    surface = desc.get("surface")
    if surface in ("topological", "trivial"):
        from ..models.registry import build_model

        model = build_model(scenario)
        lattice = None
        if not isinstance(model, AnalyticTube) and hasattr(model, "lattice_subband_bottoms_meV"):
            lattice = model.lattice_subband_bottoms_meV(ds.flux.values)
        scale = desc.get("hbar_v_meV_nm") if surface == "topological" else desc.get("mass_ratio")
        figures["subbands_vs_flux.png"] = plots.subbands_figure(
            surface, desc["perimeter_nm"], scale, ds.flux.values,
            (float(ds.energy.min()), float(ds.energy.max())), lattice, desc.get("validity_limit_meV"))
    for name, fig in figures.items():
        save_figure_atomic(fig, out / name)
        plt.close(fig)


def write_ensemble_figure(scenario, ds, out: Path) -> None:
    """Mean, percentile band and sample curves of G versus flux at the cut energies."""
    from ..report import ensembles

    cuts = list(scenario.plots.flux_cuts_meV) or plots.default_cut_energies(ds.energy.values)
    fig = ensembles.ensemble_cuts_figure(ds, cuts)
    save_figure_atomic(fig, out / "conductance_ensemble.png")
    plt.close(fig)


def _run_study(scenario, text: str, out: Path, args: argparse.Namespace, started: float) -> int:
    """A scenario with a [study] table: its sweeps, study.nc, study.json and the study figure."""
    from ..report import ensembles
    from ..studies import SUMMARY_FILE, run_study

    ds = run_study(scenario, out, scenario_text=text, workers=args.workers, cluster=args.cluster,
                   resume=args.resume, progress=not args.quiet, engine=args.engine)
    if scenario.study.kind == "lengths":
        fig = ensembles.lengths_figure(ds)
    else:
        fig = ensembles.tolerance_figure(ds, list(scenario.plots.flux_cuts_meV) or None)
    paths = ensembles.save_print_figure(fig, out / f"study_{scenario.study.kind}")
    plt.close(fig)
    if not args.quiet:
        print(f"wrote {out / 'study.nc'}, {out / SUMMARY_FILE}, {', '.join(str(p) for p in paths)} "
              f"({scenario.study.kind} study, {time.perf_counter() - started:.1f} s)")
    return 0
