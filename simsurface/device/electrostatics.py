"""Gate electrostatics of a wire's cross-section: gate voltages → Fermi energy and potential around the contour.

Geometry (cross-section in the (y, z) plane, wire axis x): a back-gate plane at z = −t_b under a dielectric of
thickness t_b and relative permittivity ε_b; the wire lies on the dielectric (its lowest point at z = 0), filled
with its own permittivity ε_w; above the dielectric either the ambient (ε = 1) or, with a top gate, a top
dielectric ε_t up to a top-gate plane t_t above the wire's top. The surface state is a sheet of charge on the
contour at ``depth_nm`` below the wire's surface (`simsurface.geometry.CrossSection`).

Method (named, as every report says it): a finite-difference (box-integration) Poisson solve of the 2D
cross-section with scipy.sparse (`simsurface.device.poisson_grid`), reduced to the contour: one sparse LU
factorization gives the contour's response matrix G (potential at contour point i per charge at j) and its bare
response to each gate; the surface charge then follows self-consistently from a Thomas–Fermi (local) density of
the two-dimensional surface gas (`simsurface.device.surface_charge`), solved by Newton iteration:

    φ_i = V_b g_i + V_t h_i + Σ_j G_ij q_j,   q_j = −Δs [n(E_F0 + eφ_j) − n(E_F0)],

φ the electrostatic potential on the contour (V), E_F0 the Fermi energy at zero gate voltages (the work-function
difference and trapped charge are absorbed into it; at zero gate voltage the surface is neutral and φ = 0), Δs
the arc length of a contour point. The wire's electrochemical potential is held at 0 V by its contacts. The
quantum capacitance e²ν of the surface gas is thereby in series with the geometric one, and the charge is free to
redistribute around the circumference: the side facing a gate takes more of it.

Output in the representation agreed with the models (/work/coord notes of this round, docs/plan.md): the
potential energy of an electron U(s) = −eφ(s) − ⟨−eφ⟩ in meV, zero mean over the contour, at s = j·P/M from the
bottom point (nearest the back gate) towards +y, and the Fermi energy E_F = E_F0 + e⟨φ⟩ (meV), the contour
average of the local Fermi energy E_F − U(s).

Checks (tests/device/test_electrostatics.py): the classical (metallic) limit against the image-charge
capacitance of a cylinder over a ground plane, C/L = 2πε/arccosh(1 + d/R) with d the gap between the plane and
the cylinder's surface; an independent boundary-integral solution of the same Thomas–Fermi problem (analytic
Green's function with an image line charge, scipy); the planar stack against the spectral Green's function of a
grounded dielectric slab (scipy.integrate.quad); a dielectric cylinder in a uniform field; geometric and quantum
capacitance in series.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
import xarray as xr
from scipy import constants as _c

from ..errors import InputError
from ..geometry import CrossSection
from .poisson_grid import E_OVER_EPS0_V_NM, Grid2D, bilinear_weights, cell_permittivity, graded_axis_nm, laplacian
from .surface_charge import SurfaceGas

__all__ = ["GateStack", "GateResponse", "CrossSectionElectrostatics", "contour_points_nm",
           "capacitance_F_per_m", "gate_sweep", "METHOD"]

METHOD = ("finite-difference (box-integration) Poisson solve of the 2D cross-section (scipy.sparse LU), "
          "Thomas-Fermi surface charge of the 2D surface gas on the surface-state contour, Newton iteration")

#: Charge per length: elementary charges per nm → C/m.
_E_PER_NM_TO_C_PER_M = _c.e * 1e9
_MEV_PER_V = 1000.0


@dataclass(frozen=True)
class GateStack:
    """Gates and dielectrics around the wire (relative permittivities are dimensionless).

    Attributes
    ----------
    back_dielectric_thickness_nm : float
        Distance from the back-gate plane to the surface the wire lies on (> 0).
    back_dielectric_permittivity : float
        ε_r of the back-gate dielectric (SiO2 ≈ 3.9).
    wire_permittivity : float
        ε_r of the wire's interior (the crystal's static permittivity; large for Bi2Se3-family crystals).
    top_dielectric_thickness_nm : float or None
        Gap between the wire's top and a top-gate plane; None: no top gate (ambient above).
    top_dielectric_permittivity : float
        ε_r of the region between the substrate and the top gate around the wire (with a top gate).
    ambient_permittivity : float
        ε_r above the substrate without a top gate (vacuum 1).
    """

    back_dielectric_thickness_nm: float
    back_dielectric_permittivity: float
    wire_permittivity: float
    top_dielectric_thickness_nm: float | None = None
    top_dielectric_permittivity: float = 1.0
    ambient_permittivity: float = 1.0

    def __post_init__(self) -> None:
        if not self.back_dielectric_thickness_nm > 0:
            raise InputError("back_dielectric_thickness_nm: must be > 0 nm")
        if self.top_dielectric_thickness_nm is not None and not self.top_dielectric_thickness_nm > 0:
            raise InputError("top_dielectric_thickness_nm: must be > 0 nm (or omitted: no top gate)")
        for name in ("back_dielectric_permittivity", "wire_permittivity", "top_dielectric_permittivity",
                     "ambient_permittivity"):
            if not getattr(self, name) >= 1.0:
                raise InputError(f"{name}: a relative permittivity must be >= 1")

    @property
    def has_top_gate(self) -> bool:
        return self.top_dielectric_thickness_nm is not None


@dataclass(frozen=True)
class GateResponse:
    """The surface at one pair of gate voltages.

    Attributes
    ----------
    back_gate_V, top_gate_V : float
    fermi_energy_meV : float
        Contour average of the local Fermi energy (from the local Dirac point / band bottom).
    arc_length_nm : numpy.ndarray
        s_j = j·P/M, shape (M,), from the bottom point towards +y.
    potential_meV : numpy.ndarray
        U(s_j), potential energy of an electron, zero mean, shape (M,); add to the Hamiltonian.
    local_fermi_energy_meV : numpy.ndarray
        E_F − U(s_j), shape (M,).
    density_per_nm2 : numpy.ndarray
        Sheet density at s_j (electrons positive), shape (M,).
    induced_charge_e_per_nm : float
        Charge added by the gates per unit wire length, in elementary charges per nm (negative for electrons).
    iterations : int
        Newton iterations used.
    """

    back_gate_V: float
    top_gate_V: float
    fermi_energy_meV: float
    arc_length_nm: np.ndarray
    potential_meV: np.ndarray
    local_fermi_energy_meV: np.ndarray
    density_per_nm2: np.ndarray
    induced_charge_e_per_nm: float
    iterations: int


def contour_points_nm(section: CrossSection, n_points: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Points s_j = j·P/n on the surface-state contour, from its bottom point towards +y.

    The wire's physical cross-section touches z = 0 from above and is centred on y = 0.

    Returns
    -------
    (s_nm, y_nm, z_nm) : tuple of numpy.ndarray, each shape (n_points,)
    """
    perimeter = section.perimeter_nm
    s = np.arange(n_points) * perimeter / n_points
    d = section.depth_nm
    if section.shape == "circle":
        radius = section.width_nm / 2
        theta = 2 * np.pi * s / perimeter
        rc = radius - d
        return s, rc * np.sin(theta), radius - rc * np.cos(theta)
    half_w = section.width_nm / 2 - d
    height = section.thickness_nm - 2 * d
    # corners along the path: bottom centre → bottom right → top right → top left → bottom left → bottom centre
    corners_s = np.cumsum([0.0, half_w, height, 2 * half_w, height, half_w])
    corners_y = np.array([0.0, half_w, half_w, -half_w, -half_w, 0.0])
    corners_z = np.array([0.0, 0.0, height, height, 0.0, 0.0]) + d
    return s, np.interp(s, corners_s, corners_y), np.interp(s, corners_s, corners_z)


def _inside_wire(section: CrossSection, y: np.ndarray, z: np.ndarray) -> np.ndarray:
    if section.shape == "circle":
        radius = section.width_nm / 2
        return y**2 + (z - radius) ** 2 < radius**2
    return (np.abs(y) < section.width_nm / 2) & (z > 0) & (z < section.thickness_nm)


class CrossSectionElectrostatics:
    """The cross-section's Poisson problem reduced to the surface-state contour (one factorization, then cheap).

    Parameters
    ----------
    section : CrossSection
        Wire cross-section and surface-state depth.
    stack : GateStack
        Gates and dielectrics.
    grid_spacing_nm : float, optional
        Finest grid spacing (around the wire); default min(smallest side/40, dielectric thicknesses/4).
    output_points : int
        M, points of the returned profiles (≥ 8).
    far_field_factor : float
        Distance of the outer boundaries in units of (wire height + back dielectric): sides insulating, top at the
        back-gate potential (the potential far above a plane with a neutral-on-average dipole) unless a top gate
        closes the box.
    """

    def __init__(self, section: CrossSection, stack: GateStack, grid_spacing_nm: float | None = None,
                 output_points: int = 64, far_field_factor: float = 40.0) -> None:
        if output_points < 8:
            raise InputError("output_points: at least 8 points around the contour")
        self.section, self.stack = section, stack
        w, t, tb = section.width_nm, section.thickness_nm, stack.back_dielectric_thickness_nm
        limits = [min(w, t) / 40, tb / 4]
        if stack.has_top_gate:
            limits.append(stack.top_dielectric_thickness_nm / 4)
        h = float(grid_spacing_nm) if grid_spacing_nm is not None else min(limits)
        if not h > 0:
            raise InputError("grid_spacing_nm: must be > 0 nm")
        self.grid_spacing_nm = h
        # where the wire meets the substrate the field bunches on the scale of the surface-state depth
        self.contact_spacing_nm = min(h, max(section.depth_nm / 2, h / 3))
        self.grid = self._grid(h, far_field_factor)
        self.eps_cells = cell_permittivity(self.grid, self._permittivity)
        # charge samples along the contour no farther apart than the finest grid cells they touch
        sample_nm = min(h / 2, self.contact_spacing_nm)
        subdivision = max(1, math.ceil(section.perimeter_nm / sample_nm / output_points))
        self._stride = subdivision
        self.s_nm, y, z = contour_points_nm(section, output_points * subdivision)
        self.segment_nm = section.perimeter_nm / self.s_nm.size
        self._solve_reduced(y, z)

    # -- geometry ---------------------------------------------------------------------------------------------
    def _grid(self, h: float, far: float) -> Grid2D:
        """Graded tensor grid: spacing h over the wire, finer (contact_spacing) where the wire meets the substrate
        (the wedge beside a circle's contact line, a rectangle's lower corners), growing to the far boundaries."""
        sec, st = self.section, self.stack
        w, t, tb = sec.width_nm, sec.thickness_nm, st.back_dielectric_thickness_nm
        reach = far * (t + tb)
        margin = 4 * h
        fine = self.contact_spacing_nm
        band = 4 * h
        y_breaks = [-w / 2 - reach, w / 2 + reach, 0.0]
        y_zones = [(-w / 2 - margin, w / 2 + margin, h)]
        if sec.shape == "rectangle":
            y_breaks += [-w / 2, w / 2]
            y_zones += [(-w / 2 - band, -w / 2 + band, fine), (w / 2 - band, w / 2 + band, fine)]
        else:
            y_zones.append((-math.sqrt(2 * (w / 2) * band), math.sqrt(2 * (w / 2) * band), fine))
        y = graded_axis_nm(y_breaks, y_zones)
        z_top = t + st.top_dielectric_thickness_nm if st.has_top_gate else t + reach
        z_breaks = [-tb, 0.0, z_top] + ([t] if sec.shape == "rectangle" or st.has_top_gate else [])
        z_zones = [(-min(tb, max(w, t)), t + margin, h), (-min(band, tb / 2), band, fine)]
        return Grid2D(y, graded_axis_nm(z_breaks, z_zones))

    def _permittivity(self, y: np.ndarray, z: np.ndarray) -> np.ndarray:
        st = self.stack
        above = st.top_dielectric_permittivity if st.has_top_gate else st.ambient_permittivity
        eps = np.where(z < 0, st.back_dielectric_permittivity, above)
        return np.where(_inside_wire(self.section, y, z), st.wire_permittivity, eps)

    # -- the reduced (contour) problem ------------------------------------------------------------------------
    def _solve_reduced(self, y: np.ndarray, z: np.ndarray) -> None:
        grid = self.grid
        ny, nz = grid.shape
        lap = laplacian(grid, self.eps_cells).tocsr()
        k_index = np.tile(np.arange(nz), ny)
        back = k_index == 0
        top = k_index == nz - 1
        fixed = back | top
        free = ~fixed
        self.grid_nodes = int(free.sum())
        l_ff = lap[free][:, free].tocsc()
        l_fd = lap[free][:, fixed]
        weights = bilinear_weights(grid, y, z).tocsr()
        b_f, b_d = weights[free], weights[fixed]
        lu = spla.splu(l_ff, permc_spec="MMD_AT_PLUS_A")  # symmetric ordering: half the fill of COLAMD
        # bare responses: φ_D = 1 on the back gate (and on the far top without a top gate), or 1 on the top gate
        phi_back = np.where(back[fixed] | (top[fixed] & (not self.stack.has_top_gate)), 1.0, 0.0)
        phi_top = np.where(top[fixed] & self.stack.has_top_gate, 1.0, 0.0)
        self.bare_back = self._bare(lu, l_fd, b_f, b_d, phi_back)
        self.bare_top = self._bare(lu, l_fd, b_f, b_d, phi_top)
        m = y.size
        green = np.empty((m, m))
        dense_b = b_f.toarray()
        for start in range(0, m, 64):
            cols = slice(start, min(m, start + 64))
            green[:, cols] = b_f.T @ lu.solve(dense_b[:, cols])
        self.green_V_nm_per_e = E_OVER_EPS0_V_NM * 0.5 * (green + green.T) + np.diag(self._kink_correction(y, z))

    def _kink_correction(self, y: np.ndarray, z: np.ndarray) -> np.ndarray:
        """Self-potential lost by interpolating across the charged sheet (V nm/e per point), removed from G.

        Near a sheet of density σ the potential has a kink, φ ≈ φ_s − e σ |ξ|/(ε0(ε1 + ε2)) with ξ the distance
        from the sheet; bilinear interpolation reproduces the smooth part exactly but replaces the kink by the
        weighted chord, Σ_c w_c |n·(r_c − r)| below φ_s. Adding that back to the diagonal of G removes the
        first-order error in the grid spacing (measured: the metallic-cylinder capacitance error falls from
        first to second order).
        """
        grid = self.grid
        tangent = np.stack([np.gradient(y), np.gradient(z)])
        tangent /= np.linalg.norm(tangent, axis=0)
        normal = np.stack([-tangent[1], tangent[0]])
        i = np.clip(np.searchsorted(grid.y_nm, y, side="right") - 1, 0, grid.y_nm.size - 2)
        k = np.clip(np.searchsorted(grid.z_nm, z, side="right") - 1, 0, grid.z_nm.size - 2)
        y0, y1, z0, z1 = grid.y_nm[i], grid.y_nm[i + 1], grid.z_nm[k], grid.z_nm[k + 1]
        u, v = (y - y0) / (y1 - y0), (z - z0) / (z1 - z0)
        chord = np.zeros_like(y)
        for cy, cz, w in ((y0, z0, (1 - u) * (1 - v)), (y1, z0, u * (1 - v)), (y0, z1, (1 - u) * v), (y1, z1, u * v)):
            chord += w * np.abs(normal[0] * (cy - y) + normal[1] * (cz - z))
        eps = self.eps_cells[i, k]
        return E_OVER_EPS0_V_NM * chord / (2 * eps * self.segment_nm)

    @staticmethod
    def _bare(lu, l_fd, b_f, b_d, phi_d: np.ndarray) -> np.ndarray:
        phi_f = lu.solve(-(l_fd @ phi_d))
        return b_f.T @ phi_f + b_d.T @ phi_d

    # -- public -----------------------------------------------------------------------------------------------
    @property
    def arc_length_nm(self) -> np.ndarray:
        """Output positions s_j = j·P/M (shape (M,))."""
        return self.s_nm[:: self._stride]

    def bare_potential_V(self, back_gate_V: float, top_gate_V: float = 0.0) -> np.ndarray:
        """Potential on the contour points with no surface charge (shape (M·subdivision,))."""
        if top_gate_V != 0 and not self.stack.has_top_gate:
            raise InputError("top_gate_V: the gate stack has no top gate (give top_dielectric_thickness_nm)")
        return back_gate_V * self.bare_back + top_gate_V * self.bare_top

    def classical_charge_e_per_nm(self, back_gate_V: float, top_gate_V: float = 0.0) -> tuple[float, np.ndarray]:
        """Metallic limit: the contour held at 0 V; total charge per length (e/nm) and its distribution q_j."""
        q = np.linalg.solve(self.green_V_nm_per_e, -self.bare_potential_V(back_gate_V, top_gate_V))
        return float(q.sum()), q

    def solve(self, gas: SurfaceGas, fermi_energy_zero_gate_meV: float, back_gate_V: float,
              top_gate_V: float = 0.0, initial_potential_V: np.ndarray | None = None) -> GateResponse:
        """Self-consistent Thomas–Fermi surface charge at the given gate voltages (see :meth:`contour_potential_V`)."""
        phi, iterations = self.contour_potential_V(gas, fermi_energy_zero_gate_meV, back_gate_V, top_gate_V,
                                                   initial_potential_V)
        return self.response(gas, fermi_energy_zero_gate_meV, back_gate_V, top_gate_V, phi, iterations)

    def contour_potential_V(self, gas: SurfaceGas, fermi_energy_zero_gate_meV: float, back_gate_V: float,
                            top_gate_V: float = 0.0, initial_potential_V: np.ndarray | None = None,
                            tolerance_V: float = 1e-9, max_iterations: int = 100) -> tuple[np.ndarray, int]:
        """φ on every contour point (V, shape (M·subdivision,)) and the Newton steps used (with backtracking).

        Raises
        ------
        RuntimeError
            "not converged" when Newton does not reach ``tolerance_V`` in ``max_iterations`` steps.
        """
        phi0 = self.bare_potential_V(back_gate_V, top_gate_V)
        green, ds, e0 = self.green_V_nm_per_e, self.segment_nm, fermi_energy_zero_gate_meV
        n0 = gas.density_per_nm2(e0)

        def residual(phi: np.ndarray) -> np.ndarray:
            q = -ds * (gas.density_per_nm2(e0 + _MEV_PER_V * phi) - n0)
            return phi - phi0 - green @ q

        phi = np.zeros_like(phi0) if initial_potential_V is None else np.array(initial_potential_V, float)
        res = residual(phi)
        for iteration in range(1, max_iterations + 1):
            dq = ds * _MEV_PER_V * gas.density_of_states_per_meV_nm2(e0 + _MEV_PER_V * phi)
            step = np.linalg.solve(np.eye(phi.size) + green * dq[None, :], -res)
            norm0, lam = np.linalg.norm(res), 1.0
            while True:
                trial = phi + lam * step
                res_trial = residual(trial)
                if np.linalg.norm(res_trial) <= (1 - 1e-4 * lam) * norm0 or lam < 1e-6:
                    break
                lam *= 0.5
            phi, res = trial, res_trial
            if np.max(np.abs(lam * step)) < tolerance_V and np.max(np.abs(res)) < 10 * tolerance_V:
                return phi, iteration
        raise RuntimeError(f"gate electrostatics not converged after {max_iterations} Newton steps "
                           f"(back gate {back_gate_V:g} V, top gate {top_gate_V:g} V)")

    def response(self, gas: SurfaceGas, fermi_energy_zero_gate_meV: float, back_gate_V: float,
                 top_gate_V: float, contour_potential_V: np.ndarray, iterations: int = 0) -> GateResponse:
        """The :class:`GateResponse` of a contour potential φ (V, every contour point)."""
        e0, phi = fermi_energy_zero_gate_meV, contour_potential_V
        local = e0 + _MEV_PER_V * phi
        density = gas.density_per_nm2(local)
        induced = float(-self.segment_nm * np.sum(density - gas.density_per_nm2(e0)))
        mean_local = float(np.mean(local))
        local_out = self._to_output(local)
        return GateResponse(back_gate_V=float(back_gate_V), top_gate_V=float(top_gate_V),
                            fermi_energy_meV=mean_local, arc_length_nm=self.arc_length_nm.copy(),
                            potential_meV=mean_local - local_out, local_fermi_energy_meV=local_out,
                            density_per_nm2=self._to_output(density), induced_charge_e_per_nm=induced,
                            iterations=iterations)

    def _to_output(self, values: np.ndarray) -> np.ndarray:
        """Contour-point values averaged over one grid spacing around each output point (periodic).

        Point-to-point scatter of the grid coupling (the points sit at different places in their cells) is below
        the grid's resolution; the average keeps the profile's mean exactly.
        """
        width, half = self._stride, self._stride // 2
        offsets = np.arange(-half, half + 1)
        weights = np.ones(offsets.size)
        if width % 2 == 0:
            weights[[0, -1]] = 0.5  # trapezoid: every contour point carries total weight one
        idx = (np.arange(0, values.size, width)[:, None] + offsets[None, :]) % values.size
        return values[idx] @ (weights / width)


def capacitance_F_per_m(charge_e_per_nm: float, voltage_V: float) -> float:
    """|Q/V| per unit length in F/m for a charge in e/nm induced by a voltage."""
    return abs(charge_e_per_nm * _E_PER_NM_TO_C_PER_M / voltage_V)


def gate_sweep(solver: CrossSectionElectrostatics, gas: SurfaceGas, fermi_energy_zero_gate_meV: float,
               back_gate_V: np.ndarray, top_gate_V: float = 0.0) -> xr.Dataset:
    """E_F and U(s) over a back-gate sweep (continuation from the voltage nearest zero outwards).

    Returns
    -------
    xarray.Dataset
        ``fermi_energy_meV`` (gate_voltage_V), ``potential_meV`` and ``density_per_nm2``
        (gate_voltage_V, arc_length_nm), ``induced_charge_e_per_nm`` (gate_voltage_V); units in attributes.
    """
    volts = np.asarray(back_gate_V, dtype=float)
    results: dict[int, GateResponse] = {}
    previous: dict[bool, np.ndarray] = {}
    for idx in np.argsort(np.abs(volts), kind="stable"):
        side = bool(volts[idx] >= 0)
        phi, steps = solver.contour_potential_V(gas, fermi_energy_zero_gate_meV, volts[idx], top_gate_V,
                                                initial_potential_V=previous.get(side))
        previous[side] = phi
        results[int(idx)] = solver.response(gas, fermi_energy_zero_gate_meV, volts[idx], top_gate_V, phi, steps)
    rs = [results[i] for i in range(volts.size)]
    s = rs[0].arc_length_nm
    return xr.Dataset(
        {"fermi_energy_meV": ("gate_voltage_V", [r.fermi_energy_meV for r in rs], {"units": "meV"}),
         "potential_meV": (("gate_voltage_V", "arc_length_nm"), np.array([r.potential_meV for r in rs]),
                           {"units": "meV", "meaning": "potential energy of an electron, zero mean"}),
         "density_per_nm2": (("gate_voltage_V", "arc_length_nm"), np.array([r.density_per_nm2 for r in rs]),
                             {"units": "nm^-2"}),
         "induced_charge_e_per_nm": ("gate_voltage_V", [r.induced_charge_e_per_nm for r in rs], {"units": "e/nm"})},
        coords={"gate_voltage_V": ("gate_voltage_V", volts, {"units": "V"}),
                "arc_length_nm": ("arc_length_nm", s, {"units": "nm"})},
        attrs={"method": METHOD, "top_gate_V": float(top_gate_V),
               "fermi_energy_zero_gate_meV": float(fermi_energy_zero_gate_meV)})
