"""Figures of disorder ensembles and studies. Each function takes data and returns a matplotlib Figure.

Styling aims at print: vector output (save as PDF), 9-pt labels, units on every axis, panel letters.
"""

from __future__ import annotations

import contextlib
from typing import Iterator, Sequence

import matplotlib

matplotlib.use("Agg", force=False)
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker as ticker  # noqa: E402
import numpy as np  # noqa: E402
import xarray as xr  # noqa: E402

from ..analysis.lengths import interpolation_conductance  # noqa: E402

PRINT_STYLE = {
    "font.size": 9, "axes.labelsize": 9, "axes.titlesize": 9, "legend.fontsize": 7.5, "xtick.labelsize": 8,
    "ytick.labelsize": 8, "lines.linewidth": 1.3, "lines.markersize": 4.5, "axes.linewidth": 0.8,
    "xtick.direction": "in", "ytick.direction": "in", "xtick.top": False, "ytick.right": True,
    "legend.frameon": False, "savefig.dpi": 300, "pdf.fonttype": 42,
}


@contextlib.contextmanager
def print_style() -> Iterator[None]:
    with plt.rc_context(PRINT_STYLE):
        yield


def _panel(ax, letter: str) -> None:
    ax.text(-0.02, 1.02, f"({letter})", transform=ax.transAxes, va="bottom", ha="right", fontweight="bold")


def ensemble_cuts_figure(ds: xr.Dataset, energies_meV: Sequence[float], samples: int = 3,
                         band: tuple[float, float] = (16.0, 84.0)) -> plt.Figure:
    """G versus flux at the grid energies nearest ``energies_meV``: ensemble mean, percentile band, samples.

    One panel per energy (at most four). The band spans the ``band`` percentiles over realizations; thin
    lines are the first ``samples`` realizations; the dotted line is the clean channel count if present.
    """
    energies = list(energies_meV)[:4]
    n_real = ds.sizes["realization"]
    with print_style():
        fig, axes = plt.subplots(len(energies), 1, figsize=(4.6, 1.9 * len(energies) + 0.6), sharex=True,
                                 squeeze=False)
        for ax, e, letter in zip(axes[:, 0], energies, "abcd"):
            cut = ds["conductance"].sel(energy=e, method="nearest")
            lo, hi = np.percentile(cut.values, band, axis=cut.dims.index("realization"))
            ax.fill_between(ds.flux, lo, hi, color="C0", alpha=0.25, lw=0,
                            label=f"{band[0]:g}–{band[1]:g} % of {n_real} realizations")
            for r in range(min(samples, n_real)):
                ax.plot(ds.flux, cut.isel(realization=r), color="0.45", lw=0.6,
                        label="single realizations" if r == 0 else None)
            ax.plot(ds.flux, cut.mean("realization"), color="C0", lw=1.6, label="ensemble mean")
            if "clean_channels" in ds:
                ax.plot(ds.flux, ds["clean_channels"].sel(energy=e, method="nearest"), color="k", lw=0.8, ls=":",
                        label="clean channel count")
            ax.set_ylabel("G (e²/h)")
            ax.set_title(f"E = {float(cut.energy):.3g} meV", loc="right")
            _panel(ax, letter)
        axes[0, 0].legend(loc="upper center", bbox_to_anchor=(0.5, 1.45), ncol=2)
        axes[-1, 0].set_xlabel("flux Φ (h/e)")
        fig.suptitle(ds.attrs.get("title", ""), fontsize=8, y=0.995)
        fig.tight_layout()
    return fig


def lengths_figure(ds: xr.Dataset, max_curves: int = 6) -> plt.Figure:
    """(a) ⟨G⟩ versus L with the fit N/(1 + L/ℓ); (b) ⟨ln G⟩ versus L with the fit c − 2L/ξ.

    Filled markers were used in the fit, open markers were not; error bars are standard errors.
    """
    L = ds.modelled_length_nm.values
    log_x = L.max() / L.min() > 20
    grid = np.geomspace(L.min() / 1.5, L.max() * 1.5, 200) if log_x else np.linspace(0.0, L.max() * 1.05, 200)
    combos = [(f, e) for f in ds.flux.values for e in ds.energy.values][:max_curves]
    with print_style():
        fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(7.0, 3.2 + 0.17 * len(combos)))
        for k, (f, e) in enumerate(combos):
            p = ds.sel(flux=f, energy=e)
            color = f"C{k % 10}"
            ell, xi = float(p.mean_free_path_nm), float(p.localization_length_nm)
            label = f"Φ = {f:g} h/e, E = {e:g} meV"
            _points(ax1, L, p.conductance_mean.values, p.conductance_std_error.values, p.mean_free_path_used.values,
                    color)
            if np.isfinite(ell):
                n = float(p.channels)
                ax1.plot(grid, interpolation_conductance(grid, n, ell), color=color, lw=1.0,
                         label=f"{label}: ℓ = {_nm(ell)} nm")
            else:
                ax1.plot([], [], color=color, label=f"{label}: ℓ not resolved")
            ax1.axhline(float(p.channels), color=color, lw=0.6, ls=":")
            _points(ax2, L, p.log_conductance_mean.values, p.log_conductance_std_error.values,
                    p.localization_length_used.values, color)
            used = p.localization_length_used.values
            if np.isfinite(xi) and used.any():
                span = np.linspace(0.0, L.max() * 1.05, 50)
                estimate = float(p.beenakker_localization_length_nm)
                note = (f"Beenakker {_nm(estimate)} nm" if np.isfinite(estimate)
                        else "odd N: protected channel")
                ax2.plot(span, float(p.log_intercept) - 2 * span / xi, color=color, lw=1.0,
                         label=f"{label}: ξ = {_nm(xi)} nm ({note})")
            elif np.isinf(xi):
                ax2.plot([], [], color=color, label=f"{label}: no decay of ⟨ln G⟩")
            else:
                ax2.plot([], [], color=color, label=f"{label}: no localized lengths")
        ax1.set_xlabel("wire length L (nm)")
        ax1.set_ylabel("⟨G⟩ (e²/h)")
        ax1.set_xlim(grid[0], grid[-1])
        if log_x:
            ax1.set_xscale("log")
            _plain_log_ticks(ax1.xaxis)
        ax1.set_ylim(bottom=0)
        ax1.legend(loc="upper left", bbox_to_anchor=(0.0, -0.2))
        ax2.set_xlabel("wire length L (nm)")
        ax2.set_ylabel("⟨ln(G h/e²)⟩")
        ax2.set_xlim(0, L.max() * 1.05)
        ax2.legend(loc="upper left", bbox_to_anchor=(0.0, -0.2))
        _panel(ax1, "a")
        _panel(ax2, "b")
        fig.suptitle(f"{ds.attrs.get('title', '')} — {ds.attrs.get('realizations')} realizations per length",
                     fontsize=8)
        fig.tight_layout()
    return fig


def _nm(x: float) -> str:
    """A length for a label: three significant digits, no exponent."""
    return f"{x:.3g}" if abs(x) < 1000 else f"{x:,.0f}"


def _points(ax, x, y, err, used, color) -> None:
    err = np.where(np.isfinite(err), err, 0.0)
    ax.errorbar(x[used], y[used], yerr=err[used], fmt="o", color=color, mfc=color, capsize=2, lw=0.8)
    if (~used).any():
        ax.errorbar(x[~used], y[~used], yerr=err[~used], fmt="o", color=color, mfc="white", capsize=2, lw=0.8)


TOLERANCE_SERIES = (
    (1, "sample_rms_amplitude", "h/e, single wire (rms)", "o", "-", True),
    (1, "ensemble_amplitude", "h/e, ensemble average", "o", "--", False),
    (2, "sample_rms_amplitude", "h/2e, single wire (rms)", "s", "-", True),
    (2, "ensemble_amplitude", "h/2e, ensemble average", "s", "--", False),
)


def tolerance_figure(ds: xr.Dataset, energies_meV: Sequence[float] | None = None) -> plt.Figure:
    """h/e and h/2e amplitudes (a) versus the disorder parameter and (b) versus the mean free path.

    One row per energy (at most three). Error bars are the bootstrap intervals; on (b) the clean wire
    (ℓ = ∞) is drawn as dotted lines and the top axis gives L/ℓ.
    """
    energies = list(ds.energy.values if energies_meV is None else energies_meV)[:3]
    param = ds.attrs["parameter"]
    unit = ds["value"].attrs.get("units", "")
    length = float(ds.attrs["modelled_length_nm"])
    with print_style():
        fig, axes = plt.subplots(len(energies), 2, figsize=(7.0, 2.8 * len(energies) + 0.4), squeeze=False)
        for row, e in enumerate(energies):
            p = ds.sel(energy=e, method="nearest")
            ell = p.mean_free_path_nm.values
            finite = np.isfinite(ell)
            ax1, ax2 = axes[row]
            for k, name, label, marker, ls, filled in TOLERANCE_SERIES:
                q = p.sel(harmonic=k)
                y = q[name].values
                yerr = _asym(y, q.get(f"{name}_low"), q.get(f"{name}_high"))
                color = "C0" if k == 1 else "C3"
                style = dict(fmt=marker + ls, color=color, mfc=color if filled else "white", capsize=2, lw=1.0,
                             ms=4.5, label=label)
                ax1.errorbar(p.value.values, y, yerr=yerr, **style)
                if finite.any():
                    ax2.errorbar(ell[finite], y[finite], yerr=yerr[:, finite], **style)
                if (~finite).any():
                    ax2.axhline(y[~finite][0], color=color, lw=0.7, ls=":")
            for ax in (ax1, ax2):
                ax.set_ylabel("amplitude (e²/h)")
                _log_if_wide(ax)
            ax1.set_xlabel(ds["value"].attrs.get("label", f"{param} ({unit})"))
            ax2.set_xlabel("mean free path ℓ (nm)")
            if finite.sum() > 1 and ell[finite].max() / ell[finite].min() > 5:
                ax2.set_xscale("log")
                _plain_log_ticks(ax2.xaxis)
            top = ax2.secondary_xaxis("top", functions=(lambda x: length / np.maximum(x, 1e-12),
                                                        lambda y: length / np.maximum(y, 1e-12)))
            if ax2.get_xscale() == "log":
                _plain_log_ticks(top.xaxis)
            top.set_xlabel("L/ℓ")
            if (~finite).any():
                clean, = ax2.plot([], [], color="0.3", lw=0.7, ls=":", label="clean wire (ℓ = ∞)")
                ax2.legend(handles=[clean], loc="best")
            ax1.set_title(f"E = {float(p.energy):.3g} meV", loc="right")
            _panel(ax1, "abcdef"[2 * row])
            _panel(ax2, "abcdef"[2 * row + 1])
        axes[0, 0].legend(loc="best")
        fig.suptitle(f"{ds.attrs.get('title', '')} — L = {length:.4g} nm, {ds.attrs.get('realizations')} "
                     "realizations per point", fontsize=8)
        fig.tight_layout()
    return fig


def _plain_log_ticks(axis) -> None:
    """Ticks at 1, 2, 5 × 10^n labelled as plain numbers (no crowded 10^n labels)."""
    axis.set_major_locator(ticker.LogLocator(subs=(1.0, 2.0, 5.0)))
    axis.set_major_formatter(ticker.FormatStrFormatter("%g"))
    axis.set_minor_formatter(ticker.NullFormatter())


def _asym(y: np.ndarray, low, high) -> np.ndarray:
    if low is None or high is None:
        return np.zeros((2, y.size))
    lo, hi = np.asarray(low, float), np.asarray(high, float)
    return np.vstack([np.clip(y - lo, 0, None), np.clip(hi - y, 0, None)])


def _log_if_wide(ax) -> None:
    ys = [line.get_ydata() for line in ax.get_lines()]
    ys = np.concatenate([np.asarray(y, float) for y in ys]) if ys else np.array([])
    ys = ys[np.isfinite(ys) & (ys > 0)]
    if ys.size and ys.max() / ys.min() > 30:
        ax.set_yscale("log")


def save_print_figure(fig: plt.Figure, stem) -> list:
    """Write ``stem.png`` (300 dpi) and ``stem.pdf`` (vector) through temporary files; return the paths."""
    from pathlib import Path

    from ..io import atomic_path

    paths = []
    for fmt in ("png", "pdf"):
        path = Path(f"{stem}.{fmt}")
        with atomic_path(path, suffix=f".{fmt}.tmp") as tmp:
            fig.savefig(tmp, format=fmt, dpi=300, bbox_inches="tight")
        paths.append(path)
    return paths
