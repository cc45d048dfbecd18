"""``simsurface plan SCENARIO.toml --out DIR``: what a proposed device will show (see docs/plan.md)."""

from __future__ import annotations

import argparse
import shutil
import sys
import time

from .run import add_compute_options, checked_inputs

WORK_DIR = ".plan-work"


def register(sub) -> None:
    p = sub.add_parser("plan", help="predict h/e and h/2e oscillations of a proposed device: plan.json, reports, "
                                    "theory curves in --out",
                       description="Simulate an ensemble of the device described by the scenario's [plan] table "
                                   "and report periods, amplitudes, the dominant harmonic, its phase and a verdict.")
    add_compute_options(p, "plan")
    p.add_argument("--no-gate-map", action="store_true", help="skip the gate map figure")
    p.add_argument("--quiet", action="store_true", help="no progress bars, no summary")
    p.set_defaults(func=main)


def main(args: argparse.Namespace) -> int:
    from ..analysis.plan import gate_maps, prepare_plan, run_plan
    from ..report.plan_report import write_plan

    scenario, out = checked_inputs(args)
    setup = prepare_plan(scenario)
    say = (lambda msg: None) if args.quiet else (lambda msg: print(f"plan: {msg}", file=sys.stderr, flush=True))
    say(f"h/e period {setup.period_he_T:.4g} T, h/2e period {setup.period_h2e_T:.4g} T; "
        f"L_phi = {setup.coherence_length_nm:.4g} nm -> {setup.n_sections} section(s) of "
        f"{setup.section_length_nm:.4g} nm; {setup.plan.devices} devices; "
        f"{setup.cost_units()} chain solves (one energy each)")
    for note in setup.notes:
        say(f"note: {note}")
    started = time.perf_counter()
    work = out / WORK_DIR
    result = run_plan(setup, work, workers=args.workers, cluster=args.cluster, resume=args.resume,
                      progress=not args.quiet, log=say)
    maps = None if args.no_gate_map or not scenario.plan.gate_map else gate_maps(setup)
    write_plan(result, maps, out)
    shutil.rmtree(work, ignore_errors=True)
    if not args.quiet:
        s = result.summary
        print(f"verdict: {s['verdict']} (dominant {s['dominant_harmonic']}, confidence "
              f"{100 * s['dominance']['confidence']:.0f} %); h/e period {s['period_he_T']:.4g} T; "
              f"wrote {out / 'plan.json'}, plan.md, plan.html, figures and theory curves "
              f"({time.perf_counter() - started:.1f} s)")
    return 0
