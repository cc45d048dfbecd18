"""Figures of the gate electrostatics: E_F against gate voltage and the potential around the contour."""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg", force=False)
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import xarray as xr  # noqa: E402

__all__ = ["gate_response_figure"]


def gate_response_figure(sweep: xr.Dataset, title: str = "", profiles: int = 5) -> plt.Figure:
    """Left: E_F(V_g) (contour average) with the range of the local Fermi energy; right: U(s) at a few voltages.

    Parameters
    ----------
    sweep : xarray.Dataset
        The output of :func:`simsurface.device.electrostatics.gate_sweep`.
    """
    volts = sweep["gate_voltage_V"].values
    ef = sweep["fermi_energy_meV"].values
    pot = sweep["potential_meV"].values
    s = sweep["arc_length_nm"].values
    perimeter = s[1] - s[0] + s[-1]
    fig, (ax_e, ax_u) = plt.subplots(1, 2, figsize=(10.0, 4.0))
    local_lo, local_hi = (ef[:, None] - pot).min(axis=1), (ef[:, None] - pot).max(axis=1)
    ax_e.fill_between(volts, local_lo, local_hi, color="C0", alpha=0.2, lw=0, label="local E_F around the contour")
    ax_e.plot(volts, ef, color="C0", marker=".", label="E_F (contour average)")
    ax_e.axhline(0.0, color="0.5", lw=0.6)
    ax_e.set_xlabel("back-gate voltage (V)")
    ax_e.set_ylabel("E_F from the Dirac point / band bottom (meV)")
    ax_e.legend(fontsize=8)
    ax_e.grid(alpha=0.3)
    picks = np.unique(np.linspace(0, volts.size - 1, min(profiles, volts.size)).round().astype(int))
    for i in picks:
        ax_u.plot(np.r_[s, perimeter] / perimeter, np.r_[pot[i], pot[i][0]], label=f"{volts[i]:g} V")
    ax_u.set_xlabel("s/P around the contour (0: facing the back gate)")
    ax_u.set_ylabel("U(s), potential energy of an electron (meV)")
    ax_u.legend(fontsize=8, title="back gate")
    ax_u.grid(alpha=0.3)
    fig.suptitle(title, fontsize=9)
    fig.tight_layout()
    return fig
