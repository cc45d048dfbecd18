"""Cross-sections at the surface-state depth."""

import math

import pytest

from simsurface.errors import InputError
from simsurface.geometry import CrossSection, depth_from_area_nm, circle_diameter_nm, square_side_nm


def test_rectangle_offset_contour_area_and_perimeter():
    # inward offset of a w × t rectangle by d is a (w − 2d) × (t − 2d) rectangle (elementary geometry)
    s = CrossSection.rectangle(100.0, 40.0, depth_nm=3.0)
    assert s.area_nm2 == pytest.approx(94.0 * 34.0)
    assert s.perimeter_nm == pytest.approx(2 * (94.0 + 34.0))


def test_circle_offset_contour_area_and_perimeter():
    s = CrossSection.circle(80.0, depth_nm=2.0)
    assert s.area_nm2 == pytest.approx(math.pi * 38.0**2)
    assert s.perimeter_nm == pytest.approx(2 * math.pi * 38.0)


@pytest.mark.parametrize("shape,w,t", [("circle", 90.0, 90.0), ("rectangle", 120.0, 35.0)])
def test_depth_recovered_from_area(shape, w, t):
    s = CrossSection(shape, w, t, depth_nm=4.2)
    assert depth_from_area_nm(shape, w, t, s.area_nm2) == pytest.approx(4.2, abs=1e-9)


def test_equivalent_sizes():
    assert square_side_nm(6400.0) == pytest.approx(80.0)
    assert circle_diameter_nm(math.pi * 25.0**2) == pytest.approx(50.0)


def test_depth_beyond_half_width_is_rejected_with_field_name():
    with pytest.raises(InputError, match="depth_nm"):
        CrossSection.rectangle(20.0, 10.0, depth_nm=6.0)
