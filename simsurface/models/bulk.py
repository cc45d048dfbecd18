"""Three-dimensional topological-insulator wire: the four-band lattice model of the whole cross-section.

The wire axis is x (a basal-plane direction of the crystal); the cross-section spans y (basal plane) and
z (the c axis). Sites sit on a cubic lattice of spacing a (:mod:`simsurface.models.bulk_lattice`), each
the centre of an a³ cell, so a rectangle of n_y × n_z sites has the modelled size n_y a × n_z a; a
circle keeps the sites whose centres lie inside it. A slice is one cross-section layer (4 orbitals per
site); the leads are the same clean wire continued to ±∞ (optionally with its bands shifted down by a
lead doping). All energies that leave this module are measured from the Dirac point of the facets
normal to z, E_D = C + D1 M0 / B1 (:func:`~simsurface.models.bulk_params.surface_dirac_point_meV`).

Axial field B along x enters by Peierls phases in the symmetric gauge A = (B/2)(0, −z, y): no phase on
the bonds along x, so the wire is translation invariant along x and the leads are the clean wire.
``flux_quanta`` is the flux through :attr:`BulkWire.area_nm2`, the area enclosed by the surface-state
contour (facet-resolved mean depth of the lattice surface state below the modelled surface).

Disorder: on-site potential per site (same on the 4 orbitals), e.g. uniform in [−W/2, W/2]
(:meth:`BulkWire.random_potential_meV`). Surface roughness: surface sites removed at random
(:meth:`BulkWire.random_vacancies`); a removed site keeps its orbitals but all its bonds are cut.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from functools import cached_property
from typing import Literal

import numpy as np

from ..disorder.layout import SiteLayout
from ..errors import InputError, ValidityWarning
from ..transport.chain import Lead, SliceChain
from . import bulk_lattice as lat
from .bulk_params import (BulkParameters, bulk_band_edges_meV, local_facet_surface, surface_decay_length_nm,
                          surface_dirac_point_meV, surface_preset_comparison)
from .tube import VACANCY_ONSITE_MEV, SurfaceTube

#: opposite facets closer than this many decay lengths hybridize noticeably (gap ~ e^{−L/ξ} > 2 %)
MIN_SEPARATION_DECAY_LENGTHS = 4.0
#: a dense slice of more orbitals than this is beyond what the engines handle in reasonable time
MAX_ORBITALS_PER_SLICE = 6400


@dataclass(frozen=True)
class CrossSectionLattice:
    """Sites of one cross-section layer and the bonds between them.

    Attributes
    ----------
    y_nm, z_nm : ndarray, shape (S,)
        Site positions relative to the wire axis.
    bonds : dict
        axis ('y' or 'z') -> (first, second) site indices with second = first + a e_axis.
    surface : ndarray of bool, shape (S,)
        Sites with at least one in-plane neighbour missing.
    """

    y_nm: np.ndarray
    z_nm: np.ndarray
    bonds: dict[str, tuple[np.ndarray, np.ndarray]]
    surface: np.ndarray

    @classmethod
    def build(cls, shape: str, n_y: int, n_z: int, spacing_nm: float) -> "CrossSectionLattice":
        iy, iz = np.meshgrid(np.arange(n_y), np.arange(n_z), indexing="ij")
        y = (iy + 0.5 - n_y / 2) * spacing_nm
        z = (iz + 0.5 - n_z / 2) * spacing_nm
        if shape == "circle":
            inside = y**2 + z**2 <= (n_y * spacing_nm / 2) ** 2 + 1e-9
        else:
            inside = np.ones_like(y, dtype=bool)
        index = np.full(inside.shape, -1)
        index[inside] = np.arange(int(inside.sum()))
        padded = np.pad(index, 1, constant_values=-1)
        bonds = {}
        for axis, (dy, dz) in (("y", (1, 0)), ("z", (0, 1))):
            nxt = padded[1 + dy: 1 + dy + n_y, 1 + dz: 1 + dz + n_z]
            ok = inside & (nxt >= 0)
            bonds[axis] = (index[ok], nxt[ok])
        neighbours = [padded[1 + dy: 1 + dy + n_y, 1 + dz: 1 + dz + n_z]
                      for dy, dz in ((1, 0), (-1, 0), (0, 1), (0, -1))]
        surface = inside & np.any(np.stack(neighbours) < 0, axis=0)
        return cls(y[inside], z[inside], bonds, surface[inside])

    @property
    def n_sites(self) -> int:
        return int(self.y_nm.size)


def _block_pattern(blocks: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """(o, p) positions that are structurally non-zero in any of the 4 × 4 ``blocks``."""
    mask = np.zeros((4, 4), bool)
    for b in blocks:
        mask |= np.abs(b) > 0
    return np.nonzero(mask)


@dataclass(frozen=True)
class BulkWire:
    """A topological-insulator wire described by the four-band lattice model (lattice units inside).

    Build it with :meth:`from_geometry`; describe one flux value (and disorder) with :meth:`chain`.

    Attributes
    ----------
    params : BulkParameters
    shape : {"rectangle", "circle"}
    n_y, n_z : int
        Sites across (y) and through (z) the cross-section (a circle has n_y = n_z sites across).
    n_along : int
        Slices along the wire.
    spacing_nm : float
    lead_doping_meV : float
        Downward band shift in both leads (0: matched leads).
    depth_y_nm, depth_z_nm : float
        Mean depth of the surface state below facets normal to y and to z (lattice slab).
    validity_meV : (float, float)
        Energies (from the z-facet Dirac point) where the lattice is trusted
        (:func:`~simsurface.models.bulk_lattice.validity_window_meV`).
    """

    params: BulkParameters
    shape: Literal["rectangle", "circle"]
    n_y: int
    n_z: int
    n_along: int
    spacing_nm: float
    lead_doping_meV: float = 0.0
    depth_y_nm: float = 0.0
    depth_z_nm: float = 0.0
    validity_meV: tuple[float, float] = (-math.inf, math.inf)

    # --- construction -------------------------------------------------------------------------
    @classmethod
    def from_geometry(cls, shape: str, width_nm: float, thickness_nm: float | None, length_nm: float,
                      params: BulkParameters, *, energy_window_meV: tuple[float, float] = (-60.0, 60.0),
                      spacing_nm: float | None = None, lead_doping_meV: float = 0.0) -> "BulkWire":
        """Choose the lattice for a wire that must be valid over ``energy_window_meV``.

        Parameters
        ----------
        shape : {"rectangle", "circle"}
        width_nm : float
            Width along y (rectangle) or diameter (circle).
        thickness_nm : float or None
            Thickness along the c axis z (rectangle); ignored for a circle.
        length_nm : float
            Length of the scattering region (modelled as a whole number of spacings).
        params : BulkParameters
        energy_window_meV : (float, float)
            Energies (from the z-facet Dirac point) the model must describe; sets the spacing.
        spacing_nm : float, optional
            Lattice spacing; when omitted, the largest spacing that (i) keeps every bulk state in the
            window at |k_i a| ≤ 0.6 (lattice and continuum), (ii) is at most the shortest surface-state
            decay length, (iii) keeps a single band inversion (a < 2 (B/M0)^(1/2)).
        lead_doping_meV : float
            Band shift of doped leads (0 for matched leads).
        """
        if shape not in ("rectangle", "circle"):
            raise InputError(f"[wire] cross_section: {shape!r} is not allowed; use 'circle' or 'rectangle'")
        if shape == "circle":
            thickness_nm = width_nm
        if thickness_nm is None or width_nm <= 0 or thickness_nm <= 0 or length_nm <= 0:
            raise InputError("[wire] width_nm, thickness_nm (or diameter_nm) and length_nm: must be > 0 nm")
        if lead_doping_meV < 0:
            raise InputError(f"[contacts] lead_doping_meV: must be >= 0 (got {lead_doping_meV})")
        e_ref = surface_dirac_point_meV(params, "z")
        lo, hi = sorted(float(e) for e in energy_window_meV)
        decay = min(surface_decay_length_nm(params, n) for n in ("y", "z"))
        a_top = 0.95 * lat.max_spacing_nm(params)
        if spacing_nm is None:
            try:
                spacing_nm = lat.choose_spacing_nm(params, (lo + e_ref, hi + lead_doping_meV + e_ref))
            except ValueError:
                raise InputError(f"[sweep] fermi_energy_meV: the window {lo:g} … {hi:g} meV reaches too far "
                                 "into the bulk bands for a lattice model; narrow it") from None
            spacing_nm = min(spacing_nm, decay)
        elif not 0 < spacing_nm < a_top:
            raise InputError(f"[model] lattice_spacing_nm: {spacing_nm} nm is outside 0 … {a_top:.3g} nm "
                             "(beyond it the lattice has extra band inversions at the zone edge)")
        n_y = max(2, round(width_nm / spacing_nm))
        n_z = n_y if shape == "circle" else max(2, round(thickness_nm / spacing_nm))
        n_along = max(1, round(length_nm / spacing_nm))
        window = lat.validity_window_meV(params, spacing_nm)
        wire = cls(params, shape, n_y, n_z, n_along, spacing_nm, float(lead_doping_meV),
                   lat.slab_mean_depth_nm(params, spacing_nm, "y"), lat.slab_mean_depth_nm(params, spacing_nm, "z"),
                   (window[0] - e_ref, window[1] - e_ref))
        if 4 * wire.sites.n_sites > MAX_ORBITALS_PER_SLICE:
            raise InputError(
                f"[wire] cross-section: {wire.sites.n_sites} sites ({4 * wire.sites.n_sites} orbitals per slice) "
                f"exceed the limit of {MAX_ORBITALS_PER_SLICE // 4} sites of the 3D model; use a smaller wire or "
                "a larger [model] lattice_spacing_nm")
        for normal, size in (("y", n_y * spacing_nm), ("z", n_z * spacing_nm)):
            xi = surface_decay_length_nm(params, normal)
            if size < MIN_SEPARATION_DECAY_LENGTHS * xi:
                warnings.warn(
                    f"the facets normal to {normal} are {size:.3g} nm apart, less than "
                    f"{MIN_SEPARATION_DECAY_LENGTHS:g} surface-state decay lengths ({xi:.3g} nm): their surface "
                    "states overlap and open a hybridization gap", ValidityWarning, stacklevel=2)
        return wire

    # --- geometry -------------------------------------------------------------------------------
    @cached_property
    def sites(self) -> CrossSectionLattice:
        return CrossSectionLattice.build(self.shape, self.n_y, self.n_z, self.spacing_nm)

    @property
    def orbitals_per_slice(self) -> int:
        return 4 * self.sites.n_sites

    @property
    def width_nm(self) -> float:
        """Modelled width along y (circle: diameter)."""
        return self.n_y * self.spacing_nm

    @property
    def thickness_nm(self) -> float:
        """Modelled thickness along z."""
        return self.n_z * self.spacing_nm

    @property
    def length_nm(self) -> float:
        return self.n_along * self.spacing_nm

    @property
    def energy_reference_meV(self) -> float:
        """Absolute energy of the model that this wire calls 0 (the z-facet Dirac point)."""
        return surface_dirac_point_meV(self.params, "z")

    @cached_property
    def _contour(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Surface-state contour: normal angles θ (from +y), arc-length weights ds (nm), radius/offsets."""
        if self.shape == "rectangle":
            w = self.width_nm - 2 * self.depth_y_nm
            t = self.thickness_nm - 2 * self.depth_z_nm
            theta = np.array([0.0, 0.5 * np.pi, np.pi, 1.5 * np.pi])
            return theta, np.array([t, w, t, w]), np.array([w, t])
        theta = np.linspace(0.0, 2 * np.pi, 1441)[:-1]
        radius = math.sqrt(self.sites.n_sites / math.pi) * self.spacing_nm
        r = radius - (self.depth_y_nm * np.cos(theta) ** 2 + self.depth_z_nm * np.sin(theta) ** 2)
        dr = np.gradient(r, theta)
        ds = np.sqrt(r**2 + dr**2) * (theta[1] - theta[0])
        return theta, ds, r

    @property
    def area_nm2(self) -> float:
        """Area enclosed by the surface-state contour; ``flux_quanta`` is the flux through it."""
        theta, ds, extra = self._contour
        if self.shape == "rectangle":
            return float(extra[0] * extra[1])
        return float(0.5 * np.sum(extra**2) * (theta[1] - theta[0]))

    @property
    def perimeter_nm(self) -> float:
        """Length of the surface-state contour."""
        return float(np.sum(self._contour[1]))

    @property
    def depth_nm(self) -> float:
        """Single depth d that gives :attr:`area_nm2` from the modelled cross-section."""
        from ..geometry import depth_from_area_nm

        return depth_from_area_nm(self.shape, self.width_nm, self.thickness_nm, self.area_nm2)

    # --- surface description (tube equivalent) --------------------------------------------------
    def tube_parameters(self) -> dict[str, float]:
        """Parameters of the surface tube with the same k_x = 0 thresholds (continuum, facets + contour).

        Around the contour the surface electron at k_x = 0 is a 1D massless Dirac fermion with local
        velocity v(s) and Dirac point E_D(s); its levels are E = Ē ± 2π|l + 1/2 − Φ/Φ0| / ∮ds/ħv(s), with
        Ē = ∮ E_D ds/ħv / ∮ ds/ħv. So the equivalent tube has ħv = P / ∮ ds/ħv (harmonic mean) and its
        Dirac point at Ē. Corners and the finite thickness of the surface layer are not in this picture.
        """
        theta, ds, _ = self._contour
        e_d, v = local_facet_surface(self.params, theta)
        time_like = float(np.sum(ds / v))
        return {
            "hbar_v_meV_nm": self.perimeter_nm / time_like,
            "dirac_point_meV": float(np.sum(e_d * ds / v) / time_like) - self.energy_reference_meV,
            "perimeter_nm": self.perimeter_nm,
            "area_nm2": self.area_nm2,
        }

    def equivalent_tube(self, max_energy_meV: float, spacing_nm: float | None = None) -> tuple[SurfaceTube, float]:
        """The :class:`SurfaceTube` of :meth:`tube_parameters` and its Dirac point in this wire's energies.

        Tube energies are measured from its own Dirac point: evaluate it at ``E − offset``.
        """
        p = self.tube_parameters()
        tube = SurfaceTube.from_geometry("topological", p["perimeter_nm"], p["area_nm2"], self.length_nm,
                                         hbar_v_meV_nm=p["hbar_v_meV_nm"], max_energy_meV=max_energy_meV,
                                         spacing_nm=spacing_nm)
        return tube, p["dirac_point_meV"]

    # --- validity and provenance ----------------------------------------------------------------
    def check_energies(self, energies_meV: np.ndarray) -> None:
        """Warn (:class:`ValidityWarning`) when an energy lies outside the lattice validity window."""
        e = np.asarray(energies_meV, dtype=float)
        if not e.size:
            return
        lo, hi = self.validity_meV
        if e.min() < lo or e.max() > hi or e.max() + self.lead_doping_meV > hi:
            warnings.warn(
                f"energies {e.min():.4g} … {e.max():.4g} meV (leads shifted by {self.lead_doping_meV:g} meV) "
                f"leave the 3D lattice model's validity window {lo:.4g} … {hi:.4g} meV at spacing "
                f"{self.spacing_nm:.3g} nm; bulk states there have |k a| > {lat.VALIDITY_KAPPA}. "
                "Use a smaller lattice_spacing_nm.", ValidityWarning, stacklevel=2)

    def disorder_layout(self) -> SiteLayout:
        """The cubic lattice for :mod:`simsurface.disorder`: the cross-section's sites on the (y, z) grid, surface
        sites marked (candidates for vacancies)."""
        pos = np.column_stack([self.sites.y_nm, self.sites.z_nm])
        return SiteLayout.from_positions(self.n_along, float(self.spacing_nm), pos, self.sites.surface)

    def describe(self) -> dict:
        """JSON-able provenance: lattice, sizes, validity, parameters with their sources."""
        tube = self.tube_parameters()
        return {
            "model": "bulk_lattice",
            "parameters": self.params.values(), "parameter_set": self.params.name,
            "parameter_sources": dict(self.params.sources),
            "cross_section": self.shape, "spacing_nm": self.spacing_nm,
            "sites_y": self.n_y, "sites_z": self.n_z, "sites_per_slice": self.sites.n_sites,
            "slices": self.n_along, "orbitals_per_slice": self.orbitals_per_slice,
            "modelled_width_nm": self.width_nm, "modelled_thickness_nm": self.thickness_nm,
            "modelled_length_nm": self.length_nm,
            "energy_reference_meV": self.energy_reference_meV,
            "validity_window_meV": list(self.validity_meV),
            # band edges of the continuum dispersion (the valence maximum lies away from Γ), from E_D(z)
            "bulk_gap_edges_meV": [edge - self.energy_reference_meV for edge in bulk_band_edges_meV(self.params)],
            "surface_preset_comparison": surface_preset_comparison(self.params)["note"],
            "surface_depth_y_nm": self.depth_y_nm, "surface_depth_z_nm": self.depth_z_nm,
            "area_nm2": self.area_nm2, "perimeter_nm": self.perimeter_nm,
            "tube_equivalent": tube, "lead_doping_meV": self.lead_doping_meV,
            "flux_gauge": "symmetric, A = (B/2)(0, -z, y); flux through area_nm2",
        }

    # --- disorder ---------------------------------------------------------------------------------
    def random_potential_meV(self, strength_meV: float, seed: int | np.random.Generator) -> np.ndarray:
        """Anderson disorder: uniform in [−W/2, W/2] on every site; shape (n_along, S)."""
        rng = np.random.default_rng(seed)
        return rng.uniform(-strength_meV / 2, strength_meV / 2, (self.n_along, self.sites.n_sites))

    def random_vacancies(self, fraction: float, seed: int | np.random.Generator) -> np.ndarray:
        """Surface roughness: each surface site removed with probability ``fraction``; shape (n_along, S)."""
        if not 0 <= fraction <= 1:
            raise InputError(f"[disorder] roughness_fraction: {fraction} is outside 0 … 1")
        rng = np.random.default_rng(seed)
        return (rng.random((self.n_along, self.sites.n_sites)) < fraction) & self.sites.surface[None, :]

    # --- description as slices ----------------------------------------------------------------
    def chain(self, flux_quanta: float, potential_meV: np.ndarray | None = None, *,
              vacancies: np.ndarray | None = None) -> SliceChain:
        """Describe the wire at one axial flux as a :class:`SliceChain` (meV).

        Parameters
        ----------
        flux_quanta : float
            Φ/Φ0 through :attr:`area_nm2` (the field is uniform and threads the leads too).
        potential_meV : ndarray, shape (n_along, S), optional
            On-site potential of every site of every slice.
        vacancies : ndarray of bool, shape (n_along, S), optional
            Removed sites (e.g. from :meth:`random_vacancies`).
        """
        n, s = self.n_along, self.sites.n_sites
        pot = np.zeros((n, s)) if potential_meV is None else np.asarray(potential_meV, dtype=float)
        alive = np.ones((n, s), bool) if vacancies is None else ~np.asarray(vacancies, bool)
        if pot.shape != (n, s) or alive.shape != (n, s):
            raise ValueError(f"potential and vacancies must have shape ({n}, {s})")
        (rows, cols), values = self._slice_blocks(float(flux_quanta), pot, alive)
        c_rows, c_cols, c_block = self._axial_coupling()
        alive_ext = np.vstack([np.ones((1, s), bool), alive, np.ones((1, s), bool)])
        site = c_rows // 4
        c_values = np.where(alive_ext[:-1][:, site] & alive_ext[1:][:, site], c_block[None, :], 0.0)
        lead = self._lead(float(flux_quanta), self.lead_doping_meV)
        info = self.describe() | {"flux_quanta": float(flux_quanta)}
        return SliceChain(self.orbitals_per_slice, rows, cols, values, c_rows, c_cols,
                          c_values.astype(complex), lead, lead, degeneracy=1, info=info)

    def _axial_coupling(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Pattern and values of H_{j, j+1}: T_x on every site (no Peierls phase along x)."""
        t_x = lat.hopping_block(self.params, self.spacing_nm, "x")
        o, p = _block_pattern([lat.IDENTITY, lat.TAU_Z, lat.GAMMA["x"]])
        base = 4 * np.arange(self.sites.n_sites)[:, None]
        return (base + o).ravel(), (base + p).ravel(), np.tile(t_x[o, p], self.sites.n_sites)

    def _slice_blocks(self, flux_quanta: float, pot: np.ndarray, alive: np.ndarray):
        """Pattern (rows, cols) and values (n_slices, nnz) of the slice Hamiltonians, vectorized."""
        a = self.spacing_nm
        sites = self.sites
        base = 4 * np.arange(sites.n_sites)
        onsite = np.diag(lat.onsite_block(self.params, a)).real - self.energy_reference_meV
        diag_vals = np.where(alive[:, :, None], onsite[None, None, :] + pot[:, :, None], VACANCY_ONSITE_MEV)
        rows = [(base[:, None] + np.arange(4)).ravel()]
        cols = [rows[0]]
        values = [diag_vals.reshape(pot.shape[0], -1).astype(complex)]
        field_per_nm2 = flux_quanta / self.area_nm2  # B/Φ0
        for axis in ("y", "z"):
            first, second = sites.bonds[axis]
            # ∫ A·dl / B over the bond r -> r + a e_axis in the gauge A = (B/2)(0, −z, y)
            line = -sites.z_nm[first] * a / 2 if axis == "y" else sites.y_nm[first] * a / 2
            phase = np.exp(-2j * np.pi * field_per_nm2 * line)                   # (bonds,)
            t = lat.hopping_block(self.params, a, axis)
            o, p = _block_pattern([lat.IDENTITY, lat.TAU_Z, lat.GAMMA[axis]])
            on = alive[:, first] & alive[:, second]                              # (n, bonds)
            vals = (on * phase[None, :])[:, :, None] * t[o, p][None, None, :]    # (n, bonds, k)
            r = (4 * first[:, None] + o).ravel()
            c = (4 * second[:, None] + p).ravel()
            vals = vals.reshape(pot.shape[0], -1)
            rows += [r, c]
            cols += [c, r]
            values += [vals, vals.conj()]
        return (np.concatenate(rows), np.concatenate(cols)), np.concatenate(values, axis=1)

    def _lead(self, flux_quanta: float, doping_meV: float) -> Lead:
        s = self.sites.n_sites
        (rows, cols), values = self._slice_blocks(flux_quanta, np.full((1, s), -doping_meV),
                                                  np.ones((1, s), bool))
        size = self.orbitals_per_slice
        onsite = np.zeros((size, size), complex)
        np.add.at(onsite, (rows, cols), values[0])
        c_rows, c_cols, c_block = self._axial_coupling()
        hop = np.zeros((size, size), complex)
        hop[c_rows, c_cols] = c_block
        return Lead(onsite, hop, transverse_basis=self._rotation_basis, block_size=size // 2)

    @cached_property
    def _rotation_basis(self) -> np.ndarray:
        """Eigenbasis of the rotation by π about the wire axis, (y, z) -> (−y, −z) with spin factor s_x.

        The clean wire (any flux: the symmetric gauge is invariant under the rotation) commutes with it,
        so the lead is block diagonal in this basis: the n/2 states of eigenvalue +1, then the n/2 of −1.
        The k·p model has this symmetry: s_x flips s_y and s_z, compensating k_y, k_z -> −k_y, −k_z.
        """
        sites = self.sites
        key = {(round(y / self.spacing_nm * 2), round(z / self.spacing_nm * 2)): i
               for i, (y, z) in enumerate(zip(sites.y_nm, sites.z_nm))}
        partner = np.array([key[(-round(y / self.spacing_nm * 2), -round(z / self.spacing_nm * 2))]
                            for y, z in zip(sites.y_nm, sites.z_nm)])
        n = self.orbitals_per_slice
        plus, minus = [], []
        for s, t in enumerate(partner):
            if t < s:
                continue
            orbitals = range(4) if t != s else range(2)  # a site on the axis pairs its own spins
            for o in orbitals:
                a, b = 4 * s + o, 4 * t + (o ^ 2)    # index = 2 * spin + orbital; s_x swaps spins
                plus.append((a, b))
                minus.append((a, b))
        u = np.zeros((n, n))
        for col, (a, b) in enumerate(plus):
            u[a, col] += 1 / np.sqrt(2)
            u[b, col] += 1 / np.sqrt(2)
        for col, (a, b) in enumerate(minus, start=len(plus)):
            u[a, col] += 1 / np.sqrt(2)
            u[b, col] -= 1 / np.sqrt(2)
        return u.astype(complex)

    # --- clean band structure ---------------------------------------------------------------------
    def subband_energies_meV(self, flux_quanta: float, k_per_nm: float = 0.0, doped: bool = False) -> np.ndarray:
        """All energies of the clean infinite wire at axial momentum k (default the subband extrema k = 0)."""
        lead = self._lead(flux_quanta, self.lead_doping_meV if doped else 0.0)
        phase = np.exp(1j * k_per_nm * self.spacing_nm)
        h = lead.onsite + phase * lead.hopping + np.conj(phase) * lead.hopping.conj().T
        return np.linalg.eigvalsh(h)

    def ab_crossing_flux(self, bracket: tuple[float, float] = (0.2, 0.8)) -> float:
        """Flux (units of h/e through :attr:`area_nm2`) where the two k_x = 0 levels nearest the
        tube-equivalent Dirac point cross.

        For a surface state enclosing the area A_eff, the l = 0 pair of Dirac subbands crosses when
        Φ through A_eff is h/2e (Bardarson, Brouwer & Moore, PRL 105, 156803 (2010)); so the crossing
        at ``flux_quanta`` = φ* gives A_eff = area_nm2 / (2 φ*).
        """
        from scipy.optimize import minimize_scalar

        centre = self.tube_parameters()["dirac_point_meV"]

        def gap(phi: float) -> float:  # spacing of the two levels nearest the centre (they cross)
            e = self.subband_energies_meV(phi)
            pair = e[np.argsort(np.abs(e - centre))[:2]]
            return float(abs(pair[1] - pair[0]))

        grid = np.linspace(*bracket, 25)  # coarse scan first: the gap has several local minima
        best = int(np.argmin([gap(phi) for phi in grid]))
        step = grid[1] - grid[0]
        res = minimize_scalar(gap, bounds=(grid[best] - step, grid[best] + step), method="bounded",
                              options={"xatol": 1e-6})
        return float(res.x)

    def effective_area_nm2(self) -> float:
        """Aharonov–Bohm area of the clean wire, A_eff = area_nm2 / (2 φ*) from :meth:`ab_crossing_flux`."""
        return self.area_nm2 / (2.0 * self.ab_crossing_flux())
