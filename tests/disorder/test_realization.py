"""Disorder realizations: seeding rule, geometry of roughness, vacancies, model support, bad input."""

from __future__ import annotations

import tomllib
import warnings

import numpy as np
import pytest

from simsurface.disorder import DisorderParameters, SiteLayout, check_parameters, layout_of, realize
from simsurface.disorder.realization import rough_slices
from simsurface.errors import InputError, ValidityWarning
from simsurface.geometry import CrossSection
from simsurface.models.tube import SurfaceTube
from simsurface.scenario import parse_scenario
from simsurface.sweeps import run_scenario
from simsurface.transport.engines import conductance

HBAR_V = 330.0  # meV nm, of the order of Bi2Se3's surface velocity; the tests only need some value


def tube(n_around=10, n_along=30, spacing=2.0, wilson=0.5):
    sec = CrossSection.circle(n_around * spacing / np.pi)
    return SurfaceTube("topological", sec.perimeter_nm, sec.area_nm2, n_along * spacing, HBAR_V, n_around, n_along,
                       wilson), sec


ALL_KINDS = DisorderParameters(anderson_width_meV=40.0, puddle_rms_meV=10.0, puddle_correlation_nm=4.0,
                               roughness_rms_nm=0.5, roughness_correlation_nm=10.0, vacancy_fraction=0.05)


def same(r1, r2):
    for name in ("potential_meV", "vacancies", "area_ratio", "slice_perimeter_nm"):
        a, b = getattr(r1, name), getattr(r2, name)
        if a is None or b is None:
            assert a is None and b is None
        else:
            np.testing.assert_array_equal(a, b)


# --- seeding ----------------------------------------------------------------------------------
def test_a_realization_depends_on_seed_and_index_only():
    t, sec = tube()
    later = realize(ALL_KINDS, t, 7, 3, section=sec)
    for r in (5, 0, 3, 1):  # other realizations drawn in between do not matter
        realize(ALL_KINDS, t, 7, r, section=sec)
    same(realize(ALL_KINDS, t, 7, 3, section=sec), later)
    assert not np.array_equal(realize(ALL_KINDS, t, 7, 4, section=sec).potential_meV, later.potential_meV)
    assert not np.array_equal(realize(ALL_KINDS, t, 8, 3, section=sec).potential_meV, later.potential_meV)


def test_adding_a_disorder_kind_does_not_change_the_numbers_of_another():
    t, sec = tube()
    anderson = DisorderParameters(anderson_width_meV=40.0)
    vac = DisorderParameters(vacancy_fraction=0.05)
    both = realize(ALL_KINDS, t, 2, 1, section=sec)
    puddles_only = realize(DisorderParameters(puddle_rms_meV=10.0, puddle_correlation_nm=4.0), t, 2, 1)
    np.testing.assert_allclose(both.potential_meV - puddles_only.potential_meV,
                               realize(anderson, t, 2, 1).potential_meV, atol=1e-12)
    np.testing.assert_array_equal(both.vacancies, realize(vac, t, 2, 1).vacancies)
    rough = realize(DisorderParameters(roughness_rms_nm=0.5, roughness_correlation_nm=10.0), t, 2, 1, section=sec)
    np.testing.assert_array_equal(both.slice_perimeter_nm, rough.slice_perimeter_nm)


def test_zero_disorder_reproduces_the_clean_model_exactly(tmp_path, tiny_scenario_text):
    clean = tomllib.loads(tiny_scenario_text)
    zero = tomllib.loads(tiny_scenario_text)
    zero["disorder"] = {"anderson_width_meV": 0.0, "puddle_rms_meV": 0.0, "puddle_correlation_nm": 3.0,
                        "roughness_rms_nm": 0.0, "vacancy_fraction": 0.0}
    zero["sweep"]["realizations"] = 2
    a = run_scenario(parse_scenario(clean), tmp_path / "a", workers=1, progress=False)
    b = run_scenario(parse_scenario(zero), tmp_path / "b", workers=1, progress=False)
    np.testing.assert_array_equal(b["conductance"].isel(realization=0), a["conductance"].isel(realization=0))
    np.testing.assert_array_equal(b["conductance"].isel(realization=1), a["conductance"].isel(realization=0))
    assert realize(DisorderParameters(), tube()[0], 1, 0).chain_kwargs(0.3) == {}


# --- roughness geometry -----------------------------------------------------------------------
@pytest.mark.parametrize("section", [CrossSection.circle(30.0, 1.5), CrossSection.rectangle(40.0, 20.0, 2.0)],
                         ids=["circle", "rectangle"])
def test_rough_slices_carry_the_contour_of_their_local_section(section):
    ratio, perimeter, profiles = rough_slices(np.random.default_rng(4), section, 50, 2.0, 1.0, 8.0)
    for j in (0, 17, 49):
        if section.shape == "circle":
            local = CrossSection.circle(profiles["diameter_nm"][j], section.depth_nm)
        else:
            local = CrossSection.rectangle(profiles["width_nm"][j], profiles["thickness_nm"][j], section.depth_nm)
        assert perimeter[j] == pytest.approx(local.perimeter_nm, rel=1e-12)
        assert ratio[j] == pytest.approx(local.area_nm2 / section.area_nm2, rel=1e-12)
    if section.shape == "rectangle":  # width and thickness vary independently
        assert not np.allclose(profiles["width_nm"] - 40.0, profiles["thickness_nm"] - 20.0)


def test_rough_wire_passes_only_subbands_open_at_its_narrowest_slice():
    # Adiabatic transport: a smooth constriction transmits the modes that are open at its narrowest
    # cross-section (Glazman, Lesovik, Khmel'nitskii & Shekhter, JETP Lett. 48, 238 (1988)). Each slice's
    # subband bottoms follow from its own perimeter P_j (transverse quantization) and flux Φ·A_j/A_0.
    n_around, spacing, wilson = 20, 2.0, 0.5
    t, sec = tube(n_around, 300, spacing, wilson)
    params = DisorderParameters(roughness_rms_nm=1.2, roughness_correlation_nm=50.0)
    phi = 0.3
    energies = np.arange(6.0, 80.0, 2.0)
    checked = differ = 0
    for r in range(2):
        real = realize(params, t, 3, r, section=sec)
        g = conductance(t.chain(phi, **real.chain_kwargs(phi)), energies)
        hop = HBAR_V * n_around / real.slice_perimeter_nm[:, None]                      # t_s of each slice
        q = 2 * np.pi * (np.arange(n_around) + 0.5 - phi * real.area_ratio[:, None]) / n_around
        bottoms = np.sqrt((hop * np.sin(q)) ** 2 + (wilson * hop * (1 - np.cos(q))) ** 2)  # lattice E_l(k=0)
        highest = bottoms.max(axis=0)
        adiabatic = (energies[:, None] > highest[None, :]).sum(axis=1)
        nominal = (energies[:, None] > t.lattice_subband_bottoms_meV(phi)[None, :]).sum(axis=1)
        far = np.abs(energies[:, None] - highest[None, :]).min(axis=1) > 6.0  # away from tunnelling near edges
        np.testing.assert_allclose(g[far], adiabatic[far], atol=0.15)
        checked += far.sum()
        differ += (far & (adiabatic != nominal)).sum()
    assert checked > 30 and differ >= 5  # the check could tell a rough wire from the nominal one


# --- vacancies and layouts ----------------------------------------------------------------------
def test_vacancies_fall_on_surface_sites_with_the_requested_fraction():
    y, z = np.meshgrid(np.arange(6) * 0.5, np.arange(4) * 0.5, indexing="ij")
    pos = np.column_stack([y.ravel(), z.ravel()])
    surface = (pos[:, 0] == 0) | (pos[:, 0] == 2.5) | (pos[:, 1] == 0) | (pos[:, 1] == 1.5)
    layout = SiteLayout.from_positions(400, 0.5, pos, surface)
    assert layout.transverse_shape == (6, 4)

    class Wire3D:  # stands in for a three-dimensional model: its own layout and a chain with vacancies
        def disorder_layout(self):
            return layout

        def chain(self, flux_quanta, potential_meV=None, *, vacancies=None):
            raise AssertionError("not called")

    real = realize(DisorderParameters(vacancy_fraction=0.2, puddle_rms_meV=5.0, puddle_correlation_nm=1.0),
                   Wire3D(), 1, 0)
    assert real.potential_meV.shape == (400, 24)
    assert not real.vacancies[:, ~surface].any()
    n = 400 * surface.sum()
    frac = real.vacancies[:, surface].sum() / n
    assert abs(frac - 0.2) < 4 * np.sqrt(0.2 * 0.8 / n)  # binomial standard deviation


def test_tube_layout_is_a_periodic_grid_of_all_sites():
    t, _ = tube(12, 7)
    layout = layout_of(t)
    assert layout.grid_shape == (7, 12) and layout.periodic == (True,) and layout.surface.all()
    assert layout.spacing_nm == (t.spacing_nm, t.spacing_nm)


def test_a_kind_the_model_cannot_take_is_refused_by_name():
    class PotentialOnly:
        def disorder_layout(self):
            return SiteLayout.tube(5, 8, 1.0)

        def chain(self, flux_quanta, potential_meV=None):
            raise AssertionError("not called")

    with pytest.raises(InputError, match=r"\[disorder\] vacancy_fraction: not supported by the PotentialOnly"):
        realize(DisorderParameters(vacancy_fraction=0.1), PotentialOnly(), 0, 0)


# --- bad input ----------------------------------------------------------------------------------
@pytest.mark.parametrize("field", ["anderson_width_meV", "puddle_rms_meV", "roughness_rms_nm", "vacancy_fraction"])
def test_negative_strength_is_refused_naming_the_field(field, tiny_scenario_text):
    with pytest.raises(InputError, match=rf"\[disorder\] {field}: must be a finite number >= 0"):
        DisorderParameters(**{field: -1.0})
    data = tomllib.loads(tiny_scenario_text)
    data["disorder"] = {field: -1.0}
    with pytest.raises(InputError, match=rf"\[disorder\] {field}: Input should be greater than or equal to 0"):
        parse_scenario(data)


@pytest.mark.parametrize("table,message", [
    ({"puddle_rms_meV": 5.0}, r"\[disorder\] puddle_correlation_nm: required when puddle_rms_meV > 0"),
    ({"roughness_rms_nm": 1.0}, r"\[disorder\] roughness_correlation_nm: required when roughness_rms_nm > 0"),
    ({"vacancy_fraction": 1.0}, r"\[disorder\] vacancy_fraction: Input should be less than 1"),
    ({"puddle_correlation_nm": 0.0}, r"\[disorder\] puddle_correlation_nm: Input should be greater than 0"),
    ({"colour": 1.0}, r"\[disorder\] colour: unknown field; allowed: anderson_width_meV"),
])
def test_incomplete_or_impossible_disorder_tables_name_the_field(table, message, tiny_scenario_text):
    data = tomllib.loads(tiny_scenario_text)
    data["disorder"] = table
    with pytest.raises(InputError, match=message):
        parse_scenario(data)


def test_zero_realizations_are_refused(tiny_scenario_text):
    data = tomllib.loads(tiny_scenario_text)
    data["sweep"]["realizations"] = 0
    with pytest.raises(InputError, match=r"\[sweep\] realizations: Input should be greater than or equal to 1"):
        parse_scenario(data)


def test_disorder_on_the_clean_analytic_model_is_refused(tiny_scenario_text):
    data = tomllib.loads(tiny_scenario_text)
    data["model"]["kind"] = "surface_analytic"
    data["disorder"] = {"anderson_width_meV": 10.0}
    with pytest.raises(InputError, match=r"\[disorder\]: the analytic model describes a clean wire"):
        parse_scenario(data)


def test_correlation_length_below_the_lattice_spacing_warns_and_explains():
    t, sec = tube(spacing=2.0)
    with pytest.warns(ValidityWarning, match=r"puddle_correlation_nm: correlation length 0.5 nm is below the "
                                             r"lattice spacing 2 nm.*uncorrelated \(Anderson-like\)"):
        check_parameters(DisorderParameters(puddle_rms_meV=5.0, puddle_correlation_nm=0.5), layout_of(t), sec)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        check_parameters(DisorderParameters(puddle_rms_meV=5.0, puddle_correlation_nm=2.0), layout_of(t), sec)


def test_roughness_that_could_close_the_contour_is_refused():
    t, sec = tube()  # contour 6.4 nm across
    with pytest.raises(InputError, match=r"\[disorder\] roughness_rms_nm: 2 nm is too large .* below 1.59 nm"):
        check_parameters(DisorderParameters(roughness_rms_nm=2.0, roughness_correlation_nm=10.0), layout_of(t), sec)


def test_three_dimensional_wire_takes_potentials_and_surface_vacancies_but_refuses_roughness():
    # the four-band wire model describes its cross-section sites on a cubic grid (simsurface.models.bulk)
    from simsurface.models.registry import build_model

    data = {"title": "QZ-4 3D wire (invented)", "seed": 4,
            "wire": {"cross_section": "rectangle", "width_nm": 10.0, "thickness_nm": 10.0, "length_nm": 3.0},
            "model": {"kind": "bulk_lattice"}, "sweep": {"flux_quanta": [0.0], "fermi_energy_meV": [45.0]}}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        model = build_model(parse_scenario(data))
    layout = layout_of(model)
    assert layout.n_sites == model.sites.n_sites and len(layout.transverse_shape) == 2
    params = DisorderParameters(anderson_width_meV=50.0, puddle_rms_meV=10.0, puddle_correlation_nm=2.0,
                                vacancy_fraction=0.2)
    real = realize(params, model, 4, 0)
    assert real.potential_meV.shape == (model.n_along, model.sites.n_sites)
    assert real.vacancies[:, model.sites.surface].any() and not real.vacancies[:, ~model.sites.surface].any()
    model.chain(0.2, **real.chain_kwargs(0.2))  # accepted by the model
    with pytest.raises(InputError, match=r"\[disorder\] roughness_rms_nm: not supported by the BulkWire model"):
        realize(DisorderParameters(roughness_rms_nm=0.3, roughness_correlation_nm=3.0), model, 4, 0)
