"""Dephasing probes on slice chains: kwant, sum rules, the coherent limit, Onsager, Ohmic dephasing."""

from __future__ import annotations

import numpy as np
import pytest

from simsurface.models.modes import ModeTube
from simsurface.models.tube import SurfaceTube
from simsurface.transport import transmission
from simsurface.transport.chain import Lead, SliceChain
from simsurface.transport.probe_blocks import probe_layout
from simsurface.transport.probes import (dephased_conductance, dephased_transmission, floating_probe_transmission,
                                         terminal_matrix)

ENERGIES = np.array([14.0, 27.0])


def _lattice_chain(surface: str, flux: float = 0.3, seed: int = 1) -> SliceChain:
    kw = {"hbar_v_meV_nm": 330.0} if surface == "topological" else {"mass_ratio": 0.03}
    tube = SurfaceTube.from_geometry(surface, 40.0, 127.0, 45.0, max_energy_meV=40.0, **kw)
    pot = np.random.default_rng(seed).uniform(-50, 50, (tube.n_along, tube.n_around))
    return tube.chain(flux, potential_meV=pot)


def _mode_tube() -> ModeTube:
    return ModeTube.from_geometry(60.0, 280.0, 80.0, hbar_v_meV_nm=330.0, max_energy_meV=40.0)


def _mode_chain(flux: float = 0.3, seed: int = 2) -> SliceChain:
    tube = _mode_tube()
    pot = np.random.default_rng(seed).uniform(-100, 100, (tube.n_cells, tube.n_grid))
    return tube.chain(flux, potential_meV=pot)


def _kwant_terminal_matrix(chain: SliceChain, energy: float, eta: float, units_per_probe: int) -> np.ndarray:
    """T[k, l] from kwant: probes as self-energy leads (kwant.builder.SelfEnergyLead) on one site per slice."""
    import kwant

    plain = chain.at_energy(energy)
    n, n_sl = chain.size, chain.n_slices
    lat = kwant.lattice.chain(norbs=n)
    syst = kwant.Builder()
    for j in range(n_sl):
        syst[lat(j)] = plain.slice_hamiltonian(j)
    for j in range(1, n_sl):
        syst[lat(j), lat(j - 1)] = plain.coupling(j).conj().T
    # one lead cell on each side inside the system, so the chain's own lead couplings are kept
    syst[lat(-1)] = plain.left.onsite
    syst[lat(0), lat(-1)] = plain.coupling(0).conj().T
    syst[lat(n_sl)] = plain.right.onsite
    syst[lat(n_sl), lat(n_sl - 1)] = plain.coupling(n_sl).conj().T
    for lead, step in ((plain.left, -1), (plain.right, 1)):
        kl = kwant.Builder(kwant.TranslationalSymmetry((step,)))
        kl[lat(0)] = lead.onsite
        kl[lat(1), lat(0)] = lead.hopping.conj().T      # H_{j+1, j} = V†
        syst.attach_lead(kl)
    layout = probe_layout(chain, units_per_probe)
    eye = np.eye(n)
    for p in range(1, layout.n_probes + 1):
        units = np.flatnonzero(layout.unit_probe == p)
        if layout.kind == "slice":
            sites = [lat(int(u)) for u in units]
            sigma = -1j * eta * np.eye(n * units.size)
        else:
            slices = np.arange(units[0], units[-1] + 2)
            sites = [lat(int(s)) for s in slices]
            sigma = np.zeros((n * slices.size,) * 2, complex)
            for u in units - units[0]:
                blk = slice(u * n, (u + 2) * n)
                sigma[blk, blk] += -1j * eta * layout.cell_weight * np.kron(np.ones((2, 2)), eye)
        syst.leads.append(kwant.builder.SelfEnergyLead(lambda e, args=(), *, params=None, s=sigma: s, sites, ()))
    gf = kwant.greens_function(syst.finalized(), energy=energy)
    m = layout.n_probes
    order = [0] + list(range(2, m + 2)) + [1]          # kwant lead index of terminal 0 … M + 1
    out = np.zeros((m + 2, m + 2))
    for k in range(m + 2):
        for l in range(m + 2):
            if k != l:
                out[k, l] = gf.transmission(order[k], order[l])
    return out


@pytest.mark.parametrize("kind", ["topological", "trivial", "modes"])
def test_terminal_transmissions_match_kwant_with_self_energy_probes(kind):
    # reference: kwant's Green's-function solver with the probes attached as self-energy leads (kwant.builder.SelfEnergyLead)
    chain = _mode_chain() if kind == "modes" else _lattice_chain(kind)
    for e in (14.0,):
        ours = terminal_matrix(chain, [e], 3.0, units_per_probe=4)[0]
        ref = _kwant_terminal_matrix(chain, e, 3.0, 4)
        assert ours.shape[0] >= 5
        np.testing.assert_allclose(ours, ref, atol=1e-8)


def _chain_1d(n_sites: int, hopping_meV: float = 1.0) -> SliceChain:
    """Clean one-channel chain, on-site 0, hopping −t (lead identical)."""
    lead = Lead(np.zeros((1, 1)), -hopping_meV * np.ones((1, 1)))
    zero = np.array([0])
    return SliceChain(1, zero, zero, np.zeros((n_sites, 1), complex), zero, zero,
                      -hopping_meV * np.ones((n_sites + 1, 1), complex), lead, lead)


@pytest.mark.parametrize("kind", ["topological", "trivial", "modes"])
def test_weak_dephasing_limit_equals_coherent_transmission(kind):
    # L_phi -> infinity: the probes decouple; reference: the slice engine and kwant's scattering solver
    # on the same chain (docs/engine.md), agreement to 1e-8 asked by the issue
    chain = _mode_chain() if kind == "modes" else _lattice_chain(kind)
    coherent = transmission(chain, ENERGIES)
    ref = transmission(chain, ENERGIES, engine="kwant")
    for units in (1, 5):
        weak = dephased_transmission(chain, ENERGIES, 1e-11, units)
        np.testing.assert_allclose(weak, coherent, atol=1e-8)
        np.testing.assert_allclose(weak, ref, atol=1e-8)
    assert np.all(np.abs(coherent - dephased_transmission(chain, ENERGIES, 1.0, 2)) > 1e-3)   # the probes act


@pytest.mark.parametrize("kind", ["topological", "trivial", "modes"])
def test_current_is_conserved_at_every_terminal(kind):
    # sum rule of a multi-terminal conductor: sum_q T_kq = sum_q T_qk for every terminal k (current
    # conservation; Büttiker, PRL 57, 1761 (1986)); the two-terminal result is the same read from either lead
    chain = _mode_chain() if kind == "modes" else _lattice_chain(kind)
    t = terminal_matrix(chain, ENERGIES, 2.5, units_per_probe=3)
    scale = t.sum(axis=-1).max()
    np.testing.assert_allclose(t.sum(axis=-1), t.sum(axis=-2), atol=1e-10 * scale)
    assert np.all(t >= -1e-12)
    mirrored = t[:, ::-1, ::-1]                      # the right lead as terminal 0
    np.testing.assert_allclose(floating_probe_transmission(t), floating_probe_transmission(mirrored), atol=1e-10)


def test_dephased_mode_tube_keeps_onsager_symmetry():
    # two-terminal G(Φ) = G(−Φ) with floating probes (Büttiker, IBM J. Res. Dev. 32, 317 (1988): the
    # reduced two-terminal conductance keeps the reciprocity of the full multi-terminal matrix)
    tube = _mode_tube()
    pot = np.random.default_rng(5).uniform(-100, 100, (tube.n_cells, tube.n_grid))
    for flux in (0.17, 0.41):
        g_plus = dephased_conductance(tube.chain(flux, potential_meV=pot), ENERGIES, 2.0, 2)
        g_minus = dephased_conductance(tube.chain(-flux, potential_meV=pot), ENERGIES, 2.0, 2)
        np.testing.assert_allclose(g_plus, g_minus, atol=1e-10)


def test_single_probe_reduces_to_buttiker_three_terminal_formula():
    # one floating probe: T_eff = T_21 + T_2p T_p1 / (T_p1 + T_p2) (Büttiker, PRB 33, 3020 (1986))
    t = np.array([[0.0, 0.3, 0.5], [0.4, 0.0, 0.2], [0.45, 0.25, 0.0]])
    expected = t[2, 0] + t[2, 1] * t[1, 0] / (t[1, 0] + t[1, 2])
    assert floating_probe_transmission(t) == pytest.approx(expected, rel=1e-14)


@pytest.mark.parametrize("eta_meV", [0.002, 0.01])
def test_uniform_dephasing_of_a_clean_chain_gives_ohmic_resistance(eta_meV):
    # one channel, probes with rate 2η/ħ on every site, half of what they absorb re-emitted backwards:
    # backscattering length ħv/η, T = 1 / (1 + N a η / ħv) with ħv = 2 t a sin(ka) (Boltzmann; the
    # Ohmic length dependence of dephasing probes: D'Amato & Pastawski, PRB 41, 7411 (1990), from memory)
    energies = np.array([0.0, 1.0])
    hbar_v = 2 * np.sin(np.arccos(-energies / 2))
    for n_sites in (200, 800):
        t = dephased_transmission(_chain_1d(n_sites), energies, eta_meV)
        np.testing.assert_allclose(t, 1 / (1 + n_sites * eta_meV / hbar_v), rtol=2e-5)


def test_probe_units_stay_decoupled_from_staggered_solutions_of_the_mode_tube():
    # a clean mode tube: the coherent part is transmitted, the staggered solutions (one per mode) stay at
    # T = 1 and are removed; with weak dephasing G stays below the clean channel count and above zero
    tube = _mode_tube()
    chain = tube.chain(0.25)
    g = dephased_transmission(chain, ENERGIES, 0.5, 2)
    clean = transmission(chain, ENERGIES)
    assert np.all(g < clean) and np.all(g > 0.5 * clean)


def test_probe_layout_splits_units_evenly_and_refuses_other_overlaps():
    chain = _mode_chain()
    layout = probe_layout(chain, 4)
    assert layout.kind == "cell" and layout.n_units == chain.n_slices - 1
    sizes = np.bincount(layout.unit_probe)[1:]
    assert sizes.max() - sizes.min() <= 1 and sizes.max() <= 4
    odd = SliceChain(chain.size, chain.onsite_rows, chain.onsite_cols, chain.onsite_values, chain.coupling_rows,
                     chain.coupling_cols, chain.coupling_values, chain.left, chain.right,
                     onsite_overlap=chain.onsite_overlap * 1.5, coupling_overlap=chain.coupling_overlap)
    with pytest.raises(ValueError, match="two-point averaging overlap"):
        probe_layout(odd, 1)
    with pytest.raises(ValueError, match="eta"):
        dephased_transmission(chain, ENERGIES, -1.0)
