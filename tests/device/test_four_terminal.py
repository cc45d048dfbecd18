"""Two- and four-terminal resistance of a wire from its transmission.

The four-terminal formula R_4t = (h/e²)(1/T − 1/N) is checked against a direct multi-terminal kwant
calculation: a wire with a disordered scatterer between two weakly coupled voltage probes, the probe voltages
from the full conductance matrix with Büttiker's multi-terminal formulas (Büttiker, PRL 57, 1761 (1986)),
I_i = Σ_j G_ij V_j with zero current into the probes.

The formula assumes probes that couple equally to every channel (per unit incident flux). A local tunnel probe
couples to a channel in proportion to its density of states, i.e. to 1/v (Büttiker, Imry, Landauer & Pinhas,
PRB 31, 6207 (1985)); the test wire therefore has channels of equal velocity outside the scatterer (decoupled
chains, mixed inside the scatterer by transverse hopping and Anderson disorder), and the probes couple through
a smooth (Hann) window of many wavelengths so that the standing-wave interference averages out.
"""

import numpy as np
import pytest

from simsurface.device.four_terminal import (four_terminal_enhancement, four_terminal_resistance_ohm,
                                             resistance_ohm, two_terminal_resistance_ohm)
from simsurface.units import RESISTANCE_QUANTUM_OHM

kwant = pytest.importorskip("kwant")


def _wire(width, seed, probes, energy, coupling=0.005, length=200, windows=((5, 95), (105, 195)),
          scatterer=(95, 105), anderson_width=2.0):
    """Chains along x (onsite 2, hopping −1), mixed only inside the scatterer; probes: one chain along z per
    site of a window, hopping −coupling·sqrt(Hann) to the wire, all chains of a window in one lead."""
    lat = kwant.lattice.cubic(norbs=1)
    rng = np.random.default_rng(seed)
    syst = kwant.Builder()
    for x in range(length):
        for y in range(width):
            inside = scatterer[0] <= x < scatterer[1]
            syst[lat(x, y, 0)] = 2.0 + (rng.uniform(-anderson_width / 2, anderson_width / 2) if inside else 0.0)
    syst[kwant.builder.HoppingKind((1, 0, 0), lat)] = -1.0
    for x in range(*scatterer):
        for y in range(width - 1):
            syst[lat(x, y, 0), lat(x, y + 1, 0)] = -1.0
    for direction in (-1, 1):
        lead = kwant.Builder(kwant.TranslationalSymmetry((direction, 0, 0)))
        for y in range(width):
            lead[lat(0, y, 0)] = 2.0
        lead[kwant.builder.HoppingKind((1, 0, 0), lat)] = -1.0
        syst.attach_lead(lead)
    if probes:
        for a, b in windows:
            xs = np.arange(a, b)
            weight = np.sin(np.pi * (xs - a + 0.5) / (b - a)) ** 2
            lead = kwant.Builder(kwant.TranslationalSymmetry((0, 0, 1)))
            for x, w in zip(xs, weight):
                for y in range(width):
                    syst[lat(x, y, 1)] = energy
                    syst[lat(x, y, 0), lat(x, y, 1)] = -coupling * np.sqrt(w)
                    lead[lat(x, y, 0)] = energy
            lead[kwant.builder.HoppingKind((0, 0, 1), lat)] = -1.0
            syst.attach_lead(lead)
    return syst.finalized()


def _kwant_four_terminal_h_e2(width, seed, energy):
    """(V_probe1 − V_probe2)/I in h/e² from kwant's conductance matrix; leads: 0 source, 1 drain, 2-3 probes."""
    smatrix = kwant.smatrix(_wire(width, seed, True, energy), energy)
    g = smatrix.conductance_matrix()
    v_probes = np.linalg.solve(g[np.ix_([2, 3], [2, 3])], -g[[2, 3], 0])  # V0 = 1, V1 = 0, I2 = I3 = 0
    current = g[0, 0] + g[0, [2, 3]] @ v_probes
    channels = smatrix.num_propagating(0)
    transmission = kwant.smatrix(_wire(width, seed, False, energy), energy).transmission(1, 0)
    return (v_probes[0] - v_probes[1]) / current, transmission, channels


@pytest.mark.parametrize("width,seed", [(3, 1), (3, 2), (1, 2)])
def test_four_terminal_formula_matches_kwant_with_weak_probes(width, seed):
    r4_h_e2, transmission, channels = _kwant_four_terminal_h_e2(width, seed, energy=1.3)
    assert channels == width
    predicted = four_terminal_resistance_ohm(transmission, channels) / RESISTANCE_QUANTUM_OHM
    two_terminal = two_terminal_resistance_ohm(transmission) / RESISTANCE_QUANTUM_OHM
    # measured: |difference| 2e-4 (3 channels), 6e-4 (1 channel) h/e² at coupling 0.005, falling as coupling²
    assert abs(r4_h_e2 - predicted) < 2e-3
    # and the four-terminal reading is clearly not the two-terminal one (which keeps h/(e²N))
    assert abs(r4_h_e2 - two_terminal) > 100 * abs(r4_h_e2 - predicted)


def test_clean_wire_has_zero_four_terminal_resistance():
    # T = N: no scatterer between non-invasive probes (Landauer; Büttiker 1986)
    assert four_terminal_resistance_ohm(6.0, 6) == pytest.approx(0.0, abs=1e-9)
    assert two_terminal_resistance_ohm(6.0, 150.0) == pytest.approx(RESISTANCE_QUANTUM_OHM / 6 + 150.0)


def test_four_terminal_relative_change_is_larger_by_one_over_one_minus_t_over_n():
    # T = 1.2, N = 6 (a QX-32-like wire): ΔR/R grows by 1/(1 − 0.2) = 1.25; checked by a finite difference
    t, n, dt = 1.2, 6.0, 1e-6
    rel4 = (four_terminal_resistance_ohm(t + dt, n) / four_terminal_resistance_ohm(t, n)) - 1
    rel2 = (two_terminal_resistance_ohm(t + dt) / two_terminal_resistance_ohm(t)) - 1
    assert rel4 / rel2 == pytest.approx(1.25, rel=1e-5)
    assert four_terminal_enhancement(t, n) == pytest.approx(1.25)


def test_resistance_dispatches_on_terminals_and_refuses_three():
    assert resistance_ohm(2.0, 4, 4) == pytest.approx(RESISTANCE_QUANTUM_OHM / 4)
    assert resistance_ohm(2.0, 4, 2, 100.0) == pytest.approx(RESISTANCE_QUANTUM_OHM / 2 + 100.0)
    with pytest.raises(ValueError, match="terminals"):
        resistance_ohm(2.0, 4, 3)
