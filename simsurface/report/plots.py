"""Figures of sweep results. Each function takes data and returns a matplotlib Figure."""

from __future__ import annotations

from typing import Sequence

import matplotlib

matplotlib.use("Agg", force=False)
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import xarray as xr  # noqa: E402

from ..models import analytic  # noqa: E402


def default_cut_energies(energies_meV: np.ndarray, count: int = 3) -> list[float]:
    """Energies for flux cuts when the scenario names none: evenly inside the swept range."""
    e = np.asarray(energies_meV, float)
    if e.size <= count:
        return e.tolist()
    idx = np.linspace(0, e.size - 1, count + 2)[1:-1].round().astype(int)
    return e[idx].tolist()


def _field_axis(ax, area_nm2: float) -> None:
    from ..units import field_T, flux_quanta

    sec = ax.secondary_xaxis("top", functions=(lambda f: field_T(f, area_nm2), lambda b: flux_quanta(b, area_nm2)))
    sec.set_xlabel("axial field B (T)")


def flux_cuts_figure(ds: xr.Dataset, energies_meV: Sequence[float]) -> plt.Figure:
    """Conductance versus flux at the grid energies nearest to ``energies_meV``.

    With several realizations the mean is drawn with a ±1 standard-deviation band.
    """
    fig, ax = plt.subplots(figsize=(6.4, 4.2))
    g = ds["conductance"]
    for e in energies_meV:
        cut = g.sel(energy=e, method="nearest")
        mean = cut.mean("realization")
        line, = ax.plot(ds.flux, mean, label=f"E = {float(cut.energy):.3g} meV")
        if ds.sizes["realization"] > 1:
            std = cut.std("realization")
            ax.fill_between(ds.flux, mean - std, mean + std, color=line.get_color(), alpha=0.2, lw=0)
    ax.set_xlabel("flux Φ (h/e)")
    ax.set_ylabel("conductance G (e²/h)")
    ax.set_title(ds.attrs.get("title", ""), fontsize=9)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8)
    _field_axis(ax, float(ds.attrs["enclosed_area_nm2"]))
    return fig


def conductance_map_figure(ds: xr.Dataset) -> plt.Figure:
    """Colour map of the (realization-averaged) conductance over flux and Fermi energy."""
    fig, ax = plt.subplots(figsize=(6.4, 4.6))
    mean = ds["conductance"].mean("realization").transpose("energy", "flux")
    if ds.sizes["flux"] > 1 and ds.sizes["energy"] > 1:
        mesh = ax.pcolormesh(ds.flux, ds.energy, mean, shading="nearest", cmap="viridis")
    else:
        mesh = ax.imshow(mean, aspect="auto", cmap="viridis")
    fig.colorbar(mesh, ax=ax, label="G (e²/h)")
    ax.set_xlabel("flux Φ (h/e)")
    ax.set_ylabel("Fermi energy (meV)")
    ax.set_title(ds.attrs.get("title", ""), fontsize=9)
    if ds.sizes["flux"] > 1:
        _field_axis(ax, float(ds.attrs["enclosed_area_nm2"]))
    return fig


def subbands_figure(surface: str, perimeter_nm: float, energy_scale: float, flux_quanta: np.ndarray,
                    energy_range_meV: tuple[float, float], lattice_bottoms_meV: np.ndarray | None = None,
                    validity_limit_meV: float | None = None) -> plt.Figure:
    """Subband bottoms (k = 0) versus flux: analytic lines, lattice values dashed.

    Parameters
    ----------
    surface : {"topological", "trivial"}
    energy_scale : float
        ħv in meV nm (topological) or m*/m_e (trivial).
    lattice_bottoms_meV : ndarray, shape (n_flux, M), optional
    """
    phi = np.linspace(min(flux_quanta.min(), 0.0), max(flux_quanta.max(), 1.0), 400)
    lo, hi = energy_range_meV
    span = max(abs(lo), abs(hi)) * 1.15 + 1e-9
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    if surface == "topological":
        idx = analytic.subband_indices(span, phi, perimeter_nm, energy_scale, 1)
        bottoms = analytic.dirac_subband_bottoms_meV(phi, perimeter_nm, energy_scale, idx)
        for col in bottoms.T:
            ax.plot(phi, col, color="C0", lw=1)
            ax.plot(phi, -col, color="C0", lw=1)
        ax.axhline(0, color="k", lw=0.5)
        ylim = (-span, span)
    else:
        unit = analytic.HBAR2_OVER_2ME_MEV_NM2 / energy_scale
        idx = analytic.subband_indices(span, phi, perimeter_nm, unit, 2)
        bottoms = analytic.parabolic_subband_bottoms_meV(phi, perimeter_nm, energy_scale, idx)
        for col in bottoms.T:
            ax.plot(phi, col, color="C0", lw=1)
        ylim = (min(lo, 0.0) - 0.05 * span, span)
    if lattice_bottoms_meV is not None:
        for col in np.asarray(lattice_bottoms_meV).T:
            ax.plot(flux_quanta, col, color="C1", lw=0.8, ls="--")
            if surface == "topological":
                ax.plot(flux_quanta, -col, color="C1", lw=0.8, ls="--")
        ax.plot([], [], color="C1", ls="--", label="lattice model")
    ax.plot([], [], color="C0", label="continuum")
    ax.axhspan(lo, hi, color="0.85", zorder=-1, label="swept Fermi energies")
    if validity_limit_meV is not None and validity_limit_meV < span:
        ax.axhline(validity_limit_meV, color="C3", lw=0.8, ls=":", label="lattice validity limit")
    ax.set_ylim(*ylim)
    ax.set_xlim(phi[0], phi[-1])
    ax.set_xlabel("flux Φ (h/e)")
    ax.set_ylabel("subband bottom E_l(k=0) (meV)")
    ax.legend(fontsize=8, loc="upper right")
    return fig
