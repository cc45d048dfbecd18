"""The same device as a 3D four-band wire and as a surface tube, side by side.

The 3D wire (:class:`~simsurface.models.bulk.BulkWire`) is the reference. Its surface tube
(:meth:`~simsurface.models.bulk.BulkWire.equivalent_tube`) has the perimeter and area of the surface-state
contour (facet-resolved depth from a lattice slab), the harmonic-mean velocity around it and the
1/v-weighted mean of the facet Dirac points. The comparison reports, on one flux × energy grid:

* the two-terminal conductance of both models (any engine), and the tube's analytic channel count;
* the k_x = 0 levels (subband thresholds) of both;
* the Aharonov–Bohm area of the 3D wire from its level crossing at h/2e, and the single depth that
  gives it, next to the slab depths and the contour area the tube uses.
"""

from __future__ import annotations

import json
import time
from typing import Any

import numpy as np
import xarray as xr

from ..geometry import depth_from_area_nm
from ..models import analytic
from ..models.bulk import BulkWire
from ..transport.engines import conductance


def compare_bulk_and_tube(scenario: Any, *, engine: str | None = None, workers: int = 1,
                          progress: bool = False) -> xr.Dataset:
    """Run a ``kind = "bulk_lattice"`` scenario as 3D wire and as its surface tube.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario with ``[model] kind = "bulk_lattice"``; its sweep gives the grid.
    engine : {"slices", "kwant"}, optional
        Overrides ``[model] engine`` for both models.
    workers : int
        Local processes for the 3D conductance (the expensive part).
    progress : bool
        Progress bar on stderr.

    Returns
    -------
    xarray.Dataset
        ``conductance_bulk``, ``conductance_tube`` (flux, energy) in e²/h; ``channels_tube_analytic``;
        ``levels_bulk``, ``levels_tube`` (flux, level) in meV; attributes with areas, depths and
        measured run times in seconds.
    """
    from ..models.registry import build_model
    from ..sweeps.executor import run_tasks
    from ..sweeps.spec import make_spec

    spec = make_spec(scenario, engine)
    wire = build_model(scenario)
    if not isinstance(wire, BulkWire):
        from ..errors import InputError

        raise InputError("[model] kind: the comparison needs kind = 'bulk_lattice'")
    flux, energies = spec.flux_quanta, spec.energies_meV
    wire.check_energies(energies)
    times: dict[str, float] = {}

    start = time.perf_counter()
    g_bulk = np.full((flux.size, energies.size), np.nan)
    bar = _bar(flux.size, progress)

    def store(task, g):
        g_bulk[task.fluxes] = g
        if bar is not None:
            bar.update(1)

    try:
        run_tasks(spec, [t for t in spec.tasks() if t.realization == 0], store, workers=workers)
    finally:
        if bar is not None:
            bar.close()
    times["bulk_conductance_s"] = time.perf_counter() - start

    start = time.perf_counter()
    tube_p = wire.tube_parameters()
    offset = tube_p["dirac_point_meV"]
    e_tube = energies - offset
    tube, _ = wire.equivalent_tube(max_energy_meV=float(np.max(np.abs(e_tube))))
    g_tube = np.stack([conductance(tube.chain(float(f)), e_tube, spec.engine) for f in flux])
    channels = analytic.dirac_channel_count(e_tube, flux, tube_p["perimeter_nm"], tube_p["hbar_v_meV_nm"])
    times["tube_conductance_s"] = time.perf_counter() - start

    start = time.perf_counter()
    lo, hi = float(energies.min()), float(energies.max())
    levels_bulk = _pad([_window(wire.subband_energies_meV(float(f)), lo, hi) for f in flux])
    bottoms = analytic.dirac_subband_bottoms_meV(flux, tube_p["perimeter_nm"], tube_p["hbar_v_meV_nm"],
                                                 analytic.angular_indices(200))
    levels_tube = _pad([_window(np.concatenate([offset + b, offset - b]), lo, hi) for b in bottoms])
    a_eff = wire.effective_area_nm2()
    times["levels_and_ab_area_s"] = time.perf_counter() - start

    summary = {
        "ab_area_nm2": a_eff,
        "ab_depth_nm": depth_from_area_nm(wire.shape, wire.width_nm, wire.thickness_nm, a_eff),
        "contour_area_nm2": wire.area_nm2,
        "contour_depth_nm": wire.depth_nm,
        "slab_depth_y_nm": wire.depth_y_nm,
        "slab_depth_z_nm": wire.depth_z_nm,
        "tube_hbar_v_meV_nm": tube_p["hbar_v_meV_nm"],
        "tube_dirac_point_meV": offset,
        "tube_perimeter_nm": tube_p["perimeter_nm"],
        "tube_spacing_nm": tube.spacing_nm,
        "bulk_spacing_nm": wire.spacing_nm,
        "bulk_orbitals_per_slice": wire.orbitals_per_slice,
        "engine": spec.engine, "workers": workers,
    } | times
    coords = {
        "flux": ("flux", flux, {"long_name": "axial flux through the surface-state contour", "units": "h/e"}),
        "energy": ("energy", energies, {"long_name": "Fermi energy from the z-facet Dirac point",
                                        "units": "meV"}),
    }
    ds = xr.Dataset(
        {
            "conductance_bulk": (("flux", "energy"), g_bulk,
                                 {"long_name": "3D four-band wire, two-terminal conductance", "units": "e^2/h"}),
            "conductance_tube": (("flux", "energy"), g_tube,
                                 {"long_name": "equivalent surface tube (lattice), conductance", "units": "e^2/h"}),
            "channels_tube_analytic": (("flux", "energy"), channels.astype(float),
                                       {"long_name": "equivalent tube, analytic open channels", "units": "1"}),
            "levels_bulk": (("flux", "level_bulk"), levels_bulk,
                            {"long_name": "3D wire k_x = 0 levels inside the energy range", "units": "meV"}),
            "levels_tube": (("flux", "level_tube"), levels_tube,
                            {"long_name": "tube k_x = 0 levels inside the energy range", "units": "meV"}),
        },
        coords=coords,
        attrs={"title": scenario.title, "simsurface_kind": "bulk vs tube comparison",
               "summary_json": json.dumps(summary), "model_json": json.dumps(wire.describe(), default=float)},
    )
    return ds


def _window(levels: np.ndarray, lo: float, hi: float) -> np.ndarray:
    levels = np.sort(np.asarray(levels))
    return levels[(levels >= lo) & (levels <= hi)]


def _pad(rows: list[np.ndarray]) -> np.ndarray:
    width = max([r.size for r in rows] + [1])
    out = np.full((len(rows), width), np.nan)
    for i, r in enumerate(rows):
        out[i, : r.size] = r
    return out


def _bar(total: int, enabled: bool):
    if not enabled or total <= 1:
        return None
    import sys

    from tqdm import tqdm

    return tqdm(total=total, unit="flux", desc="3D wire", file=sys.stderr, mininterval=0.5)


def comparison_figure(ds: xr.Dataset, cut_energies_meV: list[float] | None = None):
    """Three panels: G(Φ, E) of the 3D wire and of the tube with both models' k_x = 0 levels, and flux cuts."""
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    summary = json.loads(ds.attrs["summary_json"])
    fig, axes = plt.subplots(1, 3, figsize=(14.0, 4.4), constrained_layout=True)
    vmax = float(np.nanmax([ds.conductance_bulk.max(), ds.conductance_tube.max(), 1.0]))
    flux, energy = ds.flux.values, ds.energy.values
    fine = np.linspace(flux.min(), flux.max(), 400)
    bottoms = analytic.dirac_subband_bottoms_meV(fine, summary["tube_perimeter_nm"], summary["tube_hbar_v_meV_nm"],
                                                 analytic.angular_indices(50))
    tube_curves = summary["tube_dirac_point_meV"] + np.concatenate([bottoms, -bottoms], axis=1)
    for ax, name, label in ((axes[0], "conductance_bulk", "3D four-band wire"),
                            (axes[1], "conductance_tube", "surface tube")):
        if flux.size > 1 and energy.size > 1:
            mesh = ax.pcolormesh(flux, energy, ds[name].values.T, shading="nearest", vmin=0, vmax=vmax,
                                 cmap="viridis")
        else:
            mesh = None
        ax.plot(fine, tube_curves, color="r", lw=0.8, alpha=0.8)
        ax.plot(flux, ds["levels_bulk"].values, color="w", marker=".", ls="none", ms=3)
        ax.set_title(label, fontsize=10)
        ax.set_xlabel("flux Φ (h/e)")
        ax.set_ylabel("Fermi energy E (meV)")
        ax.set_ylim(energy.min(), energy.max())
    if mesh is not None:
        fig.colorbar(mesh, ax=axes[:2], label="G (e²/h)", shrink=0.9)
    axes[0].plot([], [], color="w", marker=".", ls="none", label="3D k_x = 0 levels")
    axes[0].plot([], [], color="r", label="tube levels")
    axes[0].legend(fontsize=7, loc="upper right", facecolor="0.5", framealpha=0.8)
    cuts = cut_energies_meV or list(energy[np.linspace(0, energy.size - 1, 4).round().astype(int)][1:3])
    cuts = sorted({float(ds.energy.sel(energy=e, method="nearest")) for e in cuts})
    for e in cuts:
        b = ds.conductance_bulk.sel(energy=e, method="nearest")
        t = ds.conductance_tube.sel(energy=e, method="nearest")
        line, = axes[2].plot(flux, b, marker="o", ms=3, label=f"3D, E = {float(b.energy):.3g} meV")
        axes[2].plot(flux, t, ls="--", color=line.get_color(), label="tube")
    axes[2].set_xlabel("flux Φ (h/e)")
    axes[2].set_ylabel("G (e²/h)")
    axes[2].legend(fontsize=7)
    axes[2].grid(alpha=0.3)
    axes[2].set_title(f"AB area {summary['ab_area_nm2']:.4g} nm² (depth {summary['ab_depth_nm']:.3g} nm); "
                      f"tube contour {summary['contour_area_nm2']:.4g} nm²", fontsize=8)
    fig.suptitle(ds.attrs.get("title", ""), fontsize=10)
    return fig
