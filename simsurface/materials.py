"""Material presets for surface-conducting wires, each value with its published source.

Two kinds of surface are modelled:

* ``topological`` — the Dirac surface state of a 3D topological insulator, described by its Dirac
  velocity (ħv) and the bulk gap that bounds the energy window where only the surface conducts;
* ``trivial`` — an ordinary two-dimensional electron layer on the wire surface (e.g. the electron
  accumulation layer of an InAs wire), described by an effective mass; spin-degenerate, no Berry phase.

Values marked "from memory" in their source were written down without the paper at hand; no test
relies on a preset value, only on the model relations.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Literal

from .errors import InputError
from .units import hbar_v_meV_nm

SurfaceKind = Literal["topological", "trivial"]


@dataclass(frozen=True)
class Material:
    """Parameters of one material's conducting surface.

    Attributes
    ----------
    name : str
        Preset name or a user label.
    dirac_velocity_m_s : float or None
        Surface Dirac velocity in m/s (topological surfaces).
    bulk_gap_meV : float or None
        Bulk band gap in meV; energies (from the Dirac point) beyond about half of it bring bulk bands in.
    effective_mass_ratio : float or None
        Effective mass m*/m_e of a trivial surface electron layer.
    surface_g_factor : float or None
        g of the surface electrons in H_Z = +(g μ_B/2) σ·B; None: no value known (the Zeeman term is then off
        unless the scenario gives one). The sign convention is explained in docs/fields.md.
    rashba_meV_nm : float or None
        Rashba coupling α of a trivial surface layer, H_R = α (σ × k)·n; None: not known (off).
    valence_band_edge_meV, conduction_band_edge_meV : float or None
        Bulk band edges measured from the surface Dirac point (negative, positive); None: the Dirac point's place in
        the gap is not known (the gap check then says so instead of assuming it sits mid-gap).
    sources : dict
        Field name -> citation of the value.
    """

    name: str
    dirac_velocity_m_s: float | None = None
    bulk_gap_meV: float | None = None
    effective_mass_ratio: float | None = None
    surface_g_factor: float | None = None
    rashba_meV_nm: float | None = None
    valence_band_edge_meV: float | None = None
    conduction_band_edge_meV: float | None = None
    sources: dict[str, str] = field(default_factory=dict, compare=False)

    @property
    def hbar_v_meV_nm(self) -> float:
        """ħv in meV nm."""
        if self.dirac_velocity_m_s is None:
            raise InputError(f"material {self.name!r} has no dirac_velocity_m_s; a topological surface needs it")
        return float(hbar_v_meV_nm(self.dirac_velocity_m_s))

    def require(self, surface: SurfaceKind) -> None:
        """Raise :class:`InputError` unless the parameters for ``surface`` are present."""
        if surface == "topological" and self.dirac_velocity_m_s is None:
            raise InputError(
                f"[material] dirac_velocity_m_s: material {self.name!r} has no Dirac velocity; "
                "a topological surface needs one (set it, or choose a topological-insulator preset)")
        if surface == "trivial" and self.effective_mass_ratio is None:
            raise InputError(
                f"[material] effective_mass_ratio: material {self.name!r} has no effective mass; "
                "a trivial surface needs one (set it, or choose preset 'InAs')")


_NO_TI_G_FACTOR = ("none known: reported g-factors of the surface states of this family scatter widely, from about "
                   "2 to about 30 (from memory, uncertain); set [material] surface_g_factor to include the Zeeman term")

PRESETS: dict[str, Material] = {
    "Bi2Se3": Material(
        name="Bi2Se3",
        dirac_velocity_m_s=5.0e5,
        bulk_gap_meV=300.0,
        sources={
            "dirac_velocity_m_s": "Xia et al., Nat. Phys. 5, 398 (2009), ARPES (from memory)",
            "bulk_gap_meV": "Xia et al., Nat. Phys. 5, 398 (2009): ~0.3 eV (from memory)",
            "surface_g_factor": _NO_TI_G_FACTOR,
        },
    ),
    "Bi2Te3": Material(
        name="Bi2Te3",
        dirac_velocity_m_s=4.0e5,
        bulk_gap_meV=165.0,
        sources={
            "dirac_velocity_m_s": "Chen et al., Science 325, 178 (2009), ARPES (from memory)",
            "bulk_gap_meV": "Chen et al., Science 325, 178 (2009): ~0.165 eV (from memory)",
            "surface_g_factor": _NO_TI_G_FACTOR,
        },
    ),
    "InAs": Material(
        name="InAs",
        effective_mass_ratio=0.023,
        bulk_gap_meV=354.0,
        sources={
            "effective_mass_ratio": "Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), "
                                    "band-edge mass (from memory)",
            "bulk_gap_meV": "Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), 300 K (from memory)",
            "surface_g_factor": "none known for the accumulation layer (the bulk conduction band of InAs has "
                                "g of about -15, textbook value from memory; confinement and non-parabolicity "
                                "change it in the layer): set [material] surface_g_factor",
            "rashba_meV_nm": "none known for a given wire (it depends on the layer's electric field): set "
                             "[material] rashba_meV_nm",
        },
    ),
}


def bulk_window_note(material: Material, fermi_energy_meV: float) -> str | None:
    """Where E_F (from the surface Dirac point) lies relative to the bulk bands, without assuming a mid-gap Dirac point.

    Returns a sentence for a plan's notes, or None when the material has no bulk gap (trivial layers).
    """
    e_f = float(fermi_energy_meV)
    lo, hi = material.valence_band_edge_meV, material.conduction_band_edge_meV
    if lo is not None and hi is not None:
        if lo < e_f < hi:
            return None
        return (f"E_F = {e_f:.3g} meV lies outside the bulk gap ({lo:.4g} … {hi:.4g} meV from the Dirac point): bulk "
                "bands would conduct too; the surface-only model does not describe them.")
    gap = material.bulk_gap_meV
    if gap is None:
        return None
    if abs(e_f) >= gap:
        return (f"|E_F| = {abs(e_f):.3g} meV exceeds the whole bulk gap ({gap:.3g} meV): E_F lies in a bulk band "
                "wherever the Dirac point sits; the surface-only model does not describe it.")
    side = "conduction" if e_f >= 0 else "valence"
    return (f"E_F = {e_f:.3g} meV from the Dirac point: inside the {gap:.3g} meV bulk gap only if the {side} band "
            f"edge lies more than {abs(e_f):.3g} meV from the Dirac point; material {material.name!r} does not fix "
            f"where the Dirac point sits in the gap{_BI2SE3_PLACES if material.name == 'Bi2Se3' else ''}; give "
            "[material] valence_band_edge_meV and conduction_band_edge_meV to check it.")


#: where the four-band parameter sets put the bulk bands relative to the z-facet Dirac point (computed from their
#: dispersion, simsurface.models.bulk_params.bulk_band_edges_meV)
_BI2SE3_PLACES = (" (the four-band parameter sets put the conduction band 241 meV (Zhang 2009) or only 46 meV "
                  "(Liu 2010) above the z-facet Dirac point)")


def material_from_preset(preset: str, **overrides: float | None) -> Material:
    """Return a preset, optionally with some values replaced.

    Parameters
    ----------
    preset : str
        A key of :data:`PRESETS`, or ``"custom"`` for a material defined by ``overrides`` alone.
    **overrides
        ``dirac_velocity_m_s``, ``bulk_gap_meV``, ``effective_mass_ratio``, ``surface_g_factor``,
        ``rashba_meV_nm``; ``None`` keeps the preset value.
    """
    if preset == "custom":
        base = Material(name="custom")
    elif preset in PRESETS:
        base = PRESETS[preset]
    else:
        allowed = ", ".join([*PRESETS, "custom"])
        raise InputError(f"[material] preset: unknown material {preset!r}; allowed: {allowed}")
    given = {k: v for k, v in overrides.items() if v is not None}
    if not given:
        return base
    sources = dict(base.sources)
    for key in given:
        sources[key] = "user value"
    return replace(base, sources=sources, **given)
