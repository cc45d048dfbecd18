"""`[dephasing]` in a run: the sweep solves every task with dephasing probes; bad tables are refused."""

from __future__ import annotations

import tomllib

import numpy as np
import pytest

from simsurface.analysis.dephasing import dephasing_energy_meV
from simsurface.errors import InputError
from simsurface.scenario import parse_scenario
from simsurface.sweeps import run_scenario
from simsurface.transport.probes import dephased_conductance

MODES_SCENARIO = """
title = "dephased mode tube (invented)"
seed = 4

[wire]
cross_section = "circle"
diameter_nm = 30.0
depth_nm = 1.0
length_nm = 150.0

[model]
kind = "surface_modes"

[disorder]
anderson_width_meV = 150.0

[dephasing]
coherence_length_nm = 120.0

[sweep]
flux_quanta = [0.0, 0.2, 0.5]
fermi_energy_meV = [20.0, 30.0]
realizations = 2
"""


def _scenario(text: str, **dephasing):
    data = tomllib.loads(text)
    if dephasing.pop("drop", False):
        del data["dephasing"]
    else:
        data["dephasing"].update(dephasing)
    return parse_scenario(data)


def test_run_with_dephasing_table_solves_every_task_with_probes(tmp_path):
    scn = _scenario(MODES_SCENARIO)
    ds = run_scenario(scn, tmp_path / "a", workers=1, progress=False)
    coherent = run_scenario(_scenario(MODES_SCENARIO, drop=True), tmp_path / "b", workers=1, progress=False)
    g, g0 = ds["conductance"].values, coherent["conductance"].values
    assert np.all(np.abs(g - g0) > 1e-4)
    # the same numbers by hand: realization 1 at flux 0.2, η = ħv/(2 L_phi) (quasi-ballistic), L_phi/8 probes
    from simsurface.disorder import realize
    from simsurface.models.registry import build_model

    model = build_model(scn)
    real = realize(scn.disorder.parameters(), model, scn.seed, 1, section=scn.wire.section())
    chain = model.chain(0.2, **real.chain_kwargs(0.2))
    eta = dephasing_energy_meV(120.0, model.hbar_v_meV_nm)
    units = int(0.125 * 120.0 / model.spacing_nm)
    np.testing.assert_allclose(g[1, 1], dephased_conductance(chain, [20.0, 30.0], eta, units), atol=1e-12)


def test_very_long_coherence_length_reproduces_the_coherent_run(tmp_path):
    # L_phi -> infinity: the probes decouple (reference: the coherent run with the slice engine), 1e-8
    ds = run_scenario(_scenario(MODES_SCENARIO, coherence_length_nm=1e12), tmp_path / "a", workers=1, progress=False)
    coherent = run_scenario(_scenario(MODES_SCENARIO, drop=True), tmp_path / "b", workers=1, progress=False)
    np.testing.assert_allclose(ds["conductance"].values, coherent["conductance"].values, atol=1e-8)


@pytest.mark.parametrize("change,expected", [
    ({"regime": "diffusive"}, "[dephasing] mean_free_path_nm: required with regime = 'diffusive'"),
    ({"mean_free_path_nm": 40.0}, "[dephasing] mean_free_path_nm: only used with regime"),
    ({"regime": "sideways"}, "[dephasing] regime"),
    ({"coherence_length_nm": -5.0}, "[dephasing] coherence_length_nm"),
])
def test_bad_dephasing_table_names_the_field(change, expected):
    with pytest.raises(InputError, match=expected.replace("[", r"\[").replace("]", r"\]")):
        _scenario(MODES_SCENARIO, **change)


def test_three_dimensional_wire_refuses_dephasing_naming_the_table():
    text = MODES_SCENARIO.replace('kind = "surface_modes"', 'kind = "bulk_lattice"').replace("depth_nm = 1.0\n", "")
    with pytest.raises(InputError, match=r"\[dephasing\]: not available for \[model\] kind = 'bulk_lattice'"):
        _scenario(text)
