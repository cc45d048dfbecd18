"""What the instrument reads: the simulated surface conductance plus the device around it, as a resistance.

Combines, for one trace G_s(B) of the surface (e²/h):

1. the weak-(anti)localization background ΔG_WAL(B) of the surface (:mod:`.backgrounds`), added to G_s;
2. a bulk channel in parallel, G_b (Drude) plus, for a single device, its aperiodic fluctuations (:mod:`.bulk_channel`);
3. the classical two-carrier magnetoresistance of surface and bulk in the field component across the wire, as a
   factor f(B⊥) = G_cl(B⊥)/G_cl(0) on the total conductance (zero-field channel conductances from Drude; an
   approximation: the quantum channels and the classical Hall geometry are treated separately);
4. the terminal configuration (:mod:`.four_terminal`): two terminals read h/(e²G) + R_series of surface and bulk in
   parallel; four terminals with non-invasive probes read the surface's (h/e²)(1/T − 1/N) in parallel with the
   bulk's 1/G_b (the bulk has no contact resistance of its own in the Drude picture).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from ..units import RESISTANCE_QUANTUM_OHM
from .backgrounds import wire_magnetoconductance_e2h
from .bulk_channel import (drude_conductance_e2h, gaussian_fluctuations, parallel_channels_conductance_e2h,
                           ucf_correlation_field_T, ucf_rms_e2h)
from .four_terminal import four_terminal_resistance_ohm

__all__ = ["BulkChannel", "SurfaceBackground", "Reading", "surface_background_e2h", "classical_factor",
           "measured_resistance_ohm", "bulk_fluctuations_e2h", "relative_signal_factor"]


@dataclass(frozen=True)
class BulkChannel:
    """A diffusive bulk in parallel with the surface.

    Attributes
    ----------
    density_per_cm3, mobility_cm2_per_V_s : float
        Carrier density and mobility of the bulk.
    area_nm2 : float
        Its conducting cross-section (the area inside the surface-state contour).
    width_nm : float
        Wire width across the field's perpendicular component (for the correlation field).
    carrier_sign : int
        −1 electrons (n-type), +1 holes.
    coherence_length_nm, thermal_length_nm : float
        L_phi and L_T of the bulk (for the fluctuation amplitude).
    """

    density_per_cm3: float
    mobility_cm2_per_V_s: float
    area_nm2: float
    width_nm: float
    carrier_sign: int = -1
    coherence_length_nm: float = 100.0
    thermal_length_nm: float = math.inf

    def conductance_e2h(self, length_nm: float) -> float:
        """Drude conductance between contacts ``length_nm`` apart."""
        return drude_conductance_e2h(self.density_per_cm3, self.mobility_cm2_per_V_s, self.area_nm2, length_nm)

    @property
    def mobility_m2_per_V_s(self) -> float:
        return self.mobility_cm2_per_V_s * 1e-4

    def fluctuation_rms_e2h(self, length_nm: float) -> float:
        return ucf_rms_e2h(length_nm, self.coherence_length_nm, self.thermal_length_nm)

    def correlation_field_T(self, length_nm: float, angle_deg: float) -> float:
        return ucf_correlation_field_T(self.area_nm2, self.width_nm, self.coherence_length_nm, length_nm, angle_deg)


@dataclass(frozen=True)
class SurfaceBackground:
    """Smooth background of the surface: (anti)localization and the surface's classical mobility.

    Attributes
    ----------
    alpha : float
        −1/2 antilocalization (Dirac surface, strong spin–orbit), 1 localization (spin-degenerate, none).
    coherence_length_nm : float
        L_phi of the surface at the measurement temperature.
    shell_thickness_nm : float
        Thickness of the surface-state layer the axial field threads.
    wire_width_nm : float
        Width the perpendicular field component threads.
    mobility_m2_per_V_s : float
        Drude mobility of the surface carriers; 0 leaves out the classical magnetoresistance.
    carrier_sign : int
        −1 electrons, +1 holes.
    """

    alpha: float
    coherence_length_nm: float
    shell_thickness_nm: float
    wire_width_nm: float
    mobility_m2_per_V_s: float = 0.0
    carrier_sign: int = -1


@dataclass(frozen=True)
class Reading:
    """How the trace is measured."""

    terminals: int = 2
    series_resistance_ohm: float = 0.0
    field_angle_deg: float = 0.0
    length_nm: float = 1000.0
    background: SurfaceBackground | None = None
    bulk: BulkChannel | None = None


def surface_background_e2h(field_T: ArrayLike, reading: Reading) -> np.ndarray:
    """ΔG_WAL(B) of the surface in e²/h (zeros without a background)."""
    b = np.asarray(field_T, dtype=float)
    bg = reading.background
    if bg is None:
        return np.zeros_like(b)
    return wire_magnetoconductance_e2h(b, reading.field_angle_deg, bg.coherence_length_nm, bg.alpha,
                                       reading.length_nm, bg.wire_width_nm, bg.shell_thickness_nm)


def classical_factor(field_T: ArrayLike, surface_drude_e2h: float, reading: Reading) -> np.ndarray:
    """f(B) = G_cl(B⊥)/G_cl(0) of surface and bulk as two Drude carriers; 1 without a perpendicular field."""
    b = np.asarray(field_T, dtype=float)
    b_perp = b * math.sin(math.radians(reading.field_angle_deg))
    g, mu, sign = [], [], []
    bg, bulk = reading.background, reading.bulk
    if bg is not None and bg.mobility_m2_per_V_s > 0:
        g.append(surface_drude_e2h)
        mu.append(bg.mobility_m2_per_V_s)
        sign.append(bg.carrier_sign)
    if bulk is not None:
        g.append(bulk.conductance_e2h(reading.length_nm))
        mu.append(bulk.mobility_m2_per_V_s)
        sign.append(bulk.carrier_sign)
    if len(g) < 2 or not np.any(b_perp):
        return np.ones_like(b)
    return parallel_channels_conductance_e2h(b_perp, g, mu, sign) / sum(g)


def bulk_fluctuations_e2h(field_T: ArrayLike, reading: Reading, rng: np.random.Generator) -> np.ndarray:
    """One device's aperiodic bulk conductance fluctuations (e²/h), zeros without a bulk."""
    b = np.asarray(field_T, dtype=float)
    bulk = reading.bulk
    if bulk is None:
        return np.zeros_like(b)
    return gaussian_fluctuations(b, bulk.fluctuation_rms_e2h(reading.length_nm),
                                 bulk.correlation_field_T(reading.length_nm, reading.field_angle_deg), rng)


def measured_resistance_ohm(surface_e2h: ArrayLike, channels: ArrayLike, field_T: ArrayLike, reading: Reading,
                            bulk_fluctuation_e2h: ArrayLike | None = None) -> np.ndarray:
    """The measured resistance in Ω of surface conductance ``surface_e2h`` at ``field_T`` (module docstring).

    Parameters
    ----------
    surface_e2h : array_like
        The wire's (thermally averaged) surface conductance G_s(B), e²/h.
    channels : array_like
        Its channel count N(B) (used by the four-terminal reading), broadcast against ``surface_e2h``.
    field_T : array_like
        Field of each point, T.
    bulk_fluctuation_e2h : array_like, optional
        A device's bulk fluctuations (:func:`bulk_fluctuations_e2h`); None for an ensemble-mean curve.
    """
    b = np.asarray(field_T, dtype=float)
    g_s = np.asarray(surface_e2h, dtype=float) + surface_background_e2h(b, reading)
    g_b = 0.0 if reading.bulk is None else reading.bulk.conductance_e2h(reading.length_nm)
    if bulk_fluctuation_e2h is not None:
        g_b = g_b + np.asarray(bulk_fluctuation_e2h, dtype=float)
    factor = classical_factor(b, float(np.mean(surface_e2h)), reading)
    if reading.terminals == 2:
        return RESISTANCE_QUANTUM_OHM / ((g_s + g_b) * factor) + reading.series_resistance_ohm
    if reading.terminals == 4:
        surface_conductance = RESISTANCE_QUANTUM_OHM / four_terminal_resistance_ohm(g_s, channels)
        return RESISTANCE_QUANTUM_OHM / ((surface_conductance + g_b) * factor)
    raise ValueError(f"terminals: {reading.terminals!r} is not allowed; use 2 or 4")


def relative_signal_factor(surface_e2h: float, channels: float, reading: Reading) -> float:
    """(ΔR/R)_measured / (ΔG_s/G_s) for a small change of the surface conductance (no background field).

    Two terminals: G_s/(G_s + G_b) × R_wire/(R_wire + R_series); four: (1/(1 − G_s/N)) × G_4/(G_4 + G_b) with
    G_4 = 1/R_4t of the surface — the dilution by the bulk and series resistance and the gain of the probes.
    """
    g_s = surface_e2h
    g_b = 0.0 if reading.bulk is None else reading.bulk.conductance_e2h(reading.length_nm)
    if reading.terminals == 2:
        r_wire = RESISTANCE_QUANTUM_OHM / (g_s + g_b)
        return g_s / (g_s + g_b) * r_wire / (r_wire + reading.series_resistance_ohm)
    g_4 = RESISTANCE_QUANTUM_OHM / float(four_terminal_resistance_ohm(g_s, channels))
    return (1.0 / (1.0 - g_s / channels)) * g_4 / (g_4 + g_b)
