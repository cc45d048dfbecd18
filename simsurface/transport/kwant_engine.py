"""kwant's scattering solver as a reference engine for any :class:`SliceChain`.

The chain is rebuilt as a kwant system: site (j, s) holds orbitals s·q … s·q + q − 1 of slice j, with q
orbitals per site (``chain.info["orbitals_per_site"]`` when the model states it, else 1). One lead cell
on each side is kept inside the scattering region so that a coupling between system and lead that
differs from the lead's own hopping is represented exactly. kwant then solves the scattering problem
with its own mode solver and sparse direct solver (MUMPS when available), independently of
:mod:`simsurface.transport.slices`.

The finalized system depends only on the chain's sparsity pattern: every matrix element is a value
function that reads the chain passed as ``params={"chain": chain}``. A system built once therefore
serves every flux value and disorder realization of a model (the way kwant is meant to be used).
"""

from __future__ import annotations

import hashlib
from collections import OrderedDict, defaultdict

import numpy as np
from numpy.typing import ArrayLike

from .chain import SliceChain


def _grouped(rows, cols, q):
    """{(site_row, site_col): (entry indices, flat position in the q × q block, has duplicates)}."""
    groups = defaultdict(list)
    for k, (r, c) in enumerate(zip(rows, cols)):
        groups[(int(r) // q, int(c) // q)].append(k)
    out = {}
    for key, ks in groups.items():
        ks = np.array(ks)
        pos = (np.asarray(rows)[ks] % q) * q + np.asarray(cols)[ks] % q
        out[key] = (ks, pos, np.unique(pos).size < pos.size)
    return out


def _block(values: np.ndarray, group, q: int) -> np.ndarray:
    idx, pos, duplicates = group
    m = np.zeros(q * q, complex)
    if duplicates:
        np.add.at(m, pos, values[idx])
    else:
        m[pos] = values[idx]
    return m.reshape(q, q)


def build_kwant_system(chain: SliceChain, orbitals_per_site: int | None = None,
                       constant_couplings: bool = False):
    """Finalized kwant system with the pattern of ``chain``; values come from ``params["chain"]``.

    Parameters
    ----------
    chain : SliceChain
        Any chain with the pattern (size, slice count, sparsity) of the chains to be solved.
    orbitals_per_site : int, optional
        Orbitals grouped into one kwant site; default ``chain.info.get("orbitals_per_site", 1)``.
    constant_couplings : bool
        Store the couplings between slices as constants taken from ``chain`` instead of value functions
        (what a kwant user does for hoppings that no parameter changes); :func:`transmission` then
        refuses chains whose couplings differ.
    """
    import kwant

    q = int(orbitals_per_site or chain.info.get("orbitals_per_site", 1))
    if chain.size % q:
        raise ValueError("orbitals_per_site must divide the slice size")
    n_sites, n_slices = chain.size // q, chain.n_slices
    lat = kwant.lattice.square(a=1, norbs=q)
    onsite_groups = _grouped(chain.onsite_rows, chain.onsite_cols, q)
    coupling_groups = _grouped(chain.coupling_rows, chain.coupling_cols, q)

    def block(values, group):
        return _block(values, group, q)

    def onsite(site, chain):
        j, s = site.tag
        return block(chain.onsite_values[j], onsite_groups[(s, s)])

    def slice_hopping(site1, site2, chain):  # H[site1, site2] within slice j
        j, s1 = site1.tag
        return block(chain.onsite_values[j], onsite_groups[(s1, site2.tag[1])])

    def axial_hopping(site1, site2, chain):  # site1 in slice j, site2 in slice j − 1: (c_j)†
        j, s1 = site1.tag
        return block(chain.coupling_values[j], coupling_groups[(site2.tag[1], s1)]).conj().T

    def lead_cell(side):
        def value(site, chain):
            s = site.tag[1]
            h = getattr(chain, side).onsite
            return h[s * q:(s + 1) * q, s * q:(s + 1) * q]

        def hop(site1, site2, chain):
            h = getattr(chain, side).onsite
            a, b = site1.tag[1], site2.tag[1]
            return h[a * q:(a + 1) * q, b * q:(b + 1) * q]

        return value, hop

    def lead_hopping(side):  # site1 in cell j + 1, site2 in cell j: (V[site2, site1])†
        def value(site1, site2, chain):
            v = getattr(chain, side).hopping
            a, b = site2.tag[1], site1.tag[1]
            return v[a * q:(a + 1) * q, b * q:(b + 1) * q].conj().T
        return value

    def cell_pairs(mat):
        nz = np.abs(mat) > 0
        pairs = nz.reshape(n_sites, q, n_sites, q).any(axis=(1, 3))
        return [(int(a), int(b)) for a, b in zip(*np.nonzero(pairs))]

    syst = kwant.Builder()
    for j in range(n_slices):
        for s in range(n_sites):
            syst[lat(j, s)] = onsite
    for (s1, s2) in onsite_groups:
        if s1 < s2:
            for j in range(n_slices):
                syst[lat(j, s1), lat(j, s2)] = slice_hopping

    leads = []
    for side, j_cell, direction in (("left", -1, -1), ("right", n_slices, +1)):
        lead = getattr(chain, side)
        value, hop = lead_cell(side)
        sym = kwant.TranslationalSymmetry((direction, 0))
        kl = kwant.Builder(sym)
        for s in range(n_sites):
            syst[lat(j_cell, s)] = value
            kl[lat(0, s)] = value
        for (a, b) in cell_pairs(lead.onsite):
            if a < b:
                syst[lat(j_cell, a), lat(j_cell, b)] = hop
                kl[lat(0, a), lat(0, b)] = hop
        for (a, b) in cell_pairs(lead.hopping):  # V couples site a of cell j to site b of cell j + 1
            kl[lat(1, b), lat(0, a)] = lead_hopping(side)
        leads.append(kl)
    for (s1, s2), group in coupling_groups.items():  # c_j couples site s1 of slice j − 1 to s2 of slice j
        for j in range(n_slices + 1):
            syst[lat(j, s2), lat(j - 1, s1)] = (block(chain.coupling_values[j], group).conj().T
                                                if constant_couplings else axial_hopping)
    for kl in leads:
        syst.attach_lead(kl)
    fsyst = syst.finalized()
    fsyst.simsurface_constant_couplings = chain.coupling_values.copy() if constant_couplings else None
    return fsyst


#: finalized systems by chain pattern: a sweep over flux or disorder reuses one system, as kwant intends
_SYSTEMS: OrderedDict = OrderedDict()
_MAX_CACHED_SYSTEMS = 4


def _pattern_key(chain: SliceChain) -> str:
    h = hashlib.blake2b(digest_size=16)
    for a in (chain.onsite_rows, chain.onsite_cols, chain.coupling_rows, chain.coupling_cols,
              chain.left.onsite != 0, chain.left.hopping != 0, chain.right.onsite != 0, chain.right.hopping != 0):
        h.update(np.ascontiguousarray(a).tobytes())
    h.update(repr((chain.size, chain.n_slices, chain.info.get("orbitals_per_site", 1))).encode())
    return h.hexdigest()


def _cached_system(chain: SliceChain):
    key = _pattern_key(chain)
    if key in _SYSTEMS:
        _SYSTEMS.move_to_end(key)
        return _SYSTEMS[key]
    fsyst = build_kwant_system(chain)
    _SYSTEMS[key] = fsyst
    if len(_SYSTEMS) > _MAX_CACHED_SYSTEMS:
        _SYSTEMS.popitem(last=False)
    return fsyst


def transmission(chain: SliceChain, energies_meV: ArrayLike, system=None) -> np.ndarray:
    """Transmission from lead 0 (left) to lead 1 (right) computed by kwant.

    Parameters
    ----------
    chain : SliceChain
    energies_meV : array_like
    system : finalized kwant system, optional
        From :func:`build_kwant_system` for a chain of the same pattern; when omitted, a system built
        earlier for the same pattern is reused (a few are kept), else one is built.
    """
    import kwant

    if chain.energy_dependent:
        raise ValueError("energy-dependent chain: solve chain.at_energy(E) or use engines.transmission")
    fsyst = system if system is not None else _cached_system(chain)
    fixed = getattr(fsyst, "simsurface_constant_couplings", None)
    if fixed is not None and not np.array_equal(fixed, chain.coupling_values):
        raise ValueError("this kwant system holds other couplings as constants; rebuild it for this chain")
    energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
    out = np.empty(energies.shape)
    for i, e in np.ndenumerate(energies):
        out[i] = kwant.smatrix(fsyst, energy=float(e), params={"chain": chain}).transmission(1, 0)
    return out


def transmission_eigenvalues(chain: SliceChain, energy_meV: float) -> np.ndarray:
    """Transmission eigenvalues (of t†t, left -> right) at one energy, computed by kwant; ascending.

    Energy-dependent chains are solved as ``chain.at_energy(E)``. Their ``decoupled_channels`` are
    removed: they are the propagating modes of each lead at momentum ±π, and the part of t that couples
    them to the other channels must vanish (checked to 1e-8; ArithmeticError otherwise).

    Parameters
    ----------
    chain : SliceChain
    energy_meV : float

    Returns
    -------
    ndarray, shape (p,)
        p = propagating channels per direction, minus ``chain.decoupled_channels``.
    """
    import kwant

    e = float(energy_meV)
    plain = chain.at_energy(e)
    smat = kwant.smatrix(_cached_system(plain), energy=e, params={"chain": plain})
    t = smat.submatrix(1, 0)
    if chain.decoupled_channels:
        keep = []
        for lead, part in ((0, 0), (1, 1)):       # incoming modes of lead 0, outgoing modes of lead 1
            k = np.asarray(smat.lead_info[lead].momenta)
            half = k.size // 2
            k = k[:half] if part == 0 else k[half:]
            physical = np.abs(np.abs(k) - np.pi) > 1e-6
            if k.size - physical.sum() != chain.decoupled_channels:
                raise ArithmeticError("the lead does not carry the declared decoupled channels at momentum ±π")
            keep.append(physical)
        cross = max(np.abs(t[np.ix_(keep[1], ~keep[0])]).max(initial=0),
                    np.abs(t[np.ix_(~keep[1], keep[0])]).max(initial=0))
        if cross > 1e-8:
            raise ArithmeticError(f"the decoupled channels couple to the others (|t| = {cross:.2e})")
        t = t[np.ix_(keep[1], keep[0])]
    return np.sort(np.linalg.svd(t, compute_uv=False) ** 2)
