"""Multi-terminal transmissions of a chain with dephasing probes, by recursive Green's functions.

Terminals: 0 the left lead, 1 … M the probes (:mod:`~simsurface.transport.probe_blocks`), M + 1 the right
lead. The transmission from terminal l into terminal k is the Caroli form (Datta, *Electronic Transport in
Mesoscopic Systems*, 1995; Golizadeh-Mojarad & Datta, PRB 75, 081301(R) (2007) for dephasing probes)

    T_kl = Tr[Γ_k G Γ_l G†],      G = A⁻¹,   A = E P − H − Σ_L − Σ_R + iη P_wire.

Method. A is block tridiagonal. Left- and right-connected Green's functions give the diagonal blocks
G_jj and the propagators a_j = −g^L_j A_{j,j+1}, b_{j+1} = −g^R_{j+1} A_{j+1,j}, with G_ij = a_i … a_{j−1} G_jj
for i < j and G_ij = b_i … b_{j+1} G_jj for i > j (Lee & Fisher, PRL 47, 882 (1981)). For a row terminal k
left of a column terminal l, Tr[Γ_k G Γ_l G†] = Σ_{units u of l} Tr[Z^k_{s(u)} C_u] with

    Z^k_{j+1} = a_j† Z^k_j a_j + (units of k that end at slice j + 1),     C_u = G_{s,·} Γ_u G_{s,·}†,

a matrix per terminal carried along the chain (forward sweep, all terminals stacked); terminals right of
l come from the mirror sweep with b. Cost per point: ≈ 10 N n³ for the Green's functions and
2 M N n³ for the two sweeps (M probes, N slices, n orbitals per slice); everything is stacked over the K
points of a call (numpy batched products). Only T_kl with k ≠ l is computed.
"""

from __future__ import annotations

import numpy as np

from .probe_blocks import ChainBlocks, ProbeLayout

__all__ = ["diagonal_green", "terminal_transmissions"]


def _dag(x: np.ndarray) -> np.ndarray:
    return np.conj(np.swapaxes(x, -1, -2))


def diagonal_green(blocks: ChainBlocks) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Diagonal blocks of G and the propagators of the two directions.

    Returns
    -------
    green : ndarray, shape (K, N, n, n)
        G_jj.
    forward : ndarray, shape (K, N − 1, n, n)
        a_j = −g^L_j A_{j,j+1}: G_{i,j+1} = G_{i,j}… with G_{j,j+1} = a_j G_{j+1,j+1} (rows left of j + 1).
    backward : ndarray, shape (K, N − 1, n, n)
        entry j is b_{j+1} = −g^R_{j+1} A_{j+1,j}: G_{j+1,j} = b_{j+1} G_jj.
    """
    d, up, lo = blocks.diagonal, blocks.upper, blocks.lower
    k, n_sl, n, _ = d.shape
    sig_l = np.zeros_like(d)
    sig_r = np.zeros_like(d)
    fwd = np.empty((k, n_sl - 1, n, n), complex)
    bwd = np.empty((k, n_sl - 1, n, n), complex)
    g = np.linalg.inv(d[:, 0])
    for j in range(n_sl - 1):
        fwd[:, j] = -g @ up[:, j]
        sig_l[:, j + 1] = lo[:, j] @ -fwd[:, j]
        g = np.linalg.inv(d[:, j + 1] - sig_l[:, j + 1])
    g = np.linalg.inv(d[:, -1])
    for j in range(n_sl - 2, -1, -1):
        bwd[:, j] = -g @ lo[:, j]
        sig_r[:, j] = up[:, j] @ -bwd[:, j]
        g = np.linalg.inv(d[:, j] - sig_r[:, j])
    green = np.linalg.inv(d - sig_l - sig_r)
    return green, fwd, bwd


def _unit_terms(layout: ProbeLayout, blocks: ChainBlocks, green: np.ndarray, fwd: np.ndarray, bwd: np.ndarray,
                dephasing_meV: np.ndarray):
    """Per slice: the row additions and column Grams of every terminal, for both sweeps.

    Returns four lists over slices of lists of (terminal, matrix (K, n, n)).
    """
    k, n_sl, n, _ = green.shape
    eye = np.eye(n)
    two_eta = (2 * dephasing_meV)[:, None, None]
    rows_f = [[] for _ in range(n_sl)]
    cols_f = [[] for _ in range(n_sl)]
    rows_b = [[] for _ in range(n_sl)]
    cols_b = [[] for _ in range(n_sl)]
    last = layout.n_probes + 1
    g0, gn = green[:, 0], green[:, -1]
    lead_l = (0, blocks.gamma_left, g0 @ blocks.gamma_left @ _dag(g0))
    lead_r = (last, blocks.gamma_right, gn @ blocks.gamma_right @ _dag(gn))
    for rows, cols in ((rows_f, cols_f), (rows_b, cols_b)):
        rows[0].append(lead_l[:2]); cols[0].append((0, lead_l[2]))
    if layout.kind == "slice":
        for u, t in enumerate(layout.unit_probe):
            row = two_eta * eye
            col = two_eta * (green[:, u] @ _dag(green[:, u]))
            for rows, cols in ((rows_f, cols_f), (rows_b, cols_b)):
                rows[u].append((int(t), row)); cols[u].append((int(t), col))
    else:
        w = two_eta * layout.cell_weight
        for u, t in enumerate(layout.unit_probe):
            t = int(t)
            x = green[:, u] + fwd[:, u] @ green[:, u + 1]           # G_{u,u} + G_{u,u+1}
            y = bwd[:, u] @ green[:, u] + green[:, u + 1]           # G_{u+1,u} + G_{u+1,u+1}
            rows_f[u + 1].append((t, w * (_dag(fwd[:, u] + eye) @ (fwd[:, u] + eye))))
            cols_f[u].append((t, w * (x @ _dag(x))))
            rows_b[u].append((t, w * (_dag(bwd[:, u] + eye) @ (bwd[:, u] + eye))))
            cols_b[u + 1].append((t, w * (y @ _dag(y))))
    for rows, cols in ((rows_f, cols_f), (rows_b, cols_b)):
        rows[-1].append(lead_r[:2]); cols[-1].append((last, lead_r[2]))
    return rows_f, cols_f, rows_b, cols_b


def terminal_transmissions(blocks: ChainBlocks, layout: ProbeLayout, dephasing_meV: np.ndarray) -> np.ndarray:
    """All T_kl (k ≠ l) between the leads and the probes.

    Parameters
    ----------
    blocks : ChainBlocks
        K points.
    layout : ProbeLayout
    dephasing_meV : ndarray, shape (K,)
        η of each point (the probes' broadening is 2η times the unit's overlap).

    Returns
    -------
    ndarray, shape (K, M + 2, M + 2)
        T[k, l] = transmission from terminal l into terminal k; terminal 0 = left lead, M + 1 = right lead.
        The diagonal is zero (not computed).
    """
    green, fwd, bwd = diagonal_green(blocks)
    k, n_sl, n, _ = green.shape
    rows_f, cols_f, rows_b, cols_b = _unit_terms(layout, blocks, green, fwd, bwd, np.asarray(dephasing_meV, float))
    n_term = layout.n_probes + 2
    out = np.zeros((k, n_term, n_term))
    # forward sweep: row terminals left of the column terminal (k < l)
    z = np.zeros((k, n_term, n, n), complex)
    top = 0
    for j in range(n_sl):
        if j:
            a = fwd[:, j - 1][:, None]
            z[:, :top] = _dag(a) @ z[:, :top] @ a
        for t, m in rows_f[j]:
            z[:, t] += m
            top = max(top, t + 1)
        for t, c in cols_f[j]:
            out[:, :t, t] += np.einsum("ktab,kba->kt", z[:, :t], c).real
    # backward sweep: row terminals right of the column terminal (k > l)
    z[:] = 0
    bottom = n_term
    for j in range(n_sl - 1, -1, -1):
        if j < n_sl - 1:
            b = bwd[:, j][:, None]
            z[:, bottom:] = _dag(b) @ z[:, bottom:] @ b
        for t, m in rows_b[j]:
            z[:, t] += m
            bottom = min(bottom, t)
        for t, c in cols_b[j]:
            out[:, t + 1:, t] += np.einsum("ktab,kba->kt", z[:, t + 1:], c).real
    return out
