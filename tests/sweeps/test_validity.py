"""Sweep validity warnings: beyond half the bulk gap, disorder stronger than the lattice can describe."""

from __future__ import annotations

import tomllib
import warnings

import numpy as np
import pytest

from simsurface.errors import ValidityWarning
from simsurface.models.registry import build_model
from simsurface.scenario import parse_scenario
from simsurface.sweeps.validity import check_sweep_window, disorder_mean_free_path_nm


def scenario(text, energies, **disorder):
    data = tomllib.loads(text)
    data["sweep"]["fermi_energy_meV"] = energies
    if disorder:
        data["disorder"] = disorder
    return parse_scenario(data)


def check(scn):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        check_sweep_window(scn, build_model(scn), scn.energy_values())
    return [str(w.message) for w in caught if issubclass(w.category, ValidityWarning)]


def test_energies_beyond_half_the_bulk_gap_warn(tiny_scenario_text):
    # Bi2Se3 bulk gap about 0.3 eV (materials.py gives the source): surface states alone only below ~150 meV
    assert check(scenario(tiny_scenario_text, [5.0, 100.0])) == []
    (message,) = check(scenario(tiny_scenario_text, [5.0, 900.0]))
    assert message.startswith("[sweep] fermi_energy_meV: |E| up to 900 meV exceeds half the bulk gap")


def test_disorder_with_a_mean_free_path_below_the_lattice_spacing_warns(tiny_scenario_text):
    assert check(scenario(tiny_scenario_text, [20.0], anderson_width_meV=50.0)) == []
    (message,) = check(scenario(tiny_scenario_text, [20.0], anderson_width_meV=1e12))
    assert message.startswith("[disorder] anderson_width_meV: 1e+12 meV gives a Born mean free path of")
    assert "shorter than the lattice spacing" in message


def test_born_mean_free_path_falls_as_the_inverse_square_of_the_width(tiny_scenario_text):
    # Born approximation: 1/tau is proportional to W^2 (Fermi's golden rule; common practice, no source)
    weak = scenario(tiny_scenario_text, [20.0], anderson_width_meV=10.0)
    strong = scenario(tiny_scenario_text, [20.0], anderson_width_meV=30.0)
    ratio = (disorder_mean_free_path_nm(weak, build_model(weak), np.array([20.0]))
             / disorder_mean_free_path_nm(strong, build_model(strong), np.array([20.0])))
    assert ratio == pytest.approx(9.0)
