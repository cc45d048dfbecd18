"""Parameters of the four-band k·p model of the Bi2Se3 family and its continuum surface states.

Matrix convention (fixed here, used throughout): the Hamiltonian of Zhang et al., Nat. Phys. 5, 438
(2009), Eq. (2), in the basis (|P1+,↑⟩, |P2−,↑⟩, |P1+,↓⟩, |P2−,↓⟩) — orbital index τ fastest, spin s
slowest, i.e. a matrix ``kron(s_i, τ_j)``::

    H(k) = ε(k) + M(k) τ_z + A1 k_z τ_x s_z + A2 (k_x τ_x s_x + k_y τ_x s_y)
    ε(k) = C + D1 k_z² + D2 (k_x² + k_y²),     M(k) = M0 − B1 k_z² − B2 (k_x² + k_y²)

z is the crystal c axis (stacking of the quintuple layers). The band ordering is inverted (topological)
when M0 and B1, B2 are positive. Units inside simsurface: meV, nm (1 eV Å = 100 meV nm,
1 eV Å² = 10 meV nm²). Papers that write M(k) = M0 + B1 k_z² + … with M0 < 0 (e.g. Liu et al.,
PRB 82, 045122 (2010)) map onto this form by exchanging the two orbitals (τ_z -> −τ_z, τ_x unchanged):
M0 -> −M0, B_i -> −B_i, all other parameters unchanged.

Surface states of a flat facet (continuum model, half space). For a facet with normal n and the
parameters D_n, B_n, A_n along n (z: D1, B1, A1; x or y: D2, B2, A2), the surface Dirac point and the
velocity along an in-plane direction t are::

    E_D = C + D_n M0 / B_n,      ħv_t = A_t (1 − D_n²/B_n²)^(1/2)

and the envelope is e^{−λ1 r} − e^{−λ2 r} (r the depth) with λ the roots of
B_n λ² − Ã λ + M0 = 0, Ã = A_n (1 − D_n²/B_n²)^(−1/2). For n = z this is the result of Shan, Lu & Shen,
New J. Phys. 12, 043048 (2010) (from memory); the derivation for any facet normal along a principal axis
is in docs/bulk.md: the surface spinor is fixed by the confining direction alone, and every in-plane
term A_t k_t τ_x s_t projects onto it with the factor (1 − D_n²/B_n²)^(1/2).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import minimize

from ..errors import InputError
from ..materials import PRESETS as PRESET_MATERIALS

#: parameter names, each in meV times nm^power (power 0, 1, 2)
PARAMETER_UNITS = {
    "C_meV": "meV", "D1_meV_nm2": "meV nm2", "D2_meV_nm2": "meV nm2", "M0_meV": "meV",
    "B1_meV_nm2": "meV nm2", "B2_meV_nm2": "meV nm2", "A1_meV_nm": "meV nm", "A2_meV_nm": "meV nm",
}


@dataclass(frozen=True)
class BulkParameters:
    """Parameters of the four-band model in the convention of this module (meV and nm).

    Attributes
    ----------
    name : str
    C_meV, M0_meV : float
    D1_meV_nm2, D2_meV_nm2, B1_meV_nm2, B2_meV_nm2 : float
        Index 1 is the c axis (z), index 2 the basal plane (x, y).
    A1_meV_nm, A2_meV_nm : float
    sources : dict
        Field name -> citation of the value.
    """

    name: str
    C_meV: float
    D1_meV_nm2: float
    D2_meV_nm2: float
    M0_meV: float
    B1_meV_nm2: float
    B2_meV_nm2: float
    A1_meV_nm: float
    A2_meV_nm: float
    sources: dict[str, str] = field(default_factory=dict, compare=False)

    def __post_init__(self) -> None:
        for name in PARAMETER_UNITS:
            value = getattr(self, name)
            if not math.isfinite(value):
                raise InputError(f"[model] {name}: must be a finite number (got {value})")
        if not self.M0_meV > 0:
            raise InputError(f"[model] M0_meV: must be > 0 in this convention (inverted bands); got {self.M0_meV}")
        for b, d in (("B1_meV_nm2", "D1_meV_nm2"), ("B2_meV_nm2", "D2_meV_nm2")):
            if not getattr(self, b) > abs(getattr(self, d)):
                raise InputError(f"[model] {b}: must exceed |{d}| (otherwise a band has no bottom and no "
                                 f"surface state exists); got {getattr(self, b)} and {getattr(self, d)}")
        for a in ("A1_meV_nm", "A2_meV_nm"):
            if not getattr(self, a) > 0:
                raise InputError(f"[model] {a}: must be > 0; got {getattr(self, a)}")

    def values(self) -> dict[str, float]:
        """The eight model parameters (no name, no sources)."""
        return {f.name: getattr(self, f.name) for f in fields(self) if f.name in PARAMETER_UNITS}

    # --- per direction -------------------------------------------------------------------------
    def along(self, axis: str) -> tuple[float, float, float]:
        """(D, B, A) along a crystal axis 'x', 'y' (basal plane) or 'z' (c axis)."""
        if axis == "z":
            return self.D1_meV_nm2, self.B1_meV_nm2, self.A1_meV_nm
        if axis in ("x", "y"):
            return self.D2_meV_nm2, self.B2_meV_nm2, self.A2_meV_nm
        raise ValueError(f"axis must be 'x', 'y' or 'z', got {axis!r}")

    @property
    def bulk_gap_meV(self) -> float:
        """Direct gap 2 M0 at Γ (Zhang et al., Nat. Phys. 5, 438 (2009))."""
        return 2.0 * self.M0_meV


def _preset(name: str, citation: str, published: str, **values: float) -> BulkParameters:
    """A preset whose every value carries ``citation`` and the value as printed in the paper."""
    printed = dict(zip(PARAMETER_UNITS, published.split(";")))
    return BulkParameters(name, **values, sources={k: f"{citation}: {v.strip()}" for k, v in printed.items()})


PRESETS: dict[str, BulkParameters] = {
    "Bi2Se3_zhang2009": _preset(
        "Bi2Se3_zhang2009", "Zhang et al., Nat. Phys. 5, 438 (2009), Bi2Se3 fit to ab initio bands (from memory)",
        "C = -0.0068 eV; D1 = 1.3 eV A^2; D2 = 19.6 eV A^2; M = 0.28 eV; B1 = 10 eV A^2; B2 = 56.6 eV A^2; "
        "A1 = 2.2 eV A; A2 = 4.1 eV A",
        C_meV=-6.8, D1_meV_nm2=13.0, D2_meV_nm2=196.0, M0_meV=280.0,
        B1_meV_nm2=100.0, B2_meV_nm2=566.0, A1_meV_nm=220.0, A2_meV_nm=410.0),
    "Bi2Se3_liu2010": _preset(
        "Bi2Se3_liu2010", "Liu et al., PRB 82, 045122 (2010), Bi2Se3 (from memory); mapped to the Zhang sign "
        "convention by exchanging the two orbitals",
        "C0 = -0.0083 eV; C1 = 5.74 eV A^2; C2 = 30.4 eV A^2; M0 = -0.28 eV; M1 = 6.86 eV A^2; "
        "M2 = 44.5 eV A^2; A1 = 2.26 eV A; A2 = 3.33 eV A",
        C_meV=-8.3, D1_meV_nm2=57.4, D2_meV_nm2=304.0, M0_meV=280.0,
        B1_meV_nm2=68.6, B2_meV_nm2=445.0, A1_meV_nm=226.0, A2_meV_nm=333.0),
}
DEFAULT_PRESET = "Bi2Se3_zhang2009"


def bulk_parameters(preset: str = DEFAULT_PRESET, **overrides: float | None) -> BulkParameters:
    """A parameter preset, optionally with values replaced; ``preset="custom"`` needs all eight values.

    Parameters
    ----------
    preset : str
        A key of :data:`PRESETS` or ``"custom"``.
    **overrides : float
        Any of the names in :data:`PARAMETER_UNITS`; ``None`` keeps the preset value.
    """
    given = {k: v for k, v in overrides.items() if v is not None}
    unknown = sorted(set(given) - set(PARAMETER_UNITS))
    if unknown:
        raise InputError(f"[model] {unknown[0]}: unknown bulk parameter; allowed: {', '.join(PARAMETER_UNITS)}")
    if preset == "custom":
        missing = [k for k in PARAMETER_UNITS if k not in given]
        if missing:
            raise InputError(f"[model] {missing[0]}: required for bulk_preset = 'custom' "
                             f"(a custom set needs all of {', '.join(PARAMETER_UNITS)})")
        return BulkParameters("custom", **{k: float(v) for k, v in given.items()},
                              sources={k: "user value" for k in given})
    if preset not in PRESETS:
        raise InputError(f"[model] bulk_preset: unknown parameter set {preset!r}; allowed: "
                         f"{', '.join([*PRESETS, 'custom'])}")
    base = PRESETS[preset]
    if not given:
        return base
    sources = dict(base.sources) | {k: "user value" for k in given}
    return replace(base, name=f"{base.name} (modified)", sources=sources, **{k: float(v) for k, v in given.items()})


# --- continuum surface states of a flat facet ---------------------------------------------------
def surface_dirac_point_meV(params: BulkParameters, normal: str) -> float:
    """Dirac-point energy E_D = C + D_n M0 / B_n of the facet with the given normal axis."""
    d, b, _ = params.along(normal)
    return params.C_meV + d * params.M0_meV / b


def surface_velocity_meV_nm(params: BulkParameters, normal: str, direction: str) -> float:
    """ħv along the in-plane ``direction`` on the facet with ``normal``: A_t (1 − D_n²/B_n²)^(1/2)."""
    if direction == normal:
        raise ValueError("the velocity direction must lie in the facet")
    d, b, _ = params.along(normal)
    _, _, a_t = params.along(direction)
    return a_t * math.sqrt(1.0 - (d / b) ** 2)


def surface_decay_rates_per_nm(params: BulkParameters, normal: str) -> np.ndarray:
    """The two roots λ (1/nm, possibly complex) of B_n λ² − Ã λ + M0 = 0 at the Dirac point."""
    d, b, a = params.along(normal)
    a_eff = a / math.sqrt(1.0 - (d / b) ** 2)
    return np.roots([b, -a_eff, params.M0_meV]).astype(complex)


def surface_profile(params: BulkParameters, normal: str, depth_nm: np.ndarray) -> np.ndarray:
    """Unnormalized density |e^{−λ1 r} − e^{−λ2 r}|² of the surface state at depth r (nm)."""
    l1, l2 = surface_decay_rates_per_nm(params, normal)
    r = np.asarray(depth_nm, dtype=float)
    if abs(l1 - l2) < 1e-12 * abs(l1):  # double root: r e^{−λ r}
        return np.abs(r * np.exp(-l1 * r)) ** 2
    return np.abs(np.exp(-l1 * r) - np.exp(-l2 * r)) ** 2


def surface_decay_length_nm(params: BulkParameters, normal: str) -> float:
    """Envelope decay length 1 / min Re λ of the facet's surface state (its slower exponential)."""
    return float(1.0 / np.min(surface_decay_rates_per_nm(params, normal).real))


def surface_mean_depth_nm(params: BulkParameters, normal: str) -> float:
    """Mean depth ∫ r ρ(r) dr / ∫ ρ(r) dr of the continuum surface state below a hard-wall surface."""
    ell = surface_decay_length_nm(params, normal)
    r = np.linspace(0.0, 30.0 * ell, 6001)
    rho = surface_profile(params, normal, r)
    return float(np.trapz(r * rho, r) / np.trapz(rho, r))


# --- local-facet approximation for a facet whose normal lies in the y-z plane ----------------------
def local_facet_surface(params: BulkParameters, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Dirac point (meV) and ħv around the wire (meV nm) of a facet whose normal makes angle θ with y.

    Exact (the formulas of the module docstring) for θ a multiple of π/2, i.e. facets normal to y or z.
    In between it is the *local-facet approximation*: D_n, B_n interpolated as D2 cos²θ + D1 sin²θ, …
    and A_t = (A2² sin²θ + A1² cos²θ)^(1/2); it neglects the D2 − D1, B2 − B1 cross terms k_n k_t, and is
    exact for isotropic parameters (D1 = D2, B1 = B2, A1 = A2).
    """
    c2 = np.cos(np.asarray(theta, dtype=float)) ** 2
    s2 = 1.0 - c2
    d_n = params.D2_meV_nm2 * c2 + params.D1_meV_nm2 * s2
    b_n = params.B2_meV_nm2 * c2 + params.B1_meV_nm2 * s2
    a_t = np.sqrt(params.A2_meV_nm**2 * s2 + params.A1_meV_nm**2 * c2)
    return params.C_meV + d_n * params.M0_meV / b_n, a_t * np.sqrt(1.0 - (d_n / b_n) ** 2)


def bulk_bands_meV(params: BulkParameters, k_basal_per_nm: ArrayLike, k_axis_per_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Continuum bulk bands E_∓(k) of the four-band model (each doubly degenerate), from the k·p zero.

    E_± = C + D1 k_z² + D2 k_⊥² ± [(M0 − B1 k_z² − B2 k_⊥²)² + A1² k_z² + A2² k_⊥²]^(1/2)
    (Zhang et al., Nat. Phys. 5, 438 (2009)); k_⊥ in the basal plane, k_z along the c axis. Returns
    (valence, conduction), broadcast shapes of the inputs.
    """
    kp, kz = np.asarray(k_basal_per_nm, dtype=float), np.asarray(k_axis_per_nm, dtype=float)
    eps = params.C_meV + params.D1_meV_nm2 * kz**2 + params.D2_meV_nm2 * kp**2
    mass = params.M0_meV - params.B1_meV_nm2 * kz**2 - params.B2_meV_nm2 * kp**2
    root = np.sqrt(mass**2 + (params.A1_meV_nm * kz) ** 2 + (params.A2_meV_nm * kp) ** 2)
    return eps - root, eps + root


def bulk_band_edges_meV(params: BulkParameters) -> tuple[float, float]:
    """(valence-band maximum, conduction-band minimum) of the continuum bands over all k, from the k·p zero.

    Not C ∓ M0: with these parameter sets the valence band's maximum lies away from Γ (a ring in k_⊥ or along k_z).
    Found on a grid in (k_⊥, k_z) ≥ 0 up to the inversion scale 2(M0/B)^½ and refined with scipy's bounded
    minimizer.
    """
    k_max = (2 * math.sqrt(params.M0_meV / min(params.B1_meV_nm2, params.B2_meV_nm2)),) * 2
    grid = np.linspace(0, 1, 201)
    kp, kz = np.meshgrid(grid * k_max[0], grid * k_max[1], indexing="ij")
    valence, conduction = bulk_bands_meV(params, kp, kz)
    edges = []
    for band, sign in ((valence, -1.0), (conduction, 1.0)):
        i = np.unravel_index(np.argmin(sign * band), band.shape)
        start = np.array([kp[i], kz[i]])
        which = 0 if sign < 0 else 1
        res = minimize(lambda k: sign * bulk_bands_meV(params, k[0], k[1])[which], start,
                       bounds=[(0, k_max[0]), (0, k_max[1])], method="L-BFGS-B")
        edges.append(float(sign * res.fun) if sign * res.fun <= sign * band[i] else float(band[i]))
    return edges[0], edges[1]


def surface_preset_comparison(params: BulkParameters) -> dict[str, float | str]:
    """How this parameter set's surface compares with the surface preset 'Bi2Se3' of the tube models.

    The two disagree and the user should see it: the four-band sets are fits to ab initio bands near Γ, the
    preset's ħv is an ARPES velocity (materials.py). Returns the z-facet ħv of the set, the preset's ħv, the
    band edges from the z-facet Dirac point and a sentence for reports.
    """
    preset = PRESET_MATERIALS["Bi2Se3"]
    hv_set = surface_velocity_meV_nm(params, "z", "x")
    hv_preset = preset.hbar_v_meV_nm
    e_d = surface_dirac_point_meV(params, "z")
    valence, conduction = bulk_band_edges_meV(params)
    note = (f"parameter set {params.name}: z-facet ħv = {hv_set:.0f} meV nm against {hv_preset:.0f} meV nm of the "
            f"surface preset 'Bi2Se3' ({preset.sources['dirac_velocity_m_s']}); its bulk bands lie "
            f"{valence - e_d:.0f} … {conduction - e_d:.0f} meV from the z-facet Dirac point (from the continuum "
            "dispersion; the valence maximum is away from Γ). A tube with the preset and a 3D wire with this set "
            "differ by these amounts; compare3d builds the 3D set's own tube.")
    return {"hbar_v_meV_nm": hv_set, "preset_hbar_v_meV_nm": hv_preset, "valence_band_edge_meV": valence - e_d,
            "conduction_band_edge_meV": conduction - e_d, "note": note}
