"""Weak-(anti)localization backgrounds: HLN in 2D, the quasi-1D form with its magnetic dephasing length."""

import math

import numpy as np
import pytest
from scipy import constants

from simsurface.device.backgrounds import (ALPHA_ANTILOCALIZATION, ALPHA_LOCALIZATION, hln_magnetoconductance_e2h,
                                           magnetic_dephasing_length_nm, magnetic_length_nm,
                                           quasi1d_magnetoconductance_e2h, wire_magnetoconductance_e2h)


def test_magnetic_length_at_one_tesla():
    # l_m = sqrt(ħ/eB) = 25.66 nm at 1 T (fact of the trade)
    assert magnetic_length_nm(1.0) == pytest.approx(25.656, abs=1e-3)


def test_magnetic_dephasing_length_limits():
    # narrow strip: sqrt(3) l_m²/W (Altshuler & Aronov 1981; Beenakker & van Houten 1988); wide: l_m
    lm = float(magnetic_length_nm(0.5))
    assert magnetic_dephasing_length_nm(0.5, 1.0) == pytest.approx(math.sqrt(3) * lm**2 / 1.0, rel=1e-3)
    assert magnetic_dephasing_length_nm(0.5, 1e5) == pytest.approx(lm, rel=1e-6)
    assert np.isinf(magnetic_dephasing_length_nm(0.0, 10.0))


def test_hln_small_and_large_field_asymptotics():
    # ψ(1/2 + x) − ln x → 1/(24x²) for x → ∞ and → ψ(1/2) + ln(1/x), ψ(1/2) = −γ − 2 ln 2, for x → 0
    # (DLMF 5.11.2 and 5.4.13; HLN, Prog. Theor. Phys. 63, 707 (1980))
    lphi = 500.0
    b_phi = constants.hbar / (4 * constants.e * (lphi * 1e-9) ** 2)
    small, large = 1e-3 * b_phi, 1e4 * b_phi
    a = ALPHA_ANTILOCALIZATION
    assert hln_magnetoconductance_e2h(small, lphi, a, 1.0, 1.0) == pytest.approx(a / math.pi * (small / b_phi) ** 2 / 24,
                                                                                rel=1e-3)
    psi_half = -np.euler_gamma - 2 * math.log(2)
    assert hln_magnetoconductance_e2h(large, lphi, a, 1.0, 1.0) == pytest.approx(
        a / math.pi * (psi_half + math.log(large / b_phi)), rel=1e-4)


def test_antilocalization_is_a_cusp_and_localization_the_opposite():
    b = np.linspace(0, 2, 41)
    wal = wire_magnetoconductance_e2h(b, 0.0, 600.0, ALPHA_ANTILOCALIZATION, 1000.0, 100.0, 3.0)
    wl = wire_magnetoconductance_e2h(b, 0.0, 600.0, ALPHA_LOCALIZATION, 1000.0, 100.0, 3.0)
    assert wal[0] == 0.0 and np.all(np.diff(wal) < 0)  # G falls from its zero-field maximum
    assert np.allclose(wl, -2 * wal)  # α = 1 against α = −1/2
    assert np.allclose(wal, wire_magnetoconductance_e2h(-b, 0.0, 600.0, ALPHA_ANTILOCALIZATION, 1000.0, 100.0, 3.0))


def test_quasi1d_correction_saturates_at_the_full_interference_term():
    # B → ∞ removes the whole correction −2α L_phi/L (e²/h)
    big = quasi1d_magnetoconductance_e2h([(1e6, 100.0)], 400.0, ALPHA_ANTILOCALIZATION, 2000.0)
    assert big == pytest.approx(-400.0 / 2000.0, rel=1e-3)


def test_perpendicular_field_dephases_faster_than_axial():
    # a field across a 100 nm wire threads far more flux per coherent area than along a 3 nm surface layer
    axial = wire_magnetoconductance_e2h(0.5, 0.0, 600.0, ALPHA_ANTILOCALIZATION, 1000.0, 100.0, 3.0)
    across = wire_magnetoconductance_e2h(0.5, 90.0, 600.0, ALPHA_ANTILOCALIZATION, 1000.0, 100.0, 3.0)
    assert across < 3 * axial < 0  # measured: −0.557 against −0.129 e²/h at 0.5 T
