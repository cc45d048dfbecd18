"""Cross-sections at the surface-state depth."""

import math

import numpy as np

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


def test_contour_points_enclose_the_section_area_counterclockwise():
    """Shoelace area of the sampled contour equals the enclosed area; s = 0 is the bottom point; the normal
    points outwards (common practice, no source)."""
    from simsurface.geometry import CrossSection, contour_points

    for section in (CrossSection.circle(60.0, 2.0), CrossSection.rectangle(50.0, 30.0, 1.5)):
        s = np.arange(4000) * section.perimeter_nm / 4000
        pts = contour_points(section, s)
        shoelace = 0.5 * np.sum(pts.y_nm * np.roll(pts.z_nm, -1) - np.roll(pts.y_nm, -1) * pts.z_nm)
        assert shoelace == pytest.approx(section.area_nm2, rel=1e-5)      # positive: counterclockwise in (y, z)
        assert pts.y_nm[0] == pytest.approx(0.0, abs=1e-12) and pts.z_nm[0] == pytest.approx(pts.z_nm.min())
        assert np.all(pts.normal[:, 0] * pts.y_nm + pts.normal[:, 1] * pts.z_nm > 0)
        np.testing.assert_allclose(np.sum(pts.normal * pts.tangent, axis=1), 0.0, atol=1e-12)
