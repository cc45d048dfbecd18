"""Physical constants and unit conversions.

All public quantities in simsurface carry their unit in the name: lengths in nm, energies in meV,
temperatures in K, fields in T, areas in nm², flux in units of the single-electron flux quantum
Φ0 = h/e. Constants come from :mod:`scipy.constants` (CODATA 2018, exact SI values), never typed in.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as _c

#: Single-electron flux quantum h/e in Wb (T m²).
FLUX_QUANTUM_WB: float = _c.h / _c.e
#: Conductance quantum without spin degeneracy, e²/h, in S.
CONDUCTANCE_QUANTUM_S: float = _c.e**2 / _c.h
#: Resistance quantum h/e² in Ω.
RESISTANCE_QUANTUM_OHM: float = _c.h / _c.e**2
#: Reduced Planck constant in meV s.
HBAR_MEV_S: float = _c.hbar / (_c.e * 1e-3)
#: Boltzmann constant in meV/K.
KB_MEV_PER_K: float = _c.k / (_c.e * 1e-3)
#: Free-electron mass in kg.
ELECTRON_MASS_KG: float = _c.m_e
#: ħ²/(2 m_e) in meV nm² (free electron).
HBAR2_OVER_2ME_MEV_NM2: float = _c.hbar**2 / (2 * _c.m_e) / (_c.e * 1e-3) * 1e18
#: Bohr magneton μ_B in meV/T.
BOHR_MAGNETON_MEV_PER_T: float = _c.physical_constants["Bohr magneton in eV/T"][0] * 1e3
#: Flux quantum h/e in T nm² (the unit in which models write vector potentials: A in T nm, areas in nm²).
FLUX_QUANTUM_T_NM2: float = FLUX_QUANTUM_WB * 1e18

_NM2_TO_M2 = 1e-18


def hbar_v_meV_nm(velocity_m_s: ArrayLike) -> np.ndarray:
    """ħv in meV nm for a velocity in m/s (e.g. 5e5 m/s -> 329 meV nm)."""
    return np.asarray(velocity_m_s, dtype=float) * _c.hbar / (_c.e * 1e-3) * 1e9


def velocity_m_s(hbar_v_meV_nm_: ArrayLike) -> np.ndarray:
    """Inverse of :func:`hbar_v_meV_nm`."""
    return np.asarray(hbar_v_meV_nm_, dtype=float) / (_c.hbar / (_c.e * 1e-3) * 1e9)


def flux_quanta(field_T: ArrayLike, area_nm2: ArrayLike) -> np.ndarray:
    """Flux Φ/Φ0 (units of h/e) threading ``area_nm2`` in an axial field ``field_T``."""
    return np.asarray(field_T, dtype=float) * np.asarray(area_nm2, dtype=float) * _NM2_TO_M2 / FLUX_QUANTUM_WB


def field_T(flux_quanta_: ArrayLike, area_nm2: ArrayLike) -> np.ndarray:
    """Axial field in T that threads ``flux_quanta_`` (units of h/e) through ``area_nm2``."""
    return np.asarray(flux_quanta_, dtype=float) * FLUX_QUANTUM_WB / (np.asarray(area_nm2, dtype=float) * _NM2_TO_M2)


def period_he_T(area_nm2: ArrayLike) -> np.ndarray:
    """h/e (Aharonov–Bohm) field period ΔB = (h/e)/A in T for an enclosed area in nm²."""
    return field_T(1.0, area_nm2)


def area_from_period_nm2(period_T: ArrayLike) -> np.ndarray:
    """Enclosed area in nm² whose h/e period is ``period_T``."""
    return FLUX_QUANTUM_WB / (np.asarray(period_T, dtype=float) * _NM2_TO_M2)


def thermal_energy_meV(temperature_K: ArrayLike) -> np.ndarray:
    """k_B T in meV."""
    return np.asarray(temperature_K, dtype=float) * KB_MEV_PER_K
