"""Warnings for sweeps that leave the range their model describes (the ones ``plan`` gives as notes).

* A surface model of a topological material swept beyond half the bulk gap: the bulk bands would conduct
  too, and the surface-only model does not describe them.
* Anderson disorder so strong that its Born transport mean free path is shorter than the lattice spacing:
  every state is localized on the scale of the lattice, the conductance vanishes, and the numbers say
  nothing about a real surface (they depend on the lattice, not the material).
"""

from __future__ import annotations

import warnings

import numpy as np

from ..analysis import transport_scales as ts
from ..errors import InputError, ValidityWarning

__all__ = ["check_mean_free_path", "check_sweep_window", "disorder_mean_free_path_nm"]


def check_sweep_window(scenario, model, energies_meV: np.ndarray) -> None:
    """Warn with :class:`~simsurface.errors.ValidityWarning` when the sweep leaves its model's range.

    Parameters
    ----------
    scenario : Scenario
    model : the scenario's model (``build_model``); its ``spacing_nm`` sets the lattice scale
    energies_meV : ndarray
        The sweep's Fermi energies (from the Dirac point for topological surfaces).
    """
    kind = scenario.model.kind
    if kind not in ("surface_analytic", "surface_lattice", "surface_modes"):
        return
    material = scenario.material.material()
    largest = float(np.max(np.abs(energies_meV)))
    surface = scenario.wire.surface
    if surface == "topological" and material.bulk_gap_meV is not None and largest > material.bulk_gap_meV / 2:
        warnings.warn(f"[sweep] fermi_energy_meV: |E| up to {largest:.4g} meV exceeds half the bulk gap of "
                      f"{material.name} ({material.bulk_gap_meV / 2:.4g} meV): bulk bands would conduct too, which "
                      "the surface-only model does not describe", ValidityWarning, stacklevel=2)
    mfp = disorder_mean_free_path_nm(scenario, model, energies_meV)
    spacing = getattr(model, "spacing_nm", None)
    if mfp is not None and spacing is not None and mfp < spacing:
        warnings.warn(f"[disorder] anderson_width_meV: {scenario.disorder.anderson_width_meV:g} meV gives a Born "
                      f"mean free path of {mfp:.2g} nm, shorter than the lattice spacing ({spacing:.3g} nm): every "
                      "state is localized on the lattice scale, G vanishes, and the result describes the lattice, "
                      "not the material", ValidityWarning, stacklevel=2)


def disorder_mean_free_path_nm(scenario, model, energies_meV: np.ndarray) -> float | None:
    """Born transport mean free path (nm) of the scenario's Anderson disorder at the sweep energy where it is
    longest (energies within 10 % of the largest |E|; near the Dirac point Born's estimate does not hold);
    None without Anderson disorder or lattice spacing."""
    width = scenario.disorder.anderson_width_meV
    spacing = getattr(model, "spacing_nm", None)
    if width <= 0 or spacing is None:
        return None
    material = scenario.material.material()
    surface = scenario.wire.surface
    scale = material.hbar_v_meV_nm if surface == "topological" else material.effective_mass_ratio
    e = np.abs(np.asarray(energies_meV, float))
    e = e[e >= 0.1 * e.max()] if e.max() > 0 else e
    with np.errstate(all="ignore"):
        values = [float(ts.born_transport_mfp_nm(surface, width, spacing, float(x), scale)) for x in e if x > 0]
    return max(values) if values else None


def check_mean_free_path(mean_free_path_nm: float, spacing_nm: float, field: str) -> None:
    """Refuse a (Born transport) mean free path shorter than the lattice spacing that must carry it.

    Such disorder localizes every state on the scale of the lattice: the model would return G = 0 and
    amplitudes without meaning. ``field`` names the scenario field the mean free path comes from.
    """
    if mean_free_path_nm < spacing_nm:
        what = (f"{mean_free_path_nm:.3g} nm is" if field.endswith("mean_free_path_nm") else
                f"gives a Born mean free path of {mean_free_path_nm:.3g} nm,")
        raise InputError(f"{field}: {what} shorter than the lattice spacing of the model ({spacing_nm:.3g} nm): "
                         "every state would be localized on the lattice scale and G would vanish; use disorder with "
                         f"a mean free path of at least {spacing_nm:.3g} nm")
