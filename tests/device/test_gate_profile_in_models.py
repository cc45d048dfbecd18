"""The gate's circumferential potential handed to the mode tube (electrostatics → models, end to end).

At k = 0 the Dirac tube's transverse operator ħv σ_y q + U(s) splits, in the eigenbasis of σ_y, into two
first-order operators ±ħv(−i∂_s + …) + U(s); a phase e^{∓i∫U ds/ħv} removes a zero-mean U exactly, so the k = 0
energies do not move (derivation, common practice). At k ≠ 0 the ħv k σ_x term couples the two and the profile
splits the pairs that are degenerate in a uniform tube (l and −l − 1 at Φ = 0; Zhang & Vishwanath, PRL 105,
206601 (2010)): the subband bottoms move away from k = 0 and down — how a back gate shifts the subband edges
and with them the h/e phase.
"""

import numpy as np

from simsurface.device.electrostatics import CrossSectionElectrostatics, GateStack
from simsurface.device.surface_charge import SurfaceGas
from simsurface.geometry import CrossSection
from simsurface.models.modes import ModeTube

K_PER_NM = np.linspace(-0.08, 0.08, 81)


def _bands(section, profile, flux):
    tube = ModeTube.from_geometry(section.perimeter_nm, section.area_nm2, 10.0, hbar_v_meV_nm=329.0,
                                  max_energy_meV=80.0, section=section, circumferential_potential_meV=profile)
    bands = tube.clean_bands_meV(flux, K_PER_NM)
    lowest_positive = [j for j in range(bands.shape[1]) if 0 < bands[40, j] < 25.0]
    return bands[:, lowest_positive]


def test_back_gate_profile_keeps_k0_energies_and_splits_pairs_at_finite_k():
    section = CrossSection.circle(100.0, 1.5)
    response = CrossSectionElectrostatics(section, GateStack(300.0, 3.9, 100.0), grid_spacing_nm=5.0).solve(
        SurfaceGas("topological", 329.0), 20.0, 1.0)
    assert 5.0 < np.ptp(response.potential_meV) < 60.0  # measured 10.8 meV
    uniform = _bands(section, None, 0.0)
    gated = _bands(section, tuple(response.potential_meV), 0.0)
    assert np.allclose(gated[40], uniform[40], atol=1e-6)  # k = 0: a zero-mean potential is a gauge
    at_k = 60  # k = 0.04 /nm
    assert np.allclose(uniform[at_k, ::2], uniform[at_k, 1::2], atol=1e-6)  # pairs without the profile
    assert np.max(np.abs(gated[at_k, ::2] - gated[at_k, 1::2])) > 1.0  # measured 4.7 meV
    assert gated.min() < uniform.min() - 0.3  # the lowest subband's bottom moves down (3.39 -> 2.52 meV)
