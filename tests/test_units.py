"""Unit conversions against scipy.constants and the trade's check values."""

import numpy as np
import pytest
from scipy import constants

from simsurface import units


def test_flux_quantum_is_h_over_e_from_scipy():
    # exact SI value since 2019 (CODATA 2018)
    assert units.FLUX_QUANTUM_WB == constants.h / constants.e
    assert units.FLUX_QUANTUM_WB == pytest.approx(4.135667696e-15, rel=1e-9)


def test_period_times_area_is_one_flux_quantum():
    # ΔB · A_eff = h/e (Aharonov & Bohm, Phys. Rev. 115, 485 (1959))
    area_nm2 = np.array([1e3, 6.4e3, 2.5e4])
    period = units.period_he_T(area_nm2)
    np.testing.assert_allclose(period * area_nm2 * 1e-18, constants.h / constants.e, rtol=1e-12)


def test_period_of_062_tesla_is_an_82_nm_square():
    # sqrt((h/e) / 0.62 T) = 81.7 nm: a 0.62 T period belongs to a square of side about 82 nm
    # (common practice, no source)
    side = np.sqrt(units.area_from_period_nm2(0.62))
    assert side == pytest.approx(81.7, abs=0.1)


def test_hbar_v_of_five_times_ten_to_five_m_per_s():
    # ħ × 5e5 m/s = 329.1 meV nm (scipy constants)
    assert units.hbar_v_meV_nm(5e5) == pytest.approx(constants.hbar * 5e5 / constants.e * 1e12, rel=1e-12)
    assert units.velocity_m_s(units.hbar_v_meV_nm(4.2e5)) == pytest.approx(4.2e5)


def test_field_and_flux_are_inverse():
    assert units.field_T(units.flux_quanta(1.7, 5000.0), 5000.0) == pytest.approx(1.7)
