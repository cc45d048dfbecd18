"""Mode tube: a topological-insulator wire surface that keeps time reversal exactly.

Continuum model: H = ħv(σ_x k_x + σ_y q) + V(x, s) on a tube of perimeter P, in the spin frame that turns
with the surface normal (x along the wire, s around it). The topological surface has the spin Berry
phase π, q_l = 2π(l + 1/2 − φ)/P, φ = Φ/Φ0 (Zhang & Vishwanath, PRL 105, 206601 (2010); Bardarson,
Brouwer & Moore, PRL 105, 156803 (2010)); ``berry_phase=False`` gives q_l = 2π(l − φ)/P, a Dirac tube
without it (a diagnostic, not the trivial parabolic surface of :mod:`simsurface.models.tube`).

Discretization
--------------
*Around the circumference*: the exact transverse modes e^{2πi(l + 1/2)s/P} (plane waves, no lattice), so
q enters exactly. The flux is reduced, φ_red = φ − round(φ) (a gauge: l → l − round(φ)), and the modes
{l : |l + 1/2 − φ_red| ≤ L} (Berry) or {l : |l − φ_red| ≤ L} are kept. Time reversal maps q → −q together
with φ → −φ, so this set is mapped onto itself: the truncated model keeps G(Φ) = G(−Φ) and Kramers pairs at
Φ = 0 and Φ0/2 exactly. L is chosen from q_cut = κ_q k_max (``mode_cutoff_factor`` κ_q = 3 by default,
k_max = max|E|/ħv of the energy window, at least 2π/P). 2L or 2L + 1 modes are kept (it depends on φ).

*Along the wire*: the tangent discretization of Pacholski, Lemut, Tworzydło & Beenakker, SciPost Phys.
11, 105 (2021) and Beenakker et al., PRL 130, 226401 (2023) (written from memory; the properties used
are verified by the tests): slices at x_j = j a, the averaging map (Φψ)_{j+1/2} = (ψ_j + ψ_{j+1})/2 to the
bond centres and the generalized eigenproblem H ψ = E P ψ with

    P = Φ†Φ                        (onsite 1/2, neighbour 1/4, times the identity),
    H = −iħv σ_x D_sym + Φ† h Φ,   ⟨j|D_sym|j+1⟩ = 1/(2a) (naive symmetric difference),
    h(x_{j+1/2}) = ħv σ_y Q + V,    Q = diag(q_l), V_{l,l'} = (1/P) ∫ ds V(x, s) e^{−2πi(l−l')s/P} ⊗ 1_spin.

In k-space E = ±ħv [(2/a)² tan²(ka/2) + q²]^(1/2): one cone, the zone edge ka = π is pushed to infinite
energy (no doubler), and time reversal (iσ_y K with q → −q) holds exactly because P is a real scalar and V
is real. Every bond (cell [ja, (j+1)a]) carries its own h: the potential and, with roughness, the local
perimeter and flux are sampled at the cell centres.

Staggered solutions. The naive difference and Φ annihilate ψ_j = (−1)^j φ, so E P − H ψ = 0 for *every* E
and every h: these solutions live at ka = π, are exact in any disordered chain and carry current ±ħv/a per
spinor (σ_x eigenvectors). In a lead they appear as one right- and one left-moving channel per mode that
cross the scattering region untouched (transmission 1, no coupling to the physical channels). The chain
declares them as ``decoupled_channels`` (one per mode) and :func:`simsurface.transport.engines.transmission`
subtracts them; the tests check the result against an independent, current-conserving first-order
transfer matrix of the same equations that has no such solutions.

The potential's mode matrix is computed from V sampled on ``n_grid`` ≥ 4L + 2 points around the
circumference at every cell centre (FFT): structure finer than ≈ P/(2L) around the tube is filtered by
the basis. Units stay inside: the chain holds meV.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from ..disorder.layout import SiteLayout
from ..errors import InputError, ValidityWarning
from ..geometry import CrossSection
from ..transport.chain import Lead, SliceChain
from ..transport.cayley import CayleyStack
from ..transport.stack import ChainStack
from .field import AppliedField, FieldConversion, describe_surface_terms, surface_field_terms, zeeman_flux_shift_quanta
from .profile import profile_at_meV

#: default κ_q: modes up to |q| = κ_q k_max are kept
MODE_CUTOFF_FACTOR = 3.0
#: spacing rule k_max a ≤ this: the lattice wave number at a given energy is 2.0 % below k
#: ((2/a) tan(ka/2) exceeds k by 2.1 %)
AXIAL_SPACING_KAPPA = 0.5
#: k a at which the lattice wave number (2/a) arctan(ka/2) falls 5 % below k: the validity limit
VALIDITY_KA = 0.8113
#: smallest L (modes on each side of q = 0)
MIN_MAX_MODE = 2


@dataclass(frozen=True, eq=False)
class BondTerms:
    """The bond Hamiltonians of one description (flux value and disorder), in the mode basis.

    Attributes
    ----------
    mode_indices : ndarray of int, shape (m,)
        Angular indices l of the kept modes (after the gauge shift by round(φ)).
    h_meV : ndarray, shape (N + 2, 2m, 2m), complex
        h = ħv σ_y Q + V on every bond: index 0 the left-lead bond before slice 0, 1 … N the cells of the
        wire, N + 1 the right-lead bond after slice N. Orbital order (mode, spin).
    lead_meV : ndarray, shape (2m, 2m), complex
        h of the leads.
    kinetic_meV : float
        ħv/a: the symmetric difference couples neighbouring slices by −i (ħv/2a) σ_x.
    """

    mode_indices: np.ndarray
    h_meV: np.ndarray
    lead_meV: np.ndarray
    kinetic_meV: float


@dataclass(frozen=True)
class ModeTube(FieldConversion):
    """Tube of a topological surface in transverse modes, tangent-discretized along the wire.

    Use :meth:`from_geometry`; then :meth:`chain` describes one flux value (and optionally disorder)
    as an energy-dependent :class:`SliceChain`.

    Attributes
    ----------
    perimeter_nm, area_nm2, length_nm : float
        Surface-state contour and the wire length (modelled: ``n_cells * spacing_nm``).
    hbar_v_meV_nm : float
    spacing_nm : float
        Axial spacing a.
    n_cells : int
        Cells (bonds) of length a in the wire; the chain has ``n_cells + 1`` slices.
    max_mode : int
        L of the mode set.
    n_grid : int
        Points around the circumference on which a potential is given.
    berry_phase : bool
    lead_doping_meV : float
        Leads at potential −U (0: matched leads).
    mode_cutoff_factor : float
        κ_q used to choose L (provenance).
    field : AppliedField
        Field direction and surface g-factor (default: axial field, no Zeeman term — the flux alone).
    section : CrossSection or None
        Contour shape for the position-dependent terms (None: a circle of ``perimeter_nm``).
    circumferential_potential_meV : tuple of float or None
        U(s_j) around the contour (:mod:`simsurface.models.profile`), on the wire and in the leads.
    """

    perimeter_nm: float
    area_nm2: float
    length_nm: float
    hbar_v_meV_nm: float
    spacing_nm: float
    n_cells: int
    max_mode: int
    n_grid: int
    berry_phase: bool = True
    lead_doping_meV: float = 0.0
    mode_cutoff_factor: float = MODE_CUTOFF_FACTOR
    field: AppliedField = AppliedField()
    section: CrossSection | None = None
    circumferential_potential_meV: tuple[float, ...] | None = None

    # --- construction -------------------------------------------------------------------------
    @classmethod
    def from_geometry(cls, perimeter_nm: float, area_nm2: float, length_nm: float, *, hbar_v_meV_nm: float,
                      max_energy_meV: float, spacing_nm: float | None = None,
                      mode_cutoff_factor: float | None = None, berry_phase: bool = True,
                      lead_doping_meV: float = 0.0, field: AppliedField | None = None,
                      section: CrossSection | None = None,
                      circumferential_potential_meV: tuple[float, ...] | None = None) -> "ModeTube":
        """Choose modes and axial spacing for a tube valid up to ``max_energy_meV``.

        Parameters
        ----------
        perimeter_nm, area_nm2, length_nm : float
        hbar_v_meV_nm : float
            ħv of the surface Dirac cone.
        max_energy_meV : float
            Largest |E| from the Dirac point the model must describe.
        spacing_nm : float, optional
            Axial spacing a; default: the largest a with k_max a ≤ 0.5, where k_max covers the energy
            window in the wire and in the (doped) leads, (max|E| + U)/ħv.
        mode_cutoff_factor : float, optional
            κ_q (default 3): modes with |q| up to κ_q max(|E|/ħv, 2π/P) are kept.
        berry_phase : bool
            False: the diagnostic Dirac tube without the spin Berry phase.
        lead_doping_meV : float
            U ≥ 0, the band shift of the doped leads.
        field, section, circumferential_potential_meV
            See the class attributes (docs/fields.md).
        """
        if not (hbar_v_meV_nm and hbar_v_meV_nm > 0):
            raise InputError("[material] dirac_velocity_m_s: the mode tube needs a Dirac velocity > 0")
        kappa = MODE_CUTOFF_FACTOR if mode_cutoff_factor is None else float(mode_cutoff_factor)
        if not (math.isfinite(kappa) and kappa >= 1):
            raise InputError(f"[model] mode_cutoff_factor: {kappa} is not allowed; use a number >= 1 "
                             "(modes up to that multiple of the largest Fermi wave number are kept)")
        if not (math.isfinite(lead_doping_meV) and lead_doping_meV >= 0):
            raise InputError(f"[contacts] lead_doping_meV: must be >= 0 (got {lead_doping_meV})")
        k_wire = max(abs(max_energy_meV) / hbar_v_meV_nm, 2 * math.pi / perimeter_nm)
        max_mode = max(MIN_MAX_MODE, math.ceil(kappa * k_wire * perimeter_nm / (2 * math.pi) - 1e-9))
        if spacing_nm is None:
            spacing_nm = AXIAL_SPACING_KAPPA / (k_wire + lead_doping_meV / hbar_v_meV_nm)
        if not (math.isfinite(spacing_nm) and spacing_nm > 0):
            raise InputError(f"[model] lattice_spacing_nm: must be > 0 (got {spacing_nm})")
        n_cells = max(1, round(length_nm / spacing_nm))
        return cls(perimeter_nm, area_nm2, length_nm, hbar_v_meV_nm, float(spacing_nm), n_cells, max_mode,
                   4 * max_mode + 2, bool(berry_phase), float(lead_doping_meV), kappa,
                   AppliedField() if field is None else field, section, circumferential_potential_meV)

    # --- model quantities ---------------------------------------------------------------------
    @property
    def modelled_length_nm(self) -> float:
        return self.n_cells * self.spacing_nm

    @property
    def n_slices(self) -> int:
        return self.n_cells + 1

    @property
    def mode_cutoff_per_nm(self) -> float:
        """Smallest |q| that the kept set is guaranteed to contain at every flux: 2πL/P."""
        return 2 * math.pi * self.max_mode / self.perimeter_nm

    @property
    def validity_limit_meV(self) -> float:
        """Largest |E| (in the wire and in the leads, from their band centre) at which the lattice wave
        number (2/a) arctan(ka/2) is within 5 % of the continuum k."""
        return VALIDITY_KA * self.hbar_v_meV_nm / self.spacing_nm

    @property
    def surface(self) -> str:
        """Always "topological" (the name the surface-lattice tube uses for its Dirac surface)."""
        return "topological"

    def lattice_subband_bottoms_meV(self, flux_quanta: ArrayLike) -> np.ndarray:
        """Subband bottoms ħv|q_l| (k = 0, where the tangent discretization is exact); shape ``flux + (2L + 2,)``.

        q_l uses the effective flux (axial flux and Zeeman shift); terms that vary around the wire (tilt,
        circumferential potential) are not included.

        The indices l = −L − 1 … L around q = 0 at the nominal flux; the name is the surface-lattice tube's,
        so analyses that count channels take either model.
        """
        phi = np.asarray(self.effective_flux_quanta(np.asarray(flux_quanta, dtype=float)), dtype=float)[..., None]
        shift = 0.5 if self.berry_phase else 0.0
        l = np.arange(-self.max_mode - 1, self.max_mode + 1)
        return self.hbar_v_meV_nm * np.abs(2 * np.pi * (l + shift - (phi - np.round(phi))) / self.perimeter_nm)

    def mode_indices(self, flux_quanta: float) -> np.ndarray:
        """Kept angular indices l for the reduced flux φ − round(φ); shape (2L,) or (2L + 1,)."""
        phi = float(flux_quanta) - round(float(flux_quanta))
        shift = 0.5 if self.berry_phase else 0.0
        big = self.max_mode + 2
        l = np.arange(-big, big + 1)
        return l[np.abs(l + shift - phi) <= self.max_mode + 1e-12]

    def check_energies(self, energies_meV: ArrayLike) -> None:
        """Warn when an energy lies outside the validity window of the axial spacing or the mode cutoff."""
        e = np.abs(np.asarray(energies_meV, dtype=float))
        if not e.size:
            return
        lim = self.validity_limit_meV
        if e.max() + self.lead_doping_meV > lim:
            warnings.warn(
                f"energies up to {e.max():.3g} meV (plus the lead doping {self.lead_doping_meV:g} meV) exceed "
                f"the mode tube's validity limit {lim:.3g} meV (axial spacing {self.spacing_nm:.3g} nm); "
                "use a smaller lattice_spacing_nm.", ValidityWarning, stacklevel=2)
        k = e.max() / self.hbar_v_meV_nm
        if k > 0.5 * self.mode_cutoff_per_nm:
            warnings.warn(
                f"energies up to {e.max():.3g} meV reach above half the mode cutoff "
                f"(|q| <= {self.mode_cutoff_per_nm:.3g} /nm, {self.max_mode} modes on each side); disorder "
                "couples to too few closed modes there. Build the model for the whole energy window "
                "or raise mode_cutoff_factor.", ValidityWarning, stacklevel=2)

    def describe(self) -> dict:
        """JSON-able description for provenance."""
        return {
            "model": "surface_modes", "surface": "topological" if self.berry_phase else "dirac_without_berry_phase",
            "perimeter_nm": self.perimeter_nm, "area_nm2": self.area_nm2, "length_nm": self.length_nm,
            "modelled_length_nm": self.modelled_length_nm, "spacing_nm": self.spacing_nm,
            "n_cells": self.n_cells, "max_mode": self.max_mode, "n_modes": f"{2 * self.max_mode} or {2 * self.max_mode + 1}",
            "mode_cutoff_factor": self.mode_cutoff_factor, "mode_cutoff_per_nm": self.mode_cutoff_per_nm,
            "grid_points_around": self.n_grid, "hbar_v_meV_nm": self.hbar_v_meV_nm,
            "validity_limit_meV": self.validity_limit_meV, "lead_doping_meV": self.lead_doping_meV,
            **self._surface_description(),
        }

    def _surface_description(self) -> dict:
        return describe_surface_terms(self.field, self.section, self.circumferential_potential_meV)

    #: why the disorder kinds the mode tube cannot take are refused (read by :mod:`simsurface.disorder`)
    disorder_refusals = {"vacancies": "vacancies are a lattice notion; the mode tube has no sites to remove, "
                                      "use a potential (anderson_width_meV, puddle_rms_meV) instead"}

    def disorder_layout(self):
        """The potential grid for :mod:`simsurface.disorder`: cell centres × ``n_grid`` points around
        (periodic); per-slice roughness arrays apply to the cells."""
        return SiteLayout(self.n_cells, (self.spacing_nm, self.perimeter_nm / self.n_grid), (self.n_grid,), (True,),
                          np.arange(self.n_grid)[:, None], np.ones(self.n_grid, bool))

    def check_disorder(self, params) -> None:
        """Warn when a puddle potential has structure the model does not carry.

        Along the wire the potential is constant on each cell of length a: λ ≥ 2a is asked (common
        practice, no source). Around the tube a Gaussian-correlated potential (correlation length λ)
        couples the open channels (|q| ≤ k_F) to modes up to ≈ k_F + 3/λ; the kept set must reach that far
        (measured, docs/modes.md: relative error of G 2–6 % when it just does, ≤ 0.4 % at k_F + 4.3/λ).
        """
        if params.puddle_rms_meV > 0:
            lam = params.puddle_correlation_nm
            if lam < 2 * self.spacing_nm:
                warnings.warn(
                    f"[disorder] puddle_correlation_nm: {lam:g} nm puddles are sampled once per axial cell of "
                    f"{self.spacing_nm:.3g} nm (constant on each cell); set [model] lattice_spacing_nm <= "
                    f"{lam / 2:.3g} nm to resolve them along the wire", ValidityWarning, stacklevel=3)
            k_f = self.mode_cutoff_per_nm / self.mode_cutoff_factor
            if self.mode_cutoff_per_nm < k_f + 3 / lam:
                kappa = (k_f + 3 / lam) / k_f
                warnings.warn(
                    f"[disorder] puddle_correlation_nm: {lam:g} nm puddles couple modes up to |q| ≈ "
                    f"{k_f + 3 / lam:.3g} /nm, beyond the mode cutoff {self.mode_cutoff_per_nm:.3g} /nm; use "
                    f"[model] mode_cutoff_factor >= {kappa:.2g}", ValidityWarning, stacklevel=3)

    def site_positions_nm(self) -> tuple[np.ndarray, np.ndarray]:
        """Where a potential is given: cell centres x along the wire (N,) and grid points s around (n_grid,), nm."""
        return (np.arange(self.n_cells) + 0.5) * self.spacing_nm, np.arange(self.n_grid) * self.perimeter_nm / self.n_grid

    # --- field and circumferential potential (docs/fields.md) ---------------------------------
    @property
    def has_surface_terms(self) -> bool:
        """True when terms that depend on the position around the wire mix the modes (tilt, profile)."""
        return self.field.tilted or self.circumferential_potential_meV is not None

    def effective_flux_quanta(self, flux_quanta: ArrayLike, area_ratio: float = 1.0) -> np.ndarray | float:
        """The flux that sets the transverse momenta: φ cos θ · ``area_ratio`` − δφ_Zeeman.

        Exactly ``flux_quanta`` for an axial field without Zeeman term and ``area_ratio`` = 1 (today's model).
        """
        if self.field.is_axial_orbital_only and area_ratio == 1.0:
            return flux_quanta
        phi = np.asarray(flux_quanta, dtype=float)
        axial_T = self.field_T(phi) * self.field.axial_fraction
        shift = zeeman_flux_shift_quanta(self.field.g_factor, axial_T, self.perimeter_nm, self.hbar_v_meV_nm)
        out = phi * self.field.axial_fraction * area_ratio - shift
        return float(out) if np.ndim(out) == 0 else out

    def surface_terms_meV(self, flux_quanta: float, mode_indices: np.ndarray) -> np.ndarray | None:
        """Mode matrix (2m × 2m, orbital order (mode, spin)) of the terms that vary around the wire: the
        circumferential potential, the Zeeman parts σ_1 B·e_s and σ_3 B·n and the perpendicular orbital term
        ħv σ_1 (2π/Φ0) A_x(s); None when there are none. The axial Zeeman part is in the flux
        (:meth:`effective_flux_quanta`).
        """
        if not self.has_surface_terms:
            return None
        s_model = np.arange(self.n_grid) * self.perimeter_nm / self.n_grid      # the model's s' runs clockwise
        s_phys = np.mod(-s_model, self.perimeter_nm)
        m = mode_indices.size
        out = np.zeros((m, 2, m, 2), complex)
        if self.circumferential_potential_meV is not None:
            u = profile_at_meV(self.circumferential_potential_meV, s_phys / self.perimeter_nm)
            v = self.potential_modes_meV(u, mode_indices)
            out[:, 0, :, 0] += v
            out[:, 1, :, 1] += v
        if self.field.tilted or self.field.g_factor:
            terms = surface_field_terms(self.field, float(self.field_T(flux_quanta)), self.section,
                                        self.perimeter_nm, s_phys)
            sigma_1 = terms.zeeman_meV[:, 0] + self.hbar_v_meV_nm * terms.axial_momentum_per_nm
            pauli = (np.array([[0, 1], [1, 0]]), np.array([[1, 0], [0, -1]]))
            for coeff, sigma in zip((sigma_1, terms.zeeman_meV[:, 2]), pauli):
                if np.any(coeff):
                    out += self.potential_modes_meV(coeff, mode_indices)[:, None, :, None] * sigma[None, :, None, :]
        return out.reshape(2 * m, 2 * m)

    def clean_bands_meV(self, flux_quanta: float, k_per_nm: ArrayLike) -> np.ndarray:
        """Bands of the clean tube (with its field terms and circumferential potential, without lead doping):
        the eigenvalues of H(k) ψ = E P(k) ψ of the tangent discretization; shape (n_k, 2m), ascending.

        Uniform tube: E = ±ħv[(2/a)² tan²(ka/2) + q_l²]^(1/2).
        """
        terms = self.bond_terms(flux_quanta)
        h = terms.h_meV[0] + (self.lead_doping_meV * np.eye(terms.h_meV.shape[1]) if self.lead_doping_meV else 0)
        size = h.shape[0]
        onsite, hop = h / 2, _kinetic(size, terms.kinetic_meV) + h / 4
        out = []
        for k in np.atleast_1d(np.asarray(k_per_nm, dtype=float)):
            phase = np.exp(1j * k * self.spacing_nm)
            hk = onsite + hop * phase + hop.conj().T / phase
            overlap = (0.5 + 0.5 * np.cos(k * self.spacing_nm)) * np.eye(size)
            out.append(np.linalg.eigvalsh(hk / overlap[0, 0]) if overlap[0, 0] > 0 else np.full(size, np.inf))
        return np.array(out)

    # --- description --------------------------------------------------------------------------
    def potential_modes_meV(self, potential_meV: np.ndarray, mode_indices: np.ndarray) -> np.ndarray:
        """Mode matrices V_{l,l'} = (1/P) ∫ ds V(s) e^{−2πi(l−l')s/P} of potentials on the grid around.

        Parameters
        ----------
        potential_meV : ndarray, shape (..., n_grid)
            V at the points ``site_positions_nm()[1]``.
        mode_indices : ndarray of int, shape (m,)

        Returns
        -------
        ndarray, shape (..., m, m), complex (Hermitian for real V)
        """
        pot = np.asarray(potential_meV, dtype=float)
        if pot.shape[-1] != self.n_grid:
            raise ValueError(f"a potential needs {self.n_grid} points around the tube")
        coeff = np.fft.fft(pot, axis=-1) / self.n_grid          # Fourier coefficient of e^{+2πi k s/P}
        diff = (mode_indices[:, None] - mode_indices[None, :]) % self.n_grid
        return coeff[..., diff]

    def bond_terms(self, flux_quanta: float, *, potential_meV: np.ndarray | None = None,
                   slice_flux_quanta: np.ndarray | None = None,
                   slice_perimeter_nm: np.ndarray | None = None, area_ratio: float = 1.0) -> BondTerms:
        """Bond Hamiltonians h = ħv σ_y Q + V of the leads and of every cell; see :meth:`chain`."""
        n = self.n_cells
        field_phi = float(flux_quanta)
        phi = float(self.effective_flux_quanta(field_phi, area_ratio))
        cell_phi = (np.full(n, phi) if slice_flux_quanta is None
                    else np.asarray(self.effective_flux_quanta(np.asarray(slice_flux_quanta, float), area_ratio)))
        cell_per = (np.full(n, self.perimeter_nm) if slice_perimeter_nm is None
                    else np.asarray(slice_perimeter_nm, float))
        if cell_phi.shape != (n,) or cell_per.shape != (n,):
            raise ValueError(f"per-cell flux and perimeter must have shape ({n},)")
        l = self.mode_indices(phi)
        m = l.size
        gauge = round(phi)            # the same integer for every cell: a global relabelling of l
        shift = 0.5 if self.berry_phase else 0.0
        # bonds: left lead, the n cells, right lead
        all_phi = np.concatenate([[phi], cell_phi, [phi]]) - gauge
        all_per = np.concatenate([[self.perimeter_nm], cell_per, [self.perimeter_nm]])
        q = 2 * np.pi * (l[None, :] + shift - all_phi[:, None]) / all_per[:, None]       # (n + 2, m)
        sigma_y = np.array([[0, -1j], [1j, 0]])
        h = np.zeros((n + 2, m, 2, m, 2), complex)
        idx = np.arange(m)
        h[:, idx, :, idx, :] = (self.hbar_v_meV_nm * q).T[:, :, None, None] * sigma_y
        h[0, idx, 0, idx, 0] = h[0, idx, 1, idx, 1] = -self.lead_doping_meV
        h[-1, idx, 0, idx, 0] = h[-1, idx, 1, idx, 1] = -self.lead_doping_meV
        if potential_meV is not None:
            pot = np.asarray(potential_meV, float)
            if pot.shape != (n, self.n_grid):
                raise ValueError(f"the potential must have shape ({n}, {self.n_grid}) (cells, points around)")
            v = self.potential_modes_meV(pot, l)                                           # (n, m, m)
            h[1:-1, :, 0, :, 0] += v
            h[1:-1, :, 1, :, 1] += v
        h = h.reshape(n + 2, 2 * m, 2 * m)
        extra = self.surface_terms_meV(field_phi, l)
        if extra is not None:
            h = h + extra
        return BondTerms(l, h, h[0], self.hbar_v_meV_nm / self.spacing_nm)

    def chain(self, flux_quanta: float, *, potential_meV: np.ndarray | None = None,
              slice_flux_quanta: np.ndarray | None = None,
              slice_perimeter_nm: np.ndarray | None = None, area_ratio: float = 1.0) -> SliceChain:
        """Describe the tube at one axial flux as an energy-dependent :class:`SliceChain`.

        Parameters
        ----------
        flux_quanta : float
            φ = B A/Φ0 of the field magnitude B through the nominal contour (the axial flux φ cos θ; equal to it
            for an axial field); it also threads the leads.
        potential_meV : ndarray, shape (N, n_grid), optional
            Potential at the cell centres and the points around (``site_positions_nm()``).
        slice_flux_quanta : ndarray, shape (N,), optional
            Local flux of each cell (roughness changes the enclosed area); default ``flux_quanta``.
        slice_perimeter_nm : ndarray, shape (N,), optional
            Local perimeter of each cell (roughness).
        area_ratio : float
            Scales the Aharonov–Bohm flux only (wire and leads): one area of a finite shell
            (:mod:`simsurface.models.shell`).

        Returns
        -------
        SliceChain
            N + 1 slices of 2m orbitals (m = 2L or 2L + 1 modes, depending on the flux); solve it with
            :func:`simsurface.transport.engines.transmission`.
        """
        terms = self.bond_terms(flux_quanta, potential_meV=potential_meV, slice_flux_quanta=slice_flux_quanta,
                                slice_perimeter_nm=slice_perimeter_nm, area_ratio=area_ratio)
        h = terms.h_meV
        size = h.shape[1]
        kinetic = _kinetic(size, terms.kinetic_meV)
        mixing = potential_meV is not None or self.has_surface_terms
        if not mixing:      # modes do not mix: one 2 × 2 block per mode
            blocks = np.kron(np.eye(size // 2, dtype=bool), np.ones((2, 2), bool))
            rows, cols = np.nonzero(blocks)
        else:
            rows, cols = np.nonzero(np.ones((size, size), bool))
        diag = (rows == cols).astype(float)
        onsite = ((h[:-1] + h[1:]) / 4)[:, rows, cols]                   # slice j: bonds j − 1 and j
        coupling = (kinetic + h / 4)[:, rows, cols]                       # H_{j−1, j}: bond j − 1
        lead = _lead(terms.lead_meV, kinetic, blocks=not self.has_surface_terms)
        info = dict(self.describe(), orbitals_per_site=size, n_modes=int(terms.mode_indices.size))
        return SliceChain(size, rows, cols, onsite, rows, cols, coupling, lead, lead, degeneracy=1, info=info,
                          onsite_overlap=np.broadcast_to(diag / 2, onsite.shape),
                          coupling_overlap=np.broadcast_to(diag / 4, coupling.shape),
                          decoupled_channels=int(terms.mode_indices.size))


    def chain_stacks(self, flux_quanta: ArrayLike, energies_meV: ArrayLike, *,
                     potential_meV: np.ndarray | None = None, slice_flux_quanta: np.ndarray | None = None,
                     slice_perimeter_nm: np.ndarray | None = None) -> list[tuple[np.ndarray, ChainStack]]:
        """Describe every (flux, energy) point of one disorder realization as stacks for the batched engine.

        The potential's mode matrices — the costly part, identical for every flux and energy — are computed
        once and form the stacks' shared part; what flux and energy change (the bond terms without the
        potential, E P) is the varying part. Point k of a stack is (flux ``indices[k // n_energy]``,
        energy ``k % n_energy``); fluxes with different mode sets (Φ/Φ0 exactly half-integer keeps one
        more mode) go into different stacks.

        Parameters
        ----------
        flux_quanta : array_like, shape (F,)
        energies_meV : array_like, shape (E,)
        potential_meV : ndarray, shape (N, n_grid), optional
        slice_flux_quanta : ndarray, shape (F, N), optional
            Local flux of every cell for each flux value (roughness); default the flux value itself.
        slice_perimeter_nm : ndarray, shape (N,), optional

        Returns
        -------
        list of (indices, ChainStack)
            ``indices`` (shape (F_k,)) are the flux values of the stack, in the order of ``flux_quanta``.
        """
        fluxes = np.atleast_1d(np.asarray(flux_quanta, dtype=float))
        energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
        return [(idx, self._stack(fluxes[idx], energies, l, potential_meV, local, slice_perimeter_nm))
                for l, idx, local in self._flux_groups(fluxes, slice_flux_quanta)]

    def cayley_stacks(self, flux_quanta: ArrayLike, energies_meV: ArrayLike, *,
                      potential_meV: np.ndarray | None = None, slice_flux_quanta: np.ndarray | None = None,
                      slice_perimeter_nm: np.ndarray | None = None) -> list[tuple[np.ndarray, CayleyStack]] | None:
        """The same points as :meth:`chain_stacks` in the first-order form of the tangent discretization.

        On the bond b between slices b − 1 and b the equations read A_b ψ_b + A_b† ψ_{b−1} = 0 with
        A_b = (E − h_b)/4 + i (ħv/2a) σ_x (:mod:`simsurface.transport.cayley`): the physical solutions of
        the chain without its staggered ones, about half the work per slice. Their transmission is the
        chain's minus ``decoupled_channels`` (tested against kwant on the chain). Returns None when the
        leads are not block diagonal in the modes (terms that vary around the tube); use
        :meth:`chain_stacks` then.
        """
        if self.has_surface_terms:
            return None
        fluxes = np.atleast_1d(np.asarray(flux_quanta, dtype=float))
        energies = np.atleast_1d(np.asarray(energies_meV, dtype=float))
        out = []
        for l, idx, local in self._flux_groups(fluxes, slice_flux_quanta):
            m, n = l.size, self.n_cells
            size = 2 * m
            terms, kinetic, rows, cols, h, v = self._stack_parts(fluxes[idx], l, potential_meV, local,
                                                                 slice_perimeter_nm)
            # A = (E − h)/4 + i (ħv/2a) σ_x = E/4 − h/4 − kinetic (kinetic = −i (ħv/2a) σ_x)
            diag = (rows == cols).astype(float)
            e = np.tile(energies, idx.size)[:, None, None]
            bonds = np.repeat(-h[:, 1:-1] / 4 - kinetic[rows, cols], energies.size, axis=0) + e * diag / 4
            lead = np.stack([-t.lead_meV / 4 - kinetic for t in terms])               # (F, n, n)
            lead = np.repeat(lead, energies.size, axis=0) + e * np.eye(size) / 4
            if v is None:
                s_rows = s_cols = np.zeros(0, np.int64)
                s_vals = np.zeros((n, 0), complex)
            else:
                s_rows, s_cols, a, b = _spin_diagonal_pattern(m)
                s_vals = np.tile((-v[1:-1] / 4)[:, a, b], 2)
            current = np.kron(np.eye(m), [[0.0, 1.0], [1.0, 0.0]])
            out.append((idx, CayleyStack(size, np.tile(energies, idx.size), current, s_rows, s_cols, s_vals,
                                         rows, cols, bonds, lead, lead, antihermitian=-2 * kinetic,
                                         degeneracy=1)))
        return out

    def _flux_groups(self, fluxes: np.ndarray, slice_flux_quanta):
        """(mode indices, flux indices, their per-cell fluxes or None) for every distinct mode set."""
        groups: dict[tuple, list[int]] = {}
        for i, phi in enumerate(fluxes):
            groups.setdefault(tuple(self.mode_indices(self.effective_flux_quanta(phi))), []).append(i)
        for key, members in groups.items():
            idx = np.array(members)
            yield np.array(key), idx, None if slice_flux_quanta is None else np.asarray(slice_flux_quanta, float)[idx]

    def _stack_parts(self, fluxes: np.ndarray, l: np.ndarray, potential_meV, slice_flux, slice_perimeter):
        """What the stacks of one mode set share: bond terms of every flux on the pattern they vary on,
        the kinetic term, the leads' bond terms and the potential's mode matrices on every bond."""
        m, n = l.size, self.n_cells
        size = 2 * m
        terms = [self.bond_terms(phi, slice_flux_quanta=None if slice_flux is None else slice_flux[k],
                                 slice_perimeter_nm=slice_perimeter) for k, phi in enumerate(fluxes)]
        kinetic = _kinetic(size, terms[0].kinetic_meV)
        # pattern of what flux and energy change: the bond terms of the first flux (checked for the others)
        mask = np.any(terms[0].h_meV != 0, axis=0) | (kinetic != 0) | np.eye(size, dtype=bool)
        if any(np.any(t.h_meV[:, ~mask] != 0) for t in terms[1:]):
            mask |= np.any([np.any(t.h_meV != 0, axis=0) for t in terms], axis=0)
        rows, cols = np.nonzero(mask)
        h = np.stack([t.h_meV[:, rows, cols] for t in terms])                       # (F, N + 2, nnz)
        v = None
        if potential_meV is not None:
            pot = np.asarray(potential_meV, float)
            if pot.shape != (n, self.n_grid):
                raise ValueError(f"the potential must have shape ({n}, {self.n_grid}) (cells, points around)")
            v = np.zeros((n + 2, m, m), complex)
            v[1:-1] = self.potential_modes_meV(pot, l)                             # V ⊗ 1 on both spins
        return terms, kinetic, rows, cols, h, v

    def _stack(self, fluxes: np.ndarray, energies: np.ndarray, l: np.ndarray, potential_meV,
               slice_flux, slice_perimeter) -> ChainStack:
        m, n = l.size, self.n_cells
        size = 2 * m
        terms, kinetic, rows, cols, h, v = self._stack_parts(fluxes, l, potential_meV, slice_flux, slice_perimeter)
        diag = (rows == cols).astype(float)
        # the plain chain of E P − H (P: 1/2 on a slice, 1/4 between slices, times the identity)
        onsite = (h[:, :-1] + h[:, 1:]) / 4                                           # (F, N + 1, nnz)
        coupling = kinetic[rows, cols] + h / 4                                        # (F, N + 2, nnz)
        n_e = energies.size
        e = np.tile(energies, fluxes.size)[:, None, None]
        onsite = np.repeat(onsite, n_e, axis=0) + e * diag / 2
        coupling = np.repeat(coupling, n_e, axis=0) - e * diag / 4
        if v is None:
            s_rows = s_cols = np.zeros(0, np.int64)
            s_on, s_co = np.zeros((n + 1, 0), complex), np.zeros((n + 2, 0), complex)
        else:
            s_rows, s_cols, a, b = _spin_diagonal_pattern(m)
            s_on = np.tile(((v[:-1] + v[1:]) / 4)[:, a, b], 2)
            s_co = np.tile((v / 4)[:, a, b], 2)
        leads = [_lead(t.lead_meV, kinetic, blocks=not self.has_surface_terms) for t in terms]
        plain = tuple(leads[k].at_energy(en) for k in range(fluxes.size) for en in energies)
        return ChainStack(size, np.tile(energies, fluxes.size), s_rows, s_cols, s_on, s_rows, s_cols, s_co,
                          rows, cols, onsite, rows, cols, coupling, plain, plain, degeneracy=1,
                          decoupled_channels=m)


def _spin_diagonal_pattern(m: int):
    """Rows and cols of V ⊗ 1_spin in the (mode, spin) order, and the mode indices (a, b) of each entry."""
    a, b = np.nonzero(np.ones((m, m), bool))
    return np.concatenate([2 * a, 2 * a + 1]), np.concatenate([2 * b, 2 * b + 1]), a, b


def _lead(lead_meV: np.ndarray, kinetic: np.ndarray, blocks: bool = True) -> Lead:
    """Energy-dependent lead of bond term h = ``lead_meV`` (cell (h/2, overlap 1/2), hopping kinetic + h/4);
    ``blocks``: the modes do not mix in the lead (one 2 × 2 block per mode), false with terms that vary around."""
    size = lead_meV.shape[0]
    basis = {"transverse_basis": np.eye(size), "block_size": 2} if blocks else {}
    return Lead(lead_meV / 2, kinetic + lead_meV / 4, **basis,
                onsite_overlap=np.eye(size) / 2, hopping_overlap=np.eye(size) / 4)


def cutoff_factor_for_window(mode_cutoff_factor: float, perimeter_nm: float, hbar_v_meV_nm: float,
                             built_for_meV: float, window_meV: float) -> float:
    """κ_q that gives a tube built for energies up to ``window_meV`` the mode set (and so the potential grid)
    of a tube built with ``mode_cutoff_factor`` for energies up to ``built_for_meV``.

    An Anderson width means a disorder strength only on a given grid; ensembles of one study at different
    energy windows keep it with this factor.
    """
    def k_wire(energy_meV: float) -> float:
        return max(abs(energy_meV) / hbar_v_meV_nm, 2 * math.pi / perimeter_nm)

    return mode_cutoff_factor * k_wire(built_for_meV) / k_wire(window_meV)


def _kinetic(size: int, hbar_v_over_a: float) -> np.ndarray:
    """H_{j, j+1} of −iħv σ_x ∂_x by the symmetric difference: −i (ħv/2a) σ_x on every mode."""
    sigma_x = np.array([[0, 1], [1, 0]])
    return np.kron(np.eye(size // 2), -0.5j * hbar_v_over_a * sigma_x)
