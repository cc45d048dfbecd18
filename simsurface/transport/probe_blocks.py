"""Dense blocks of a slice chain with dephasing probes: where the probes couple and how strongly.

A dephasing probe is a reservoir attached to the wire through a broadening Γ (Büttiker, PRB 33, 3020
(1986); D'Amato & Pastawski, PRB 41, 7411 (1990)). Here every piece of the wire is coupled to a probe
with the same strength η and the same matrix in every basis, so that the total self-energy of the probes is

    Σ_φ = −iη P_wire,

P_wire being the metric of the wire's orbitals: the identity on a plain chain (every slice of the
scattering region, all orbitals), the overlap P restricted to the cells of the wire on an energy-dependent
chain (E P − H ψ = 0, :meth:`SliceChain.at_energy`). Either way the coherent propagation inside the wire
is that of the complex energy E + iη, i.e. every amplitude decays at the rate η/ħ and every interference
term between two paths at 2η/ħ = 1/τ_φ, whatever the basis (sites of a lattice tube, angular-momentum modes
of the mode tube).

Units of coupling ("probe units"):

* plain chain: one unit per slice j, Γ_j = 2η·1 on the slice;
* energy-dependent chain whose overlap is the two-point average of a tangent discretization (onsite 2c·1,
  neighbours c·1; :mod:`simsurface.models.modes`, c = 1/4): one unit per cell between slices j and j+1,
  Γ = 2η c [[1, 1], [1, 1]] on the pair, i.e. Γ = 2η W†W with W ψ = √c (ψ_j + ψ_{j+1}). The cells sum to
  2η P_wire. W annihilates the staggered solutions ψ_j = (−1)^j φ of the discretization, so these
  unphysical, decoupled channels stay decoupled from the probes (and the chain's ``decoupled_channels``
  are still transmitted with probability one).

Other overlaps are refused (ValueError). A probe is a run of consecutive units (``units_per_probe``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .chain import Lead, SliceChain
from .leads import lead_terms

__all__ = ["ProbeLayout", "probe_layout", "ChainBlocks", "chain_blocks"]


@dataclass(frozen=True)
class ProbeLayout:
    """Where the probes of a chain couple.

    Attributes
    ----------
    kind : {"slice", "cell"}
        Units are single slices (plain chains) or cells between neighbouring slices (overlap chains).
    n_slices : int
    cell_weight : float
        c of the two-point overlap (1 for slice units).
    unit_probe : ndarray of int, shape (n_units,)
        Probe index 1 … M of every unit (terminal 0 is the left lead, M + 1 the right lead); unit u sits
        on slice u (kind "slice") or on slices u, u + 1 (kind "cell").
    """

    kind: str
    n_slices: int
    cell_weight: float
    unit_probe: np.ndarray

    @property
    def n_probes(self) -> int:
        return int(self.unit_probe.max(initial=0))

    @property
    def n_units(self) -> int:
        return int(self.unit_probe.size)


def _two_point_weight(chain: SliceChain) -> float:
    """c of an overlap that is 2c·1 on every slice and c·1 between neighbours (leads included)."""
    n = chain.size
    on = _dense_pattern(chain.onsite_rows, chain.onsite_cols, chain.onsite_overlap, n)
    cp = _dense_pattern(chain.coupling_rows, chain.coupling_cols, chain.coupling_overlap, n)
    c = float(cp[0, 0, 0].real)
    eye = np.eye(n)
    leads_ok = all(np.allclose(lead.onsite_overlap, 2 * c * eye, atol=1e-14)
                   and np.allclose(lead.hopping_overlap, c * eye, atol=1e-14) for lead in (chain.left, chain.right))
    if not (c > 0 and np.allclose(on, 2 * c * eye, atol=1e-14) and np.allclose(cp, c * eye, atol=1e-14) and leads_ok):
        raise ValueError("dephasing probes on an energy-dependent chain need the two-point averaging overlap "
                         "(2c on every slice, c between neighbours) of a tangent discretization")
    return c


def probe_layout(chain: SliceChain, units_per_probe: int = 1) -> ProbeLayout:
    """Probe layout of ``chain``: consecutive runs of ``units_per_probe`` units (the last runs are made as
    even as possible: the units are split into ceil(n_units / units_per_probe) nearly equal probes).

    Parameters
    ----------
    chain : SliceChain
    units_per_probe : int
        Slices (plain chain) or cells (overlap chain) per probe, ≥ 1.
    """
    if int(units_per_probe) < 1:
        raise ValueError("units_per_probe must be >= 1")
    n = chain.n_slices
    if chain.energy_dependent:
        kind, weight, n_units = "cell", _two_point_weight(chain), n - 1
    else:
        kind, weight, n_units = "slice", 1.0, n
    n_probes = -(-n_units // int(units_per_probe)) if n_units else 0
    unit_probe = np.zeros(n_units, int)
    for p, part in enumerate(np.array_split(np.arange(n_units), n_probes) if n_probes else []):
        unit_probe[part] = p + 1
    return ProbeLayout(kind, n, weight, unit_probe)


@dataclass(frozen=True, eq=False)
class ChainBlocks:
    """A = E P − H − Σ_L − Σ_R + iη P_wire of K points as dense blocks (the inverse of A is G).

    Attributes
    ----------
    diagonal : ndarray, shape (K, N, n, n)
        A_jj.
    upper : ndarray, shape (K, N − 1, n, n)
        A_{j, j+1} (entry j couples slice j to slice j + 1).
    lower : ndarray, shape (K, N − 1, n, n)
        A_{j+1, j}.
    gamma_left, gamma_right : ndarray, shape (K, n, n)
        Broadenings i(Σ − Σ†) of the leads on the first and last slice.
    """

    diagonal: np.ndarray
    upper: np.ndarray
    lower: np.ndarray
    gamma_left: np.ndarray
    gamma_right: np.ndarray


def _dense_pattern(rows: np.ndarray, cols: np.ndarray, values: np.ndarray, n: int) -> np.ndarray:
    """Dense (…, n, n) matrices from pattern values of shape (…, nnz); duplicates are summed."""
    values = np.asarray(values)
    lead_shape = values.shape[:-1]
    flat = np.zeros((int(np.prod(lead_shape, dtype=int)), n * n), complex)
    np.add.at(flat, (slice(None), np.asarray(rows) * n + np.asarray(cols)), values.reshape(flat.shape[0], -1))
    return flat.reshape(lead_shape + (n, n))


def _lead_self_energies(lead_left: Lead, lead_right: Lead, c_left: np.ndarray, c_right: np.ndarray,
                        energy: float) -> tuple[np.ndarray, np.ndarray]:
    """Σ_L = c_0† g_L c_0 on slice 0 and Σ_R = c_N g_R c_N† on slice N − 1 (plain leads at ``energy``).

    g_L = (E − H0 − V† F̃)⁻¹ is the surface Green's function of the left lead (cells …, −2, −1), g_R that of
    the right lead (cells N, N + 1, …), from the lead terms of :mod:`simsurface.transport.leads`.
    """
    left = lead_terms(lead_left, energy)
    right = left if lead_right is lead_left else lead_terms(lead_right, energy)
    n = lead_left.onsite.shape[0]
    g_left = np.linalg.inv(energy * np.eye(n) - lead_left.onsite - left.left_self_term)
    sigma_left = c_left.conj().T @ g_left @ c_left
    sigma_right = c_right @ right.right_surface_green @ c_right.conj().T
    return sigma_left, sigma_right


def chain_blocks(chain: SliceChain, energies_meV: np.ndarray, dephasing_meV: np.ndarray,
                 layout: ProbeLayout) -> ChainBlocks:
    """Dense blocks of the dephased scattering problem at K energies of one chain.

    Parameters
    ----------
    chain : SliceChain
        Plain or energy-dependent (two-point overlap) chain.
    energies_meV : ndarray, shape (K,)
    dephasing_meV : ndarray, shape (K,)
        η ≥ 0 at each energy (the probes' total self-energy is −iη P_wire).
    layout : ProbeLayout
        From :func:`probe_layout` (fixes which overlap the probes use).
    """
    e = np.asarray(energies_meV, float)
    eta = np.asarray(dephasing_meV, float)
    n, n_sl = chain.size, chain.n_slices
    h = _dense_pattern(chain.onsite_rows, chain.onsite_cols, chain.onsite_values, n)          # (N, n, n)
    c = _dense_pattern(chain.coupling_rows, chain.coupling_cols, chain.coupling_values, n)    # (N + 1, n, n)
    eye = np.eye(n)
    if chain.energy_dependent:
        p_on = _dense_pattern(chain.onsite_rows, chain.onsite_cols, chain.onsite_overlap, n)
        p_cp = _dense_pattern(chain.coupling_rows, chain.coupling_cols, chain.coupling_overlap, n)
        w = layout.cell_weight
        wire_on = np.full(n_sl, 2 * w)
        wire_on[[0, -1]] = w
        wire_cp = w
        if n_sl == 1:
            wire_on[:] = 0.0
    else:
        p_on = np.broadcast_to(eye, (n_sl, n, n))
        p_cp = np.zeros((n_sl + 1, n, n))
        wire_on = np.ones(n_sl)
        wire_cp = 0.0
    k = e.size
    diag = e[:, None, None, None] * p_on[None] - h[None] + 1j * (eta[:, None] * wire_on[None])[:, :, None, None] * eye
    coup = e[:, None, None, None] * p_cp[None] - c[None]                                     # (K, N + 1, n, n)
    inner = coup[:, 1:-1]
    upper = inner + 1j * wire_cp * eta[:, None, None, None] * eye
    lower = np.conj(np.swapaxes(inner, -1, -2)) + 1j * wire_cp * eta[:, None, None, None] * eye
    gam_l = np.empty((k, n, n), complex)
    gam_r = np.empty((k, n, n), complex)
    for i, ei in enumerate(e):
        left = chain.left.at_energy(ei)
        right = left if chain.right is chain.left else chain.right.at_energy(ei)
        # H_eff couplings to the leads: −(E P − H) = c − E P_c
        s_l, s_r = _lead_self_energies(left, right, -coup[i, 0], -coup[i, -1], float(ei))
        diag[i, 0] -= s_l
        diag[i, -1] -= s_r
        gam_l[i] = 1j * (s_l - s_l.conj().T)
        gam_r[i] = 1j * (s_r - s_r.conj().T)
    return ChainBlocks(diag, upper, lower, gam_l, gam_r)
