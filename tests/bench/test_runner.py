"""The benchmark API: workload registry, a tiny run with both engines, the memory probe."""

import numpy as np
import pytest

from simsurface.errors import InputError
from simsurface import bench as benchmark
from simsurface.bench.tube_workloads import tube_case


def test_registry_holds_the_reference_workload_of_the_stated_size():
    case = benchmark.get_workload("tube-reference").build(n_points=2)
    chain = case.make_chain(0)
    # at least 80 sites around (2 orbitals each) and 400 along
    assert chain.size == 160 and chain.n_slices == 400
    assert len(benchmark.get_workload("tube-reference").build().point_labels) == 21


def test_unknown_workload_is_an_input_error_naming_the_known_ones():
    with pytest.raises(InputError, match="tube-reference"):
        benchmark.get_workload("no-such-workload")


def test_registered_workload_is_run_by_name():
    quick = benchmark.WORKLOADS["tube-quick"]
    benchmark.register_workload(benchmark.Workload(
        "tiny-test", "tiny tube", lambda n_slices=None, n_points=None: tube_case(
            10, n_slices or 12, n_points or 2, energy_meV=25.0, anderson_width_meV=20.0, perimeter_nm=60.0),
        scaling_slices=(6, 12)))
    try:
        res = benchmark.run_benchmark("tiny-test", memory=False)
    finally:
        benchmark.WORKLOADS.pop("tiny-test")
    assert quick is benchmark.WORKLOADS["tube-quick"]
    assert len(res.points) == 2 and [n for n, _ in res.scaling] == [6, 12]
    assert res.max_abs_dev < 1e-8
    assert max(p.transmission_kwant for p in res.points) > 0.1
    assert res.speedup > 0 and res.kwant_solver


def test_memory_probe_reports_chain_solver_and_process_memory():
    m = benchmark.memory_in_subprocess("tube-quick", 20)
    assert m["n_slices"] == 20
    assert 0 < m["chain_MB"] < m["process_peak_rss_MB"]
    assert m["solver_peak_MB"] > 0
