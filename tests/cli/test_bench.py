"""``simsurface bench``: output format and input errors."""

import re

from simsurface.cli import main


def test_quick_bench_prints_points_and_the_final_summary_line(capsys):
    assert main(["bench", "--quick", "--points", "2", "--no-memory"]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    m = re.fullmatch(r"speedup_vs_kwant=(\d+\.\d+) max_abs_dev=(\d\.\d\de[+-]\d+) "
                     r"batched_speedup_vs_kwant=(\d+\.\d+) batched_max_abs_dev=(\d\.\d\de[+-]\d+)", lines[-1])
    assert m, lines[-1]
    assert float(m.group(2)) < 1e-8 and float(m.group(4)) < 1e-8
    assert any(line.lstrip().startswith("1 ") for line in lines)        # the second point's row
    assert any("time versus length" in line for line in lines)


def test_bench_rejects_a_non_positive_point_count(capsys):
    assert main(["bench", "--quick", "--points", "0"]) == 2
    assert "--points" in capsys.readouterr().err


def test_bench_lists_workloads(capsys):
    assert main(["bench", "--list"]) == 0
    assert "tube-reference" in capsys.readouterr().out
