"""Write a device plan: plan.json, plan.md, plan.html, figures, theory curves (CSV) and plan.nc.

Every file is written to a temporary name in the output folder and moved into place, so an interrupted run
never leaves a truncated file; plan.json is written last, so its presence means the plan is complete.
"""

from __future__ import annotations

import json
from pathlib import Path

import matplotlib.pyplot as plt
import numpy as np

from ..analysis.plan import PlanResult, field_curve
from ..io import save_figure_atomic, write_json_atomic, write_netcdf_atomic, write_text_atomic
from ..units import flux_quanta
from . import plan_figures
from .curves import write_theory_csv
from .document import Document

CURVE_ENSEMBLE = "theory_curve.csv"
CURVE_TYPICAL = "theory_typical_device.csv"


def _fmt(x: float | None, digits: int = 3) -> str:
    if x is None:
        return "—"
    if x == 0 or not np.isfinite(x):
        return f"{x:g}"
    return f"{x:.{digits}g}"


def _interval(block: dict, key: str) -> str:
    lo_hi = block.get(f"{key}_interval")
    return f"{_fmt(block[key])} [{_fmt(lo_hi[0])}, {_fmt(lo_hi[1])}]" if lo_hi else _fmt(block[key])


def field_grid_T(result: PlanResult) -> np.ndarray:
    """Field values for the curves: the magnet range with at least 40 points per h/2e period."""
    lo, hi = result.setup.plan.field_range_T
    n = int(max(401, 40 * result.setup.periods(2) + 1))
    return np.linspace(lo, hi, n)


def typical_device(result: PlanResult) -> int:
    """Index of the device whose h/e amplitude is the median one."""
    from ..analysis.harmonics import harmonics_of

    amp = harmonics_of(result.devices["conductance"], (1, 2), dim="flux")["amplitude"].sel(harmonic=1).values
    return int(np.argsort(amp)[len(amp) // 2])


def write_plan(result: PlanResult, gate_maps: list | None, out_dir: str | Path) -> list[Path]:
    """Write all plan outputs into ``out_dir``; returns the written paths (plan.json last)."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    setup, summary = result.setup, result.summary
    written: list[Path] = []

    # theory curves over the magnet's range
    fields = field_grid_T(result)
    flux = flux_quanta(fields, setup.area_nm2)
    g_dev = result.devices["conductance"].values
    mean_g, mean_ratio = field_curve(setup, g_dev.mean(axis=0), fields)
    per_dev = np.array([field_curve(setup, row, fields)[0] for row in g_dev])
    typ = typical_device(result)
    typ_g, typ_ratio = field_curve(setup, g_dev[typ], fields)
    base = [f"simsurface {summary['simsurface_version']} device plan: {summary['title']}",
            f"enclosed_area_nm2 = {setup.area_nm2:.8g}",
            f"energy_meV = {setup.fermi_energy_meV:.8g}",
            f"temperature_K = {setup.temperature_K:g}",
            f"period_he_T = {setup.period_he_T:.8g}",
            f"coherence_length_nm = {setup.coherence_length_nm:.6g}",
            f"resistance_ratio = R(B)/R(0) with R = h/(e^2 G) + series resistance "
            f"{summary['measurement']['series_resistance_ohm']:g} ohm ({setup.plan.terminals}-terminal)"]
    write_theory_csv(out / CURVE_ENSEMBLE, fields, flux, mean_g, mean_ratio,
                     base + [f"conductance_e2h: ensemble mean <G> over {g_dev.shape[0]} simulated devices; "
                             "sample-specific h/e oscillations average out of it"])
    write_theory_csv(out / CURVE_TYPICAL, fields, flux, typ_g, typ_ratio,
                     base + [f"conductance_e2h: one simulated device (index {typ}, median h/e amplitude); "
                             "the phase of its sample-specific oscillations is random"])
    written += [out / CURVE_ENSEMBLE, out / CURVE_TYPICAL]

    # figures
    noise = summary["measurement"]["noise_floor"]
    figures = {
        "field_dependence.png": plan_figures.field_dependence_figure(
            fields, mean_g, per_dev.std(axis=0), typ_g, mean_ratio, typ_ratio, setup.period_he_T, summary["title"]),
        "harmonics.png": plan_figures.harmonics_figure(summary["harmonics"], noise["value"], noise["unit"]),
    }
    if gate_maps:
        figures["gate_map.png"] = plan_figures.gate_map_figure([g[1] for g in gate_maps], [g[0] for g in gate_maps],
                                                               [g[2] for g in gate_maps])
    for name, fig in figures.items():
        save_figure_atomic(fig, out / name)
        plt.close(fig)
        written.append(out / name)

    # data
    ds = result.devices.copy()
    ds.attrs = {"title": summary["title"], "simsurface_kind": "device plan", "summary_json": json.dumps(summary)}
    write_netcdf_atomic(ds, out / "plan.nc")
    written.append(out / "plan.nc")

    doc = plan_document(result, gate_maps is not None and len(gate_maps) > 0)
    write_text_atomic(out / "plan.md", doc.markdown())
    write_text_atomic(out / "plan.html", doc.html(out))
    write_json_atomic(out / "plan.json", summary)
    written += [out / "plan.md", out / "plan.html", out / "plan.json"]
    return written


def _lattice_size(lattice: dict) -> str:
    if "n_around" in lattice:
        return f"{lattice['n_around']} sites around"
    if lattice.get("model") == "surface_modes":
        return f"{lattice['n_modes']} modes around, surface_modes"
    return f"3D, {lattice['sites_per_slice']} sites per slice, {lattice['slices']} slices"


def plan_document(result: PlanResult, with_gate_map: bool) -> Document:
    """The plan report as a :class:`Document`."""
    s, setup = result.summary, result.setup
    h = s["harmonics"]
    meas, dev, dis, coh = s["measurement"], s["device"], s["disorder"], s["coherence"]
    noise = meas["noise_floor"]
    doc = Document(f"Device plan: {s['title']}")
    dom = s["dominance"]
    if dom["ratio_he_over_h2e"] is None:  # say why instead of printing inf or nan
        ratio = f"rms amplitude ratio h/e : h/2e {dom['ratio_note']}"
    else:
        ratio = (f"rms amplitude ratio h/e : h/2e = {_fmt(dom['ratio_he_over_h2e'])}, 68 % interval "
                 f"[{_fmt(dom['ratio_interval'][0])}, "
                 f"{_fmt(dom['ratio_interval'][1]) if dom['ratio_interval'][1] is not None else 'not bounded'}]")
    doc.paragraph(f"**Verdict: {s['verdict'].upper()}.** Dominant harmonic: **{s['dominant_harmonic']}** "
                  f"({ratio}; the same harmonic wins in "
                  f"{100 * dom['confidence']:.0f} % of bootstrap resamples and is larger in "
                  f"{100 * dom['fraction_of_devices']:.0f} % of the simulated devices).")
    doc.heading("Predictions")
    rows = [["h/e period", f"{_fmt(s['period_he_T'], 4)} T"], ["h/2e period", f"{_fmt(s['period_h2e_T'], 4)} T"]]
    for name in ("h/e", "h/2e"):
        b = h[name]
        rows += [
            [f"{name} periods in {meas['field_range_T'][0]:g} … {meas['field_range_T'][1]:g} T",
             _fmt(b["periods_in_field_range"])],
            [f"{name} ΔG, one device (rms) [68 %]", _interval(b["delta_G_e2h"], "sample_rms") + " e²/h"],
            [f"{name} cosine a_{1 if name == 'h/e' else 2} of ⟨G⟩ (component of the ensemble) [68 %]",
             _interval(b["delta_G_e2h"], "ensemble_cosine") + " e²/h"],
            [f"{name} ΔR/R, one device (rms) [68 %]", _interval(b["delta_R_over_R"], "sample_rms")],
            [f"{name} amplitude / noise floor", f"{_fmt(b['measured_amplitude']['value'])} "
                                                f"{b['measured_amplitude']['unit']} / {_fmt(noise['value'])} "
                                                f"{noise['unit']} = {_fmt(b['signal_to_noise'])}"],
            [f"{name} verdict", b["verdict"]],
        ]
    ph = s["phase"]
    rows += [["h/e maxima of ⟨G⟩ at flux", ph["he_ensemble_maxima"]],
             ["h/2e maxima of ⟨G⟩ at flux", ph["h2e_ensemble_maxima"]],
             ["devices with h/e maxima at half-integer flux",
              f"{100 * ph['fraction_of_devices_with_he_maxima_at_half_integer_flux']:.0f} %"],
             ["mean G / mean R", f"{_fmt(meas['mean_conductance_e2h'])} e²/h / {_fmt(meas['mean_resistance_ohm'], 4)} Ω"]]
    doc.table(["quantity", "value"], rows)
    doc.heading("How to read the verdict")
    doc.paragraph(s["verdict_rule"])
    doc.paragraph("ΔG is the Fourier amplitude of G(Φ) at 1 (h/e) or 2 (h/2e) cycles per flux quantum, in e²/h; "
                  "ΔR/R the same for R(Φ)/mean R of the measured configuration. \"One device\" is the rms over the "
                  "simulated devices — what a single wire typically shows. The cosine a_k of ⟨G⟩ is the "
                  "coefficient of a_k cos(2πkΦ) in the device-averaged curve — what survives averaging over many wires, "
                  "gate voltages or thermal cycles; its sign is the phase (a_1 > 0: h/e maxima at integer flux "
                  "quanta, a_1 < 0: at half-integer ones; a_2 > 0: h/2e maxima at Φ = n/2, a_2 < 0: at "
                  "Φ = n/2 + 1/4), and an interval that includes zero means the ensemble shows no such component. "
                  "In a two-terminal measurement every single device has its maxima at integer or half-integer "
                  "flux quanta (phase rigidity); which one varies from device to device unless the component of "
                  "⟨G⟩ is resolved.")
    doc.heading("Device and measurement")
    doc.table(["input / derived", "value"], [
        ["surface, material", f"{dev['surface']}, {dev['material']}"],
        ["cross-section", dev["cross_section"]],
        ["enclosed area A_eff, perimeter", f"{_fmt(dev['enclosed_area_nm2'], 5)} nm², {_fmt(dev['perimeter_nm'], 4)} nm"],
        ["length", f"{_fmt(dev['length_nm'], 4)} nm"],
        ["Fermi energy, density, k_F", f"{_fmt(dev['fermi_energy_meV'])} meV, {_fmt(dev['carrier_density_per_cm2'])} cm⁻², "
                                       f"{_fmt(dev['fermi_wavevector_per_nm'])} nm⁻¹"],
        ["clean channels at E_F", _fmt(dev["clean_channels_at_fermi_energy"])],
        ["temperature, k_BT", f"{meas['temperature_K']:g} K, {_fmt(meas['thermal_energy_meV'])} meV"],
        ["L_phi at T, sections", f"{_fmt(coh['coherence_length_nm'], 4)} nm, {coh['sections']} × "
                                 f"{_fmt(coh['section_length_nm'], 4)} nm"],
        ["terminals, series resistance", f"{meas['terminals']}, {meas['series_resistance_ohm']:g} Ω"],
        ["noise floor", f"{noise['value']:g} {noise['unit']}"],
    ])
    doc.heading("Figures")
    doc.figure("field_dependence.png", "G(B) and R(B)/R(0) over the magnet's range: ensemble mean with the "
                                       "device-to-device spread and one typical device; dotted lines mark "
                                       "integer flux quanta.")
    doc.figure("harmonics.png", "Fourier amplitude per harmonic of the measured quantity for one device, "
                                "against the noise floor.")
    if with_gate_map:
        doc.figure("gate_map.png", "Gate map of clean tubes with the same contour: G(E_F, Φ) and the h/e cosine "
                                   "coefficient (blue: maxima at integer flux, red: at half-integer flux); the "
                                   "dashed line marks the planned Fermi energy.")
    doc.heading("Disorder and coherence")
    cal = "; ".join(f"W = {_fmt(c['anderson_width_meV'], 4)} meV → ℓ_tr = {_fmt(c['simulated_transport_mfp_nm'], 3)} nm"
                    for c in dis["calibration_steps"]) or "none (disorder width given)"
    doc.table(["quantity", "value"], [
        ["disorder", f"{dis['kind']}, W = {_fmt(dis['anderson_width_meV'], 4)} meV"],
        ["requested transport mean free path", f"{_fmt(dis['requested_transport_mfp_nm'])} nm"],
        ["Born estimate of ℓ_tr at this W", f"{_fmt(dis['born_transport_mfp_nm'])} nm"],
        ["ℓ_tr seen by the simulation (ℓ = (π/2)ℓ_tr from ⟨G⟩ = N/(1 + L/ℓ))",
         f"{_fmt(dis['simulated_transport_mfp_nm'])} nm"],
        ["calibration steps", cal],
        ["composition of sections", coh["composition_rule"]],
    ])
    doc.heading("Validity")
    notes = s["validity"]["notes"] or ["no warnings: Fermi window inside the lattice validity window and the "
                                       "surface-only energy range"]
    doc.bullets(notes)
    doc.heading("Assumptions")
    doc.bullets(s["assumptions"])
    c = s["compute"]
    doc.heading("Computation")
    doc.paragraph(f"{c['devices']} devices × {s['coherence']['sections']} sections = {c['section_realizations']} "
                  f"disorder realizations, {c['flux_points_simulated']} flux points ({c['flux_symmetry']}), "
                  f"{len(c['energies_meV'])} energies ({_fmt(c['energies_meV'][0], 5)} … "
                  f"{_fmt(c['energies_meV'][-1], 5)} meV; correlation energy {_fmt(c['correlation_energy_meV'])} meV), "
                  f"lattice spacing {_fmt(c['lattice']['spacing_nm'])} nm ({_lattice_size(c['lattice'])}), "
                  f"engine '{c['engine']}', seed {c['seed']}; wall time {c.get('wall_time_s', float('nan')):.1f} s.")
    return doc
