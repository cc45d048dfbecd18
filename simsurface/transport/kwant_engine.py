"""kwant's scattering solver as a reference engine for any :class:`SliceChain`.

The chain is rebuilt as a kwant system with one orbital per site: site (j, i) is orbital i of slice j.
One lead cell on each side is kept inside the scattering region so that a coupling between system and
lead that differs from the lead's own hopping is represented exactly. kwant then solves the scattering
problem with its own mode solver and sparse direct solver (MUMPS when available), independently of
:mod:`simsurface.transport.slices`.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .chain import Lead, SliceChain


def build_kwant_system(chain: SliceChain):
    """Finalized kwant system equivalent to ``chain`` (one orbital per site)."""
    import kwant

    lat = kwant.lattice.square(a=1, norbs=1)
    syst = kwant.Builder()
    n_slices = chain.n_slices

    def add_block(builder, j_row: int, j_col: int, rows, cols, values, hermitian_half: bool) -> None:
        for r, c, val in zip(rows, cols, values):
            if val == 0:
                continue
            if hermitian_half:
                if r == c:
                    builder[lat(j_row, int(r))] = complex(val).real
                    continue
                if r > c:
                    continue
            builder[lat(j_row, int(r)), lat(j_col, int(c))] = complex(val)

    def dense_block(builder, j_row, j_col, mat, hermitian_half):
        rows, cols = np.nonzero(mat)
        if hermitian_half:
            diag = np.arange(mat.shape[0])
            for i in diag:
                builder[lat(j_row, int(i))] = float(mat[i, i].real)
        add_block(builder, j_row, j_col, rows, cols, mat[rows, cols], hermitian_half)

    # explicit lead cells at j = −1 and j = N
    dense_block(syst, -1, -1, chain.left.onsite, True)
    dense_block(syst, n_slices, n_slices, chain.right.onsite, True)
    for j in range(n_slices):
        for i in range(chain.size):
            syst[lat(j, i)] = 0.0
        add_block(syst, j, j, chain.onsite_rows, chain.onsite_cols, chain.onsite_values[j], True)
    for j in range(n_slices + 1):
        add_block(syst, j - 1, j, chain.coupling_rows, chain.coupling_cols, chain.coupling_values[j], False)

    for side, lead, direction in (("left", chain.left, -1), ("right", chain.right, +1)):
        sym = kwant.TranslationalSymmetry((direction, 0))
        kl = kwant.Builder(sym)
        cell = 0
        dense_block(kl, cell, cell, lead.onsite, True)
        rows, cols = np.nonzero(lead.hopping)
        for r, c in zip(rows, cols):
            kl[lat(cell, int(r)), lat(cell + 1, int(c))] = complex(lead.hopping[r, c])
        syst.attach_lead(kl)
    return syst.finalized()


def transmission(chain: SliceChain, energies_meV: ArrayLike, system=None) -> np.ndarray:
    """Transmission from lead 0 (left) to lead 1 (right) computed by kwant."""
    import kwant

    fsyst = system if system is not None else build_kwant_system(chain)
    energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
    out = np.empty(energies.shape)
    for i, e in np.ndenumerate(energies):
        out[i] = kwant.smatrix(fsyst, energy=float(e)).transmission(1, 0)
    return out
