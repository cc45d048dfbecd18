"""Scenario files: strict types (a boolean is not a length, a string is not a count) and a UTF-8 BOM."""

from __future__ import annotations

import pytest

from simsurface.errors import InputError
from simsurface.scenario import load_scenario


@pytest.mark.parametrize("old,new,field", [
    ("length_nm = 30.0", "length_nm = true", "[wire] length_nm"),
    ("diameter_nm = 22.0", 'diameter_nm = "22"', "[wire] diameter_nm"),
    ("points = 5", 'points = "5"', "points"),
    ("points = 5", "points = 5.0", "points"),
    ("seed = 3", "seed = false", "seed"),
], ids=["bool-length", "string-length", "string-count", "float-count", "bool-seed"])
def test_wrong_type_is_refused_naming_the_field(tmp_path, tiny_scenario_text, old, new, field):
    path = tmp_path / "s.toml"
    path.write_text(tiny_scenario_text.replace(old, new))
    with pytest.raises(InputError, match=r"valid (number|integer)") as err:
        load_scenario(path)
    assert field in str(err.value)


def test_whole_number_is_accepted_where_a_length_is_expected(tmp_path, tiny_scenario_text):
    path = tmp_path / "s.toml"
    path.write_text(tiny_scenario_text.replace("length_nm = 30.0", "length_nm = 30"))
    scenario = load_scenario(path)
    assert scenario.wire.length_nm == 30.0 and isinstance(scenario.wire.length_nm, float)


def test_scenario_saved_with_a_utf8_byte_order_mark_is_read(tmp_path, tiny_scenario_text):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + tiny_scenario_text.encode("utf-8"))
    assert load_scenario(path).wire.length_nm == 30.0
