"""Figures of a device plan. Each function takes data and returns a matplotlib Figure."""

from __future__ import annotations

from typing import Sequence

import matplotlib

matplotlib.use("Agg", force=False)
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import xarray as xr  # noqa: E402

from ..analysis.harmonics import HARMONIC_NAMES  # noqa: E402


def field_dependence_figure(fields_T: np.ndarray, mean_g: np.ndarray, spread_g: np.ndarray, typical_g: np.ndarray,
                            mean_ratio: np.ndarray, typical_ratio: np.ndarray, period_he_T: float,
                            title: str = "") -> plt.Figure:
    """G(B) and R(B)/R(0) over the magnet's range: ensemble mean (± device spread) and one typical device."""
    fig, (ax_g, ax_r) = plt.subplots(2, 1, figsize=(7.0, 6.0), sharex=True)
    ax_g.fill_between(fields_T, mean_g - spread_g, mean_g + spread_g, color="C0", alpha=0.2, lw=0,
                      label="device-to-device spread (±1σ)")
    ax_g.plot(fields_T, mean_g, color="C0", label="ensemble mean ⟨G⟩")
    ax_g.plot(fields_T, typical_g, color="C3", lw=1, label="typical device")
    ax_g.set_ylabel("G (e²/h)")
    ax_g.legend(fontsize=8, loc="best")
    ax_g.set_title(title, fontsize=9)
    ax_r.plot(fields_T, mean_ratio, color="C0", label="from ⟨G⟩")
    ax_r.plot(fields_T, typical_ratio, color="C3", lw=1, label="typical device")
    ax_r.set_ylabel("R(B)/R(0)")
    ax_r.set_xlabel("axial field B (T)")
    ax_r.legend(fontsize=8, loc="best")
    for ax in (ax_g, ax_r):
        ax.grid(alpha=0.3)
        lo, hi = fields_T[0], fields_T[-1]
        for n in np.arange(np.ceil(lo / period_he_T), np.floor(hi / period_he_T) + 1):
            ax.axvline(n * period_he_T, color="0.6", lw=0.6, ls=":")
    fig.tight_layout()
    return fig


def harmonics_figure(harmonics: dict, noise_floor: float, unit: str) -> plt.Figure:
    """Expected Fourier amplitude of the measured quantity per harmonic against the noise floor."""
    names = [n for n in HARMONIC_NAMES.values() if n in harmonics]
    fig, ax = plt.subplots(figsize=(6.0, 4.0))
    x = np.arange(len(names))
    amps = [harmonics[n]["measured_amplitude"]["value"] for n in names]
    ax.bar(x, amps, color=["C3", "C0", "C2", "C4"][:len(names)], alpha=0.8, label="one device (rms over devices)")
    ax.axhline(noise_floor, color="k", ls="--", lw=1, label=f"noise floor ({noise_floor:g} {unit})")
    ax.axhline(3 * noise_floor, color="k", ls=":", lw=1, label="3 × noise floor")
    ax.set_xticks(x, names)
    ax.set_yscale("log")
    ax.set_ylabel(f"Fourier amplitude ({unit})")
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3, axis="y")
    fig.tight_layout()
    return fig


def gate_map_figure(maps: Sequence[xr.Dataset], labels: Sequence[str], fermi_marks_meV: Sequence[float | None]
                    ) -> plt.Figure:
    """Colour maps G(E_F, Φ) side by side, and below each the signed h/e cosine coefficient versus E_F."""
    fig, axes = plt.subplots(2, len(maps), figsize=(5.2 * len(maps), 7.0), squeeze=False,
                             gridspec_kw={"height_ratios": [2.2, 1]})
    for col, (ds, label, mark) in enumerate(zip(maps, labels, fermi_marks_meV)):
        ax = axes[0, col]
        phi = np.append(ds.flux.values, 1.0)
        g = ds["conductance"].values
        g = np.concatenate([g, g[:, :1]], axis=1)
        mesh = ax.pcolormesh(phi, ds.energy, g, shading="nearest", cmap="viridis")
        fig.colorbar(mesh, ax=ax, label="G (e²/h)")
        ax.set_xlabel("flux Φ (h/e)")
        ax.set_ylabel("Fermi energy (meV)")
        ax.set_title(label, fontsize=9)
        low = axes[1, col]
        a1 = ds["he_cosine"].values
        low.plot(ds.energy, a1, color="k", lw=1)
        low.fill_between(ds.energy, 0, a1, where=a1 > 0, color="C0", alpha=0.4, lw=0, label="maxima at integer Φ")
        low.fill_between(ds.energy, 0, a1, where=a1 < 0, color="C3", alpha=0.4, lw=0,
                         label="maxima at half-integer Φ")
        low.axhline(0, color="0.5", lw=0.6)
        low.set_xlabel("Fermi energy (meV)")
        low.set_ylabel("h/e cosine a₁ (e²/h)")
        low.legend(fontsize=7, loc="upper right")
        if mark is not None:
            ax.axhline(mark, color="w", ls="--", lw=0.8)
            low.axvline(mark, color="0.3", ls="--", lw=0.8)
    fig.tight_layout()
    return fig
