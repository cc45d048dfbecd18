"""Surface-lattice tube: the wire's conducting surface as a tight-binding lattice rolled into a tube.

Topological surface — Dirac Hamiltonian H = ħv(σ_x k_x + σ_y k_s) in the frame that turns with the
surface normal, discretized on a square lattice of spacing a (x along the wire, s around it)::

    H(k) = t (σ_x sin k_x a + σ_y sin k_s a) + W (2 − cos k_x a − cos k_s a) σ_z,   t = ħv/a,  W = r t

The Wilson term W gaps the fermion doublers at the zone edge (Nielsen–Ninomiya) by at least 2W, and
leaves one Dirac cone near k = 0. It is a σ_z mass that grows like W (ka)²/2 and therefore breaks time
reversal weakly; near the Dirac point the effect is small, but it is not zero (see the README).
The spin Berry phase π is the antiperiodic seam: hoppings across one line around the circumference are
multiplied by −1. The axial flux Φ enters as a Peierls phase −2πΦ/(Φ0 M) on every bond around.

Trivial surface — a parabolic electron layer, H = ħ²k²/(2m*), on the same lattice with hopping
t = ħ²/(2m* a²), periodic around the circumference (no Berry phase), spin-degenerate (conductance × 2).

Lattice-spacing rule (when not given): the largest a with k_max a ≤ κ, k_max the largest momentum in the
requested energy window; κ = 0.4 for the Dirac tube (k(E) within 3 % of the continuum) and κ = 0.5 for
the parabolic tube (E(k) within 2 %). The spacing is then reduced so that an integer number M ≥ 8 of
sites fits the perimeter; the same spacing is used along the wire. Beyond the validity limit (|E| > t/2
for Dirac, where k(E) is off by 5 %; E > 2t(1 − cos 0.75) for the parabolic tube) a
:class:`~simsurface.errors.ValidityWarning` is issued.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, replace
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from ..disorder.layout import SiteLayout
from ..errors import InputError, ValidityWarning
from ..geometry import CrossSection, contour_points
from ..transport.chain import Lead, SliceChain
from ..units import BOHR_MAGNETON_MEV_PER_T, HBAR2_OVER_2ME_MEV_NM2
from .field import AppliedField, FieldConversion, describe_surface_terms, surface_field_terms
from .profile import profile_at_meV

DIRAC_SPACING_KAPPA = 0.4
PARABOLIC_SPACING_KAPPA = 0.5
MIN_SITES_AROUND = 8
#: energy at which a vacant site is parked; its hoppings are zero, so it is decoupled exactly.
VACANCY_ONSITE_MEV = 1.0e7
#: σ_x, σ_y, σ_z
_PAULI = np.array([[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]])


@dataclass(frozen=True)
class SurfaceTube(FieldConversion):
    """A lattice tube model of a wire's conducting surface (lattice units stay inside).

    Use :meth:`from_geometry` to choose the lattice from an energy window; then :meth:`chain` to
    describe one flux value (and optionally a disorder realization) as a :class:`SliceChain`.

    Attributes
    ----------
    surface : {"topological", "trivial"}
    perimeter_nm, area_nm2, length_nm : float
        Surface-state contour and the wire length (the modelled length is ``n_along * spacing_nm``).
    energy_scale : float
        ħv in meV nm (topological) or m*/m_e (trivial).
    n_around, n_along : int
        Sites around the circumference (M) and along the wire (N).
    wilson_ratio : float
        r = W/t of the Dirac tube.
    lead_doping_meV : float
        Downward band shift in the leads (0: matched leads that continue the tube).
    field : AppliedField
        Field direction and surface g-factor (default: axial field, no Zeeman term).
    section : CrossSection or None
        Contour shape for position-dependent terms (None: a circle of ``perimeter_nm``).
    circumferential_potential_meV : tuple of float or None
        U(s_j) around the contour (:mod:`simsurface.models.profile`), on the wire and in the leads.
    rashba_meV_nm : float
        Rashba coupling α of a trivial surface, H_R = α (σ × k)·n (n the outward normal); 0: none.

    A trivial tube carries two spin orbitals per site (laboratory spin frame) when it has a Zeeman or a
    Rashba term; otherwise one orbital and the spin degeneracy 2, as before.
    """

    surface: Literal["topological", "trivial"]
    perimeter_nm: float
    area_nm2: float
    length_nm: float
    energy_scale: float
    n_around: int
    n_along: int
    wilson_ratio: float = 0.5
    lead_doping_meV: float = 0.0
    field: AppliedField = AppliedField()
    section: CrossSection | None = None
    circumferential_potential_meV: tuple[float, ...] | None = None
    rashba_meV_nm: float = 0.0

    # --- construction -------------------------------------------------------------------------
    @classmethod
    def from_geometry(cls, surface: str, perimeter_nm: float, area_nm2: float, length_nm: float, *,
                      hbar_v_meV_nm: float | None = None, mass_ratio: float | None = None,
                      max_energy_meV: float, spacing_nm: float | None = None, wilson_ratio: float = 0.5,
                      lead_doping_meV: float = 0.0, field: AppliedField | None = None,
                      section: CrossSection | None = None,
                      circumferential_potential_meV: tuple[float, ...] | None = None,
                      rashba_meV_nm: float = 0.0) -> "SurfaceTube":
        """Choose the lattice for a tube that must be valid up to ``max_energy_meV``.

        Parameters
        ----------
        surface : {"topological", "trivial"}
        perimeter_nm, area_nm2, length_nm : float
        hbar_v_meV_nm : float, for the topological surface
        mass_ratio : float, for the trivial surface
        max_energy_meV : float
            Largest |E| (from the Dirac point / band bottom) the model must describe.
        spacing_nm : float, optional
            Lattice spacing; chosen by the module's rule when omitted.
        wilson_ratio : float
            r = W/t, 0 < r ≤ 1; r = 1 makes the axial hopping singular, r = 0.5 is the default.
        lead_doping_meV : float
            Band shift of the doped leads, 0 for matched leads.
        field, section, circumferential_potential_meV, rashba_meV_nm
            See the class attributes (docs/fields.md).
        """
        if surface == "topological":
            if hbar_v_meV_nm is None or hbar_v_meV_nm <= 0:
                raise InputError("[material] dirac_velocity_m_s: a topological tube needs a Dirac velocity > 0")
            scale = hbar_v_meV_nm
            e_floor = 2 * math.pi * hbar_v_meV_nm / perimeter_nm
            k_max = max(abs(max_energy_meV), e_floor) / hbar_v_meV_nm
            kappa = DIRAC_SPACING_KAPPA
        elif surface == "trivial":
            if mass_ratio is None or mass_ratio <= 0:
                raise InputError("[material] effective_mass_ratio: a trivial tube needs an effective mass > 0")
            scale = mass_ratio
            unit = HBAR2_OVER_2ME_MEV_NM2 / mass_ratio
            e_floor = unit * (2 * math.pi / perimeter_nm) ** 2
            k_max = math.sqrt(max(abs(max_energy_meV), e_floor) / unit)
            kappa = PARABOLIC_SPACING_KAPPA
        else:
            raise InputError(f"surface: {surface!r} is not allowed; use 'topological' or 'trivial'")
        if rashba_meV_nm and surface != "trivial":
            raise InputError("[material] rashba_meV_nm: the Rashba term is modelled on a trivial surface only "
                             "([wire] surface = 'trivial'); the Dirac surface has its own spin-momentum locking")
        if not math.isfinite(rashba_meV_nm):
            raise InputError(f"[material] rashba_meV_nm: {rashba_meV_nm} is not a finite number (meV nm)")
        if not 0 < wilson_ratio <= 1:
            raise InputError(f"[model] wilson_ratio: {wilson_ratio} is outside the allowed range 0 < r <= 1")
        if spacing_nm is None:
            spacing_nm = kappa / k_max
        if spacing_nm <= 0:
            raise InputError(f"[model] lattice_spacing_nm: must be > 0 (got {spacing_nm})")
        n_around = max(MIN_SITES_AROUND, math.ceil(perimeter_nm / spacing_nm - 1e-9))
        a = perimeter_nm / n_around
        n_along = max(1, round(length_nm / a))
        tube = cls(surface, perimeter_nm, area_nm2, length_nm, scale, n_around, n_along, wilson_ratio,
                   lead_doping_meV, AppliedField() if field is None else field, section,
                   circumferential_potential_meV, float(rashba_meV_nm))
        if lead_doping_meV < 0 or lead_doping_meV > tube.hopping_meV:
            raise InputError(
                f"[contacts] lead_doping_meV: {lead_doping_meV} meV is outside 0 … {tube.hopping_meV:.4g} meV, "
                "the lattice hopping energy of this tube (a smaller lattice_spacing_nm raises the limit)")
        return tube

    # --- lattice quantities -------------------------------------------------------------------
    @property
    def spacing_nm(self) -> float:
        """Lattice spacing a = P/M, used around and along the tube."""
        return self.perimeter_nm / self.n_around

    @property
    def modelled_length_nm(self) -> float:
        return self.n_along * self.spacing_nm

    @property
    def spinful(self) -> bool:
        """True when a trivial tube carries both spin orbitals (Zeeman or Rashba term)."""
        return self.surface == "trivial" and (self.field.g_factor != 0 or self.rashba_meV_nm != 0)

    @property
    def orbitals(self) -> int:
        return 2 if self.surface == "topological" or self.spinful else 1

    @property
    def has_surface_terms(self) -> bool:
        """True when the clean tube is no longer the same at every site around (tilt, profile, Rashba at
        non-uniform curvature): the leads then declare no Fourier basis."""
        return self.field.tilted or self.circumferential_potential_meV is not None or self.rashba_meV_nm != 0

    @property
    def berry_phase(self) -> bool:
        return self.surface == "topological"

    @property
    def hopping_meV(self) -> float:
        """t = ħv/a (Dirac) or ħ²/(2m* a²) (parabolic)."""
        return self._hopping(self.spacing_nm)

    def _hopping(self, a_nm):
        if self.surface == "topological":
            return self.energy_scale / a_nm
        return HBAR2_OVER_2ME_MEV_NM2 / self.energy_scale / a_nm**2

    @property
    def validity_limit_meV(self) -> float:
        """Largest |E| where the lattice reproduces the continuum k(E) to about 5 %."""
        t = self.hopping_meV
        if self.surface == "topological":
            return 0.5 * t
        return 2 * t * (1 - math.cos(0.75))

    def check_energies(self, energies_meV: ArrayLike) -> None:
        """Warn when an energy lies outside the lattice model's validity window."""
        e = np.abs(np.asarray(energies_meV, dtype=float))
        lim = self.validity_limit_meV
        if e.size and e.max() > lim:
            warnings.warn(
                f"energies up to {e.max():.3g} meV exceed the lattice tube's validity limit {lim:.3g} meV "
                f"(spacing {self.spacing_nm:.3g} nm); results there are lattice artefacts. "
                "Use a smaller lattice_spacing_nm.", ValidityWarning, stacklevel=2)

    def disorder_layout(self) -> SiteLayout:
        """The lattice for :mod:`simsurface.disorder`: square grid (x, s), periodic around, every point a site."""
        return SiteLayout.tube(self.n_along, self.n_around, self.spacing_nm)

    def describe(self) -> dict:
        """JSON-able description of the lattice for provenance."""
        return {
            "model": "surface_lattice", "surface": self.surface, "perimeter_nm": self.perimeter_nm,
            "area_nm2": self.area_nm2, "length_nm": self.length_nm,
            "modelled_length_nm": self.modelled_length_nm, "spacing_nm": self.spacing_nm,
            "orbitals_per_site": self.orbitals, "n_around": self.n_around, "n_along": self.n_along, "hopping_meV": self.hopping_meV,
            "validity_limit_meV": self.validity_limit_meV,
            "wilson_ratio": self.wilson_ratio if self.surface == "topological" else None,
            "lead_doping_meV": self.lead_doping_meV,
            ("hbar_v_meV_nm" if self.surface == "topological" else "mass_ratio"): self.energy_scale,
            **self._surface_description(),
        }

    def _surface_description(self) -> dict:
        return describe_surface_terms(self.field, self.section, self.circumferential_potential_meV, self.rashba_meV_nm)

    def site_positions_nm(self) -> tuple[np.ndarray, np.ndarray]:
        """Positions of the lattice sites: x along the wire (N,) and s around it (M,), in nm."""
        a = self.spacing_nm
        return (np.arange(self.n_along) + 0.5) * a, np.arange(self.n_around) * a

    def lattice_subband_bottoms_meV(self, flux_quanta: ArrayLike) -> np.ndarray:
        """Bottom (at k_x = 0) of each of the M lattice subbands; shape ``flux + (M,)``.

        Dirac: E = [(t sin qa + b_x)² + W² (1 − cos qa)²]^(1/2) with the axial Zeeman energy b_x = g μ_B B_x/2;
        parabolic: E = 2t (1 − cos qa), split into 2t (1 − cos qa) ± |b| by a Zeeman term (shape ``flux + (2M,)``).
        The flux is the axial flux φ cos θ. With terms that vary around the wire (tilt, circumferential potential,
        Rashba) the energies at k_x = 0 are computed numerically instead (all of them, both signs; shape
        ``flux + (orbitals · M,)``).
        """
        if self.has_surface_terms:
            return self.transverse_energies_meV(flux_quanta)
        field_phi = np.asarray(flux_quanta, dtype=float)
        phi = self._axial_flux(field_phi, 1.0)[..., None]
        shift = 0.5 if self.berry_phase else 0.0
        q_a = 2 * np.pi * (np.arange(self.n_around) + shift - phi) / self.n_around
        t = self.hopping_meV
        half_g_b = 0.5 * self.field.g_factor * BOHR_MAGNETON_MEV_PER_T * self.field_T(field_phi)[..., None]
        if self.surface == "topological":
            w = self.wilson_ratio * t
            b_x = half_g_b * self.field.axial_fraction if self.field.g_factor else 0.0
            return np.sqrt((t * np.sin(q_a) + b_x) ** 2 + (w * (1 - np.cos(q_a))) ** 2)
        if self.spinful:
            e = 2 * t * (1 - np.cos(q_a))
            return np.concatenate([e - np.abs(half_g_b), e + np.abs(half_g_b)], axis=-1)
        return 2 * t * (1 - np.cos(q_a))

    def transverse_energies_meV(self, flux_quanta: ArrayLike) -> np.ndarray:
        """All eigenvalues at k_x = 0 of the clean tube (the lead's cell plus both hoppings)."""
        phi = np.asarray(flux_quanta, dtype=float)
        out = []
        for value in phi.reshape(-1):
            lead = self._lead(float(value)) if not self.lead_doping_meV else replace(self, lead_doping_meV=0.0)._lead(
                float(value))
            out.append(np.linalg.eigvalsh(lead.onsite + lead.hopping + lead.hopping.conj().T))
        return np.array(out).reshape(phi.shape + (-1,))

    def lattice_dispersion_meV(self, k_per_nm: ArrayLike, flux_quanta: float) -> np.ndarray:
        """Positive (Dirac) or only (parabolic) branch of the clean lattice bands; shape (M, n_k)."""
        k_a = np.asarray(k_per_nm, dtype=float) * self.spacing_nm
        shift = 0.5 if self.berry_phase else 0.0
        q_a = (2 * np.pi * (np.arange(self.n_around) + shift - flux_quanta) / self.n_around)[:, None]
        t = self.hopping_meV
        if self.surface == "topological":
            w = self.wilson_ratio * t
            return np.sqrt((t * np.sin(k_a)) ** 2 + (t * np.sin(q_a)) ** 2
                           + (w * (2 - np.cos(k_a) - np.cos(q_a))) ** 2)
        return 2 * t * (2 - np.cos(k_a) - np.cos(q_a))

    # --- description as slices ----------------------------------------------------------------
    def chain(self, flux_quanta: float, *, potential_meV: np.ndarray | None = None,
              slice_flux_quanta: np.ndarray | None = None, slice_perimeter_nm: np.ndarray | None = None,
              vacancies: np.ndarray | None = None, area_ratio: float = 1.0) -> SliceChain:
        """Describe the tube at one axial flux as a :class:`SliceChain`.

        Parameters
        ----------
        flux_quanta : float
            φ = B A/Φ0 of the field magnitude B through the nominal contour (the axial flux is φ cos θ; equal to
            it for an axial field); it also threads the leads.
        potential_meV : ndarray, shape (N, M), optional
            On-site potential of every site (disorder).
        slice_flux_quanta : ndarray, shape (N,), optional
            Local flux of each slice (roughness changes the enclosed area); default ``flux_quanta``.
        slice_perimeter_nm : ndarray, shape (N,), optional
            Local perimeter of each slice (roughness); sets the hopping around, M stays fixed.
        vacancies : ndarray of bool, shape (N, M), optional
            Sites removed from the lattice (decoupled exactly).
        area_ratio : float
            Scales the Aharonov–Bohm flux only (wire and leads): one area of a finite shell.
        """
        n, m = self.n_along, self.n_around
        field_phi = float(flux_quanta)
        phi = np.full(n, field_phi) if slice_flux_quanta is None else np.asarray(slice_flux_quanta, float)
        phi = self._axial_flux(phi, area_ratio)
        per = np.full(n, self.perimeter_nm) if slice_perimeter_nm is None else np.asarray(slice_perimeter_nm, float)
        pot = np.zeros((n, m)) if potential_meV is None else np.asarray(potential_meV, float)
        if phi.shape != (n,) or per.shape != (n,) or pot.shape != (n, m):
            raise ValueError("per-slice arrays must have shape (N,) and the potential (N, M)")
        alive = np.ones((n, m), bool) if vacancies is None else ~np.asarray(vacancies, bool)
        if self.circumferential_potential_meV is not None:
            pot = pot + self._profile_at_sites_meV()[None, :]

        pattern, values = self._slice_blocks(phi, per / m, pot, alive)
        pattern, values = self._with_site_terms(pattern, values, field_phi)
        c_rows, c_cols, c_block = self._axial_coupling(field_phi)
        # a coupling between slices j−1 and j exists only when both ends are present
        alive_ext = np.vstack([np.ones((1, m), bool), alive, np.ones((1, m), bool)])
        site_of_row = c_rows // self.orbitals
        c_alive = alive_ext[:-1][:, site_of_row] & alive_ext[1:][:, site_of_row]
        c_values = np.where(c_alive, c_block[None, :], 0.0).astype(complex)

        lead = self._lead(field_phi, area_ratio)
        degeneracy = 1 if self.berry_phase or self.spinful else 2
        return SliceChain(self.orbitals * m, pattern[0], pattern[1], values, c_rows, c_cols, c_values,
                          lead, lead, degeneracy=degeneracy, info=self.describe())

    def _lead(self, flux_quanta: float, area_ratio: float = 1.0) -> Lead:
        m = self.n_around
        pot = np.full((1, m), -self.lead_doping_meV)
        if self.circumferential_potential_meV is not None:
            pot = pot + self._profile_at_sites_meV()[None, :]
        pattern, values = self._slice_blocks(self._axial_flux(np.array([flux_quanta]), area_ratio),
                                             np.array([self.spacing_nm]), pot, np.ones((1, m), bool))
        pattern, values = self._with_site_terms(pattern, values, flux_quanta)
        size = self.orbitals * m
        onsite = np.zeros((size, size), complex)
        np.add.at(onsite, (pattern[0], pattern[1]), values[0])
        c_rows, c_cols, c_block = self._axial_coupling(flux_quanta)
        hop = np.zeros((size, size), complex)
        hop[c_rows, c_cols] = c_block
        if self.has_surface_terms:      # no longer the same at every site around: no Fourier blocks
            return Lead(onsite, hop)
        # the clean lead is invariant under rotation by one site (the seam and the flux are gauge
        # choices), so plane waves around the tube block-diagonalize it: one block per subband
        shift = 0.5 if self.berry_phase else 0.0
        s = np.arange(m)
        fourier = np.exp(2j * np.pi * np.outer(s, s + shift) / m) / np.sqrt(m)
        basis = np.kron(fourier, np.eye(self.orbitals))
        return Lead(onsite, hop, transverse_basis=basis, block_size=self.orbitals)

    def _axial_coupling(self, flux_quanta: float = 0.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Pattern and values of H_{j,j+1}: the same block on every site, times the Peierls phase of the
        perpendicular field and plus the axial Rashba term when present (``flux_quanta`` = B A/Φ0)."""
        m = self.n_around
        t = self.hopping_meV
        sites = np.arange(m)
        o, p = np.meshgrid([0, 1], [0, 1], indexing="ij")
        rows2 = (2 * sites[:, None] + o.ravel()).ravel()
        cols2 = (2 * sites[:, None] + p.ravel()).ravel()
        if self.surface == "topological":
            w = self.wilson_ratio * t
            block = np.array([[-w / 2, -0.5j * t], [-0.5j * t, w / 2]])  # −i(t/2)σ_x − (W/2)σ_z
            rows, cols, values = rows2, cols2, np.tile(block.ravel(), m)
        elif self.spinful:
            # −t·1 − i (α/2a) σ·e_s(s): the axial Rashba term α (σ·e_s) k_x (laboratory spin frame)
            tangent = contour_points(self.section, self._site_s_phys_nm(), self.perimeter_nm).tangent
            r = self.rashba_meV_nm / (2 * self.spacing_nm)
            sig = tangent[:, 0, None, None] * _PAULI[1] + tangent[:, 1, None, None] * _PAULI[2]      # (m, 2, 2)
            rows, cols, values = rows2, cols2, (-t * np.eye(2) - 1j * r * sig).reshape(-1)
        else:
            return sites, sites, np.full(m, -t, complex)
        if not self.field.tilted:
            return rows, cols, values
        terms = surface_field_terms(self.field, float(self.field_T(flux_quanta)), self.section, self.perimeter_nm,
                                    self._site_s_phys_nm())
        phase = np.exp(1j * self.spacing_nm * terms.axial_momentum_per_nm)        # k_x → k_x + (2π/Φ0) A_x
        return rows, cols, values * phase[rows // self.orbitals]

    # --- terms of the field and the circumferential potential (docs/fields.md) ----------------------
    def _site_s_phys_nm(self) -> np.ndarray:
        """Counterclockwise arc length of each site around: the lattice coordinate runs clockwise."""
        return np.mod(-np.arange(self.n_around) * self.spacing_nm, self.perimeter_nm)

    def _profile_at_sites_meV(self) -> np.ndarray:
        return profile_at_meV(self.circumferential_potential_meV, self._site_s_phys_nm() / self.perimeter_nm)

    def _axial_flux(self, flux_quanta: np.ndarray, area_ratio: float) -> np.ndarray:
        """Aharonov–Bohm flux φ cos θ · ``area_ratio`` of the flux parameters (unchanged for an axial field)."""
        if not self.field.tilted and area_ratio == 1.0:
            return flux_quanta
        return flux_quanta * self.field.axial_fraction * area_ratio

    def _with_site_terms(self, pattern, values, flux_quanta: float):
        """Append the on-site Zeeman blocks (2 × 2 per site) to a slice pattern; unchanged without them."""
        if not self.field.g_factor:
            return pattern, values
        m = self.n_around
        terms = surface_field_terms(self.field, float(self.field_T(flux_quanta)), self.section, self.perimeter_nm,
                                    self._site_s_phys_nm())
        if self.surface == "topological":        # turning frame: σ_1 B·e_s + σ_2 B_x + σ_3 B·n
            block = np.einsum("sk,kab->sab", terms.zeeman_meV, _PAULI)
        else:                                     # laboratory frame
            block = np.broadcast_to(np.einsum("k,kab->ab", terms.zeeman_lab_meV, _PAULI), (m, 2, 2))
        sites = np.arange(m)
        o, p = np.meshgrid([0, 1], [0, 1], indexing="ij")
        rows = (2 * sites[:, None] + o.ravel()).ravel()
        cols = (2 * sites[:, None] + p.ravel()).ravel()
        n = values.shape[0]
        extra = np.broadcast_to(block.reshape(-1), (n, rows.size)).astype(complex)
        return ((np.concatenate([pattern[0], rows]), np.concatenate([pattern[1], cols])),
                np.concatenate([values, extra], axis=1))

    def _slice_blocks(self, phi: np.ndarray, a_around: np.ndarray, pot: np.ndarray, alive: np.ndarray):
        """Pattern (rows, cols) and values (n_slices, nnz) of the slice Hamiltonians."""
        m = self.n_around
        a_x = self.spacing_nm
        sites = np.arange(m)
        nxt = (sites + 1) % m
        seam = np.ones(m)
        if self.berry_phase:
            seam[m - 1] = -1.0  # antiperiodic: spin Berry phase π
        # Peierls phase on bonds s -> s + a around the tube (per slice)
        bond_phase = np.exp(-2j * np.pi * phi / m)[:, None] * seam[None, :]          # (n, m)
        bond_alive = alive & alive[:, nxt]
        t_x = self._hopping(a_x)
        t_s = self._hopping(a_around)                                                  # (n,)
        if self.surface == "topological":
            r = self.wilson_ratio
            mass = r * (t_x + t_s)                                                     # (n,)
            diag = np.stack([mass[:, None] + pot, -mass[:, None] + pot], axis=2)       # (n, m, 2)
            # c_s = −i(t_s/2)σ_y − (W_s/2)σ_z = [[−W/2, −t/2], [t/2, W/2]]
            blocks = np.stack([-r * t_s / 2, -t_s / 2, t_s / 2, r * t_s / 2], axis=1)   # (n, 4)
            o, p = np.meshgrid([0, 1], [0, 1], indexing="ij")
            d_rows = (2 * sites[:, None] + np.arange(2)).ravel()
            b_rows = (2 * sites[:, None] + o.ravel()).ravel()
            b_cols = (2 * nxt[:, None] + p.ravel()).ravel()
            bond = (bond_phase * bond_alive)[:, :, None] * blocks[:, None, :]          # (n, m, 4)
            diag = np.where(alive[:, :, None], diag, VACANCY_ONSITE_MEV)
        elif not self.spinful:
            diag = (2 * t_x + 2 * t_s)[:, None] + pot                                  # (n, m)
            diag = np.where(alive, diag, VACANCY_ONSITE_MEV)[:, :, None]
            d_rows = sites
            b_rows, b_cols = sites, nxt
            bond = (-t_s[:, None] * bond_phase * bond_alive)[:, :, None]
        else:
            diag = (2 * t_x + 2 * t_s)[:, None] + pot                                  # (n, m)
            diag = np.repeat(np.where(alive, diag, VACANCY_ONSITE_MEV)[:, :, None], 2, axis=2)
            d_rows = (2 * sites[:, None] + np.arange(2)).ravel()
            # −t_s·1 − i (α/2a_s) σ_x: the circumferential Rashba term +α σ_x k_s' (s' runs clockwise)
            r = self.rashba_meV_nm / (2 * a_around)
            blocks = np.stack([-t_s + 0j, -1j * r, -1j * r, -t_s + 0j], axis=1)            # (n, 4)
            o, p = np.meshgrid([0, 1], [0, 1], indexing="ij")
            b_rows = (2 * sites[:, None] + o.ravel()).ravel()
            b_cols = (2 * nxt[:, None] + p.ravel()).ravel()
            bond = (bond_phase * bond_alive)[:, :, None] * blocks[:, None, :]
        n = phi.shape[0]
        bond = bond.reshape(n, -1)
        rows = np.concatenate([d_rows, b_rows, b_cols])
        cols = np.concatenate([d_rows, b_cols, b_rows])
        values = np.concatenate([diag.reshape(n, -1).astype(complex), bond, bond.conj()], axis=1)
        return (rows, cols), values
