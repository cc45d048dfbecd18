"""Resource estimates: sizes from the lattice rules, cost laws, refusal naming the field, the override."""

from __future__ import annotations

import math
import tomllib

import pytest

from simsurface.errors import ResourceError
from simsurface.resources import (MachineLimits, check_fits, estimate_sweep, format_bytes, format_seconds,
                                  oversize_allowed, problem_size)
from simsurface.scenario import parse_scenario

WIRE_60NM = """
title = "QX-60 estimate test (invented)"
[material]
preset = "Bi2Se3"
[wire]
cross_section = "circle"
diameter_nm = 60.0
depth_nm = 1.5
length_nm = 400.0
[model]
kind = "surface_lattice"
[sweep]
flux_quanta = { start = -1.0, stop = 1.0, points = 41 }
fermi_energy_meV = { start = 0.0, stop = 30.0, points = 11 }
"""

#: a roomy machine: 24 GB free memory, 1 TB disk, a week
MACHINE = MachineLimits(memory_bytes=24e9, disk_bytes=1e12, time_limit_s=7 * 86400)


def scenario(**tables):
    data = tomllib.loads(WIRE_60NM)
    for table, fields in tables.items():
        data.setdefault(table, {}).update(fields)
    return parse_scenario(data)


def test_size_of_the_lattice_tube_follows_its_spacing_rule():
    size = problem_size(scenario())
    # a Dirac spinor on each of M sites around; N slices along (models/tube.py: M = ceil(P/a), N = L/a)
    from simsurface.models.registry import build_model

    tube = build_model(scenario())
    assert size.orbitals_per_slice == 2 * tube.n_around and size.slices == tube.n_along
    assert size.points == 41 and size.energies == 11


def test_ordinary_run_fits_and_is_described_in_one_line():
    estimate = estimate_sweep(problem_size(scenario()), workers=2)
    check_fits(estimate, MACHINE)
    assert estimate.memory_bytes < 2e9 and estimate.wall_seconds < 600
    assert "estimated" in estimate.summary() and "orbitals" in estimate.summary()


def test_time_grows_linearly_with_tasks_and_memory_does_not():
    small = estimate_sweep(problem_size(scenario()), workers=1)
    many = estimate_sweep(problem_size(scenario(sweep={"realizations": 10})), workers=1)
    assert math.isclose(many.cpu_seconds, 10 * small.cpu_seconds)
    assert many.worker_bytes == small.worker_bytes


def test_kwant_factorization_memory_grows_with_the_length_and_the_slice_engine_barely():
    short = problem_size(scenario())
    long = problem_size(scenario(wire={"length_nm": 4000.0}))
    slices = estimate_sweep(long).worker_bytes / estimate_sweep(short).worker_bytes
    kwant = (estimate_sweep(problem_size(scenario(wire={"length_nm": 4000.0}), "kwant")).worker_bytes
             / estimate_sweep(problem_size(scenario(), "kwant")).worker_bytes)
    assert slices < 1.5 < kwant


CASES = [
    ({"wire": {"diameter_nm": 1e9}}, "[wire] diameter_nm", "memory"),
    ({"wire": {"length_nm": 1e9}}, "[wire] length_nm", "memory"),
    ({"model": {"lattice_spacing_nm": 1e-6}}, "[model] lattice_spacing_nm", "memory"),
    ({"model": {"kind": "surface_modes"}, "wire": {"diameter_nm": 10_000.0}}, "[wire] diameter_nm", "memory"),
    ({"sweep": {"realizations": 1_000_000}}, "[sweep] realizations", "days|years"),
    # the plan's mode tube at 600 meV: a fine potential grid of many dense slices
    ({"model": {"kind": "surface_modes"}, "sweep": {"fermi_energy_meV": [600.0]}}, "[sweep] fermi_energy_meV",
     "memory"),
]


@pytest.mark.parametrize("tables,field,why", CASES, ids=[c[1] + "-" + str(i) for i, c in enumerate(CASES)])
def test_oversized_sweep_is_refused_naming_the_field_that_drives_the_cost(tables, field, why):
    estimate = estimate_sweep(problem_size(scenario(**tables)), workers=2)
    with pytest.raises(ResourceError, match=why) as err:
        check_fits(estimate, MACHINE)
    assert str(err.value).startswith(field + ":")
    with oversize_allowed():
        check_fits(estimate, MACHINE)


def test_cluster_runs_check_only_what_stays_here():
    estimate = estimate_sweep(problem_size(scenario(wire={"diameter_nm": 5000.0})), workers=2)
    with pytest.raises(ResourceError):
        check_fits(estimate, MACHINE)
    check_fits(estimate, MACHINE, local=False)  # the workers' memory is the cluster's business


def test_full_disk_is_refused():
    estimate = estimate_sweep(problem_size(scenario(sweep={"realizations": 1000})), workers=2)
    with pytest.raises(ResourceError, match="of disk"):
        check_fits(estimate, MachineLimits(memory_bytes=24e9, disk_bytes=1e6, time_limit_s=1e9))


def test_human_readable_sizes_and_durations():
    assert format_bytes(1.5e9) == "1.5 GB" and format_bytes(62e15) == "62 PB"
    assert format_seconds(45) == "45 s" and format_seconds(5400) == "90 min"
    assert format_seconds(86400 * 41) == "41 days" and format_seconds(math.inf) == "unknown"
