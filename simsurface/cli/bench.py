"""``simsurface bench``: time the slice engine against kwant on a named workload."""

from __future__ import annotations

import argparse
import os

from .. import bench as benchmark
from ..errors import InputError


def register(sub) -> None:
    p = sub.add_parser("bench", help="benchmark the slice engine against kwant (speed and agreement)",
                       description="Solve a workload with both engines in one run and print per-point "
                                   "times, the speed ratio, the largest deviation, time and memory versus "
                                   "length. The last line reads 'speedup_vs_kwant=<ratio> max_abs_dev=<dev> "
                                   "batched_speedup_vs_kwant=<ratio> batched_max_abs_dev=<dev>'.")
    p.add_argument("--workload", default="tube-reference",
                   help="named workload (default tube-reference; see --list)")
    p.add_argument("--quick", action="store_true", help="use the small 'tube-quick' workload")
    p.add_argument("--points", type=int, default=None, metavar="K",
                   help="number of points (flux values) instead of the workload's default")
    p.add_argument("--no-scaling", action="store_true", help="skip the time-versus-length table")
    p.add_argument("--no-memory", action="store_true", help="skip the memory-versus-length table")
    p.add_argument("--list", action="store_true", help="list the workloads and exit")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    if args.list:
        for w in benchmark.WORKLOADS.values():
            print(f"{w.name}: {w.summary}")
        return 0
    if args.points is not None and args.points < 1:
        raise InputError(f"--points: must be a positive integer (got {args.points})")
    name = "tube-quick" if args.quick else args.workload
    if name not in benchmark.WORKLOADS:
        raise InputError(f"--workload: {name!r} is not allowed; use one of {', '.join(benchmark.WORKLOADS)}")
    case = benchmark.get_workload(name).build(n_points=args.points)
    print(f"workload {name}: {case.description}")
    print("both engines: one process, BLAS pinned to 1 thread (threadpoolctl); per-point time = build the "
          "chain from the model + solve; kwant system finalized once, values passed through params")
    load_start = _load()
    print(benchmark.POINT_HEADER)
    res = benchmark.run_benchmark(name, n_points=args.points, scaling=not args.no_scaling,
                                  memory=not args.no_memory,
                                  report=lambda line: print(line, flush=True))
    print(f"machine: {os.cpu_count()} cores; 1-min load average at start {load_start}, at end {_load()} "
          "(other processes share the CPU; both engines see the same load, point by point)")
    print(f"kwant solver: {res.kwant_solver}; kwant system build (once, not counted per point): "
          f"{res.kwant_build_s:.2f} s")
    print(f"per point (mean of {len(res.points)}): slices {res.mean_slices_s:.4f} s, kwant {res.mean_kwant_s:.4f} s")
    print(f"batched engine (all {len(res.points)} points as stacks, build + solve, mean of a pass before and one after the per-point loop): "
          f"{res.batched_s:.4f} s per point, max_abs_dev {res.batched_max_abs_dev:.2e}")
    print(f"ratios side by side: kwant/slices {res.speedup:.2f}, kwant/batched {res.batched_speedup:.2f}, "
          f"slices/batched {res.mean_slices_s / res.batched_s:.2f}")
    if res.scaling:
        print("time versus length (slice engine, mean of 3 points):")
        print(f"  {'n_slices':>8s}  {'s_per_point':>11s}  {'ms_per_slice':>12s}")
        for n_slices, sec in res.scaling:
            print(f"  {n_slices:8d}  {sec:11.4f}  {1e3 * sec / n_slices:12.4f}")
    if res.memory:
        print("memory versus length (slice engine, fresh process, one point):")
        print(f"  {'n_slices':>8s}  {'chain_MB':>8s}  {'solver_peak_MB':>14s}  {'process_peak_rss_MB':>19s}")
        for m in res.memory:
            print(f"  {m['n_slices']:8d}  {m['chain_MB']:8.2f}  {m['solver_peak_MB']:14.2f}  "
                  f"{m['process_peak_rss_MB']:19.1f}")
    print(f"speedup_vs_kwant={res.speedup:.2f} max_abs_dev={res.max_abs_dev:.2e} "
          f"batched_speedup_vs_kwant={res.batched_speedup:.2f} batched_max_abs_dev={res.batched_max_abs_dev:.2e}")
    return 0


def _load() -> str:
    try:
        return f"{os.getloadavg()[0]:.1f}"
    except OSError:
        return "n/a"
