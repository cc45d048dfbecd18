"""Material presets and the bulk-gap check (simsurface.materials).

The gap check is logic, not physics: a Fermi energy is inside the bulk gap when it lies between the band edges
measured from the Dirac point (common practice, no source); without the edges only |E_F| ≥ gap is certain.
"""

import pytest

from simsurface.materials import PRESETS, bulk_window_note, material_from_preset


def test_presets_carry_no_invented_g_factor_and_say_so():
    for material in PRESETS.values():
        assert material.surface_g_factor is None
        assert "none known" in material.sources["surface_g_factor"]


def test_gap_check_does_not_assume_a_mid_gap_dirac_point():
    bi2se3 = PRESETS["Bi2Se3"]                             # 300 meV gap, Dirac point's place not fixed
    note = bulk_window_note(bi2se3, 120.0)
    assert "only if the conduction band edge lies more than 120 meV" in note and "Liu 2010" in note
    assert "wherever the Dirac point sits" in bulk_window_note(bi2se3, -310.0)
    placed = material_from_preset("Bi2Se3", valence_band_edge_meV=-250.0, conduction_band_edge_meV=50.0)
    assert bulk_window_note(placed, 40.0) is None
    assert "outside the bulk gap" in bulk_window_note(placed, 60.0)      # above a near conduction band
    assert bulk_window_note(placed, -200.0) is None                      # far from the valence band: fine
    assert bulk_window_note(PRESETS["InAs"].__class__("layer", effective_mass_ratio=0.02), 30.0) is None


def test_user_g_factor_is_marked_as_a_user_value():
    material = material_from_preset("Bi2Te3", surface_g_factor=12.0)
    assert material.surface_g_factor == 12.0 and material.sources["surface_g_factor"] == "user value"
    assert material.sources["dirac_velocity_m_s"] == PRESETS["Bi2Te3"].sources["dirac_velocity_m_s"]
    with pytest.raises(Exception, match="preset"):
        material_from_preset("Unobtainium")
