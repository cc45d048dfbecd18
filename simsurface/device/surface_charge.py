"""Carrier density and density of states of a surface electron gas, as the electrostatics needs them.

Thomas–Fermi (local) description: at a point of the surface where the Fermi energy measured from the local
Dirac point (band bottom) is ε, the sheet density is that of the infinite two-dimensional gas,

* topological — one spin-nondegenerate Dirac cone: n(ε) = sign(ε) ε²/(4π(ħv)²), ν(ε) = |ε|/(2π(ħv)²);
  electrons above the Dirac point count positive, holes below negative;
* trivial — a parabolic band with spin degeneracy g (2 without spin–orbit): n(ε) = g ε/(4π ħ²/2m*) for
  ε > 0, ν = g m*/(2πħ²), no carriers below the band bottom.

The quantization of the surface into subbands around the circumference is ignored here (valid when several
subbands are occupied, |ε| ≫ 2πħv/P); the quantum capacitance per area is e²ν(ε) (Luryi, Appl. Phys. Lett. 52,
501 (1988)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as _c

from ..errors import InputError
from ..units import HBAR2_OVER_2ME_MEV_NM2

__all__ = ["SurfaceGas", "NM2_PER_CM2", "quantum_capacitance_F_per_m2"]

#: nm² in one cm²
NM2_PER_CM2 = 1e14


@dataclass(frozen=True)
class SurfaceGas:
    """A two-dimensional surface gas.

    Attributes
    ----------
    surface : {"topological", "trivial"}
    energy_scale : float
        ħv in meV nm (topological) or the effective mass ratio m*/m_e (trivial).
    spin_degeneracy : int
        g of the trivial band (1 or 2; ignored for the Dirac cone, which has none).
    """

    surface: Literal["topological", "trivial"]
    energy_scale: float
    spin_degeneracy: int = 2

    def __post_init__(self) -> None:
        if self.surface not in ("topological", "trivial"):
            raise InputError(f"surface: {self.surface!r} is not allowed; use 'topological' or 'trivial'")
        if not self.energy_scale > 0:
            raise InputError("energy_scale (hbar v in meV nm or m*/m_e) must be > 0")
        if self.spin_degeneracy not in (1, 2):
            raise InputError("spin_degeneracy must be 1 or 2")

    @property
    def _parabolic_dos_per_meV_nm2(self) -> float:
        return self.spin_degeneracy / (4 * math.pi * HBAR2_OVER_2ME_MEV_NM2 / self.energy_scale)

    def density_per_nm2(self, energy_meV: ArrayLike) -> np.ndarray:
        """Sheet density n(ε) in 1/nm² at Fermi energy ε (meV) from the Dirac point / band bottom."""
        e = np.asarray(energy_meV, dtype=float)
        if self.surface == "topological":
            return np.sign(e) * e**2 / (4 * math.pi * self.energy_scale**2)
        return self._parabolic_dos_per_meV_nm2 * np.maximum(e, 0.0)

    def density_of_states_per_meV_nm2(self, energy_meV: ArrayLike) -> np.ndarray:
        """dn/dε in 1/(meV nm²)."""
        e = np.asarray(energy_meV, dtype=float)
        if self.surface == "topological":
            return np.abs(e) / (2 * math.pi * self.energy_scale**2)
        return np.where(e > 0, self._parabolic_dos_per_meV_nm2, 0.0)

    def fermi_energy_meV(self, density_per_nm2: ArrayLike) -> np.ndarray:
        """Inverse of :meth:`density_per_nm2` (a trivial gas needs n ≥ 0)."""
        n = np.asarray(density_per_nm2, dtype=float)
        if self.surface == "topological":
            return np.sign(n) * self.energy_scale * np.sqrt(4 * math.pi * np.abs(n))
        if np.any(n < 0):
            raise InputError("density of a trivial surface gas must be >= 0")
        return n / self._parabolic_dos_per_meV_nm2


def quantum_capacitance_F_per_m2(gas: SurfaceGas, energy_meV: ArrayLike) -> np.ndarray:
    """e²ν(ε) in F/m² (Luryi 1988): the capacitance in series with the geometric one."""
    nu_per_J_m2 = gas.density_of_states_per_meV_nm2(energy_meV) / (1e-3 * _c.e) * 1e18
    return _c.e**2 * nu_per_J_m2
