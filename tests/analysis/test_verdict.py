"""The visibility rule (common practice, no source): thresholds on signal-to-noise and period count."""

import pytest

from simsurface.analysis.verdict import best, verdict


@pytest.mark.parametrize("amplitude,periods,expected", [
    (3.0, 3.0, "visible"), (2.9, 10.0, "marginal"), (10.0, 2.0, "marginal"),
    (1.0, 1.0, "marginal"), (0.9, 10.0, "not visible"), (10.0, 0.5, "not visible")])
def test_verdict_thresholds(amplitude, periods, expected):
    assert verdict(amplitude, 1.0, periods) == expected


def test_best_verdict_wins():
    assert best(["not visible", "marginal"]) == "marginal"
    assert best(["visible", "not visible"]) == "visible"
