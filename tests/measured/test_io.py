"""Import of delimited text: units, delimiters, metadata, sweeps, and the messages for bad files."""

import numpy as np
import pytest

from simsurface.errors import InputError
from simsurface.measured.io import ColumnSpec, read_manifest, read_table, split_name
from simsurface.units import CONDUCTANCE_QUANTUM_S


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


@pytest.mark.parametrize("header,scale", [("B (T),R (Ohm)", 1.0), ("B [mT],R [kΩ]", 1e3), ("field_G,R_kohm", 1e4),
                                          ("B/T,R/MOhm", 1.0)])
def test_field_and_resistance_units_convert_to_tesla_and_ohm(tmp_path, header, scale):
    # SI prefixes and 1 G = 1e-4 T (common practice, no source)
    fields_T = np.array([0.0, 0.5, 1.0])
    field_col = {"B (T)": 1, "B [mT]": 1e3, "field_G": 1e4, "B/T": 1}[header.split(",")[0]]
    r_col = {"R (Ohm)": 1, "R [kΩ]": 1e-3, "R_kohm": 1e-3, "R/MOhm": 1e-6}[header.split(",")[1]]
    rows = "\n".join(f"{b * field_col:.10g},{(1000 + b) * r_col:.10g}" for b in fields_T)
    ds = read_table(write(tmp_path, "a.csv", f"{header}\n{rows}\n"))
    np.testing.assert_allclose(ds["field_T"], fields_T, rtol=1e-12)
    np.testing.assert_allclose(ds["resistance_ohm"], 1000 + fields_T, rtol=1e-9)
    assert ds.attrs["quantity"] == "resistance"


def test_conductance_in_siemens_is_converted_to_e2h(tmp_path):
    # e^2/h = 3.874e-5 S (scipy.constants, CODATA 2018)
    p = write(tmp_path, "g.tsv", "B (T)\tG (uS)\n0\t38.74045865\n1\t77.4809173\n")
    ds = read_table(p)
    np.testing.assert_allclose(ds["conductance_e2h"], [1e-6 * 38.74045865 / CONDUCTANCE_QUANTUM_S,
                                                       1e-6 * 77.4809173 / CONDUCTANCE_QUANTUM_S])
    np.testing.assert_allclose(ds["conductance_e2h"], [1.0, 2.0], rtol=1e-8)


def test_voltage_and_current_give_resistance(tmp_path):
    p = write(tmp_path, "vi.txt", "# temperature_K = 1.8\n# gate_V: -2.5\nB (mT)  V (uV)  I (nA)\n"
                                  "0  10  10\n500  20  10\n1000  nan  10\n")
    ds = read_table(p)
    np.testing.assert_allclose(ds["resistance_ohm"], [1000.0, 2000.0])
    np.testing.assert_allclose(ds["field_T"], [0.0, 0.5])
    assert ds.attrs["dropped_rows"] == 1
    assert ds.attrs["metadata"] == {"temperature_K": 1.8, "gate_V": -2.5}


def test_up_and_down_sweeps_are_labelled(tmp_path):
    b = np.concatenate([np.linspace(-1, 1, 11), np.linspace(1, -1, 11)[1:]])
    rows = "\n".join(f"{x:.4f},{1000 + x}" for x in b)
    ds = read_table(write(tmp_path, "s.csv", "B (T),R (Ohm)\n" + rows))
    assert (ds["sweep"].values[:11] == 1).all() and (ds["sweep"].values[12:] == -1).all()


def test_headerless_file_needs_units_and_takes_them_from_options(tmp_path):
    p = write(tmp_path, "n.dat", "0 100\n1 200\n2 300\n")
    with pytest.raises(InputError, match="--field-unit"):
        read_table(p)
    ds = read_table(p, ColumnSpec(field_unit="T", signal_unit="kohm"))
    np.testing.assert_allclose(ds["resistance_ohm"], [1e5, 2e5, 3e5])


def test_named_columns_pick_among_several_signals(tmp_path):
    p = write(tmp_path, "m.csv", "B (T),R2t (Ohm),R4t (Ohm),T (K)\n0,10,5,1.5\n1,11,6,1.7\n")
    with pytest.raises(InputError, match="--signal-column"):
        read_table(p)
    ds = read_table(p, ColumnSpec(signal="R4t"))
    np.testing.assert_allclose(ds["resistance_ohm"], [5, 6])
    assert ds.attrs["metadata"]["temperature_K"] == pytest.approx(1.6)
    ds = read_table(p, ColumnSpec(signal=2))
    np.testing.assert_allclose(ds["resistance_ohm"], [10, 11])


def test_header_name_splitting():
    assert split_name("B (T)") == ("B", "T")
    assert split_name("conductance_e2h") == ("conductance", "e2h")
    assert split_name("R/kOhm") == ("R", "kOhm")
    assert split_name("R_xx") == ("R_xx", None)


@pytest.mark.parametrize("text,message", [
    ("", "no data rows"),
    ("# only a comment\n", "no data rows"),
    ("B (T)\n0\n1\n", "only one column"),
    ("B (T),R (Ohm)\n0,1\n1,abc\n", r"line 3, column 'R \(Ohm\)': 'abc' is not a number"),
    ("B (T),R (furlong)\n0,1\n1,2\n", "unit 'furlong' is neither a resistance"),
    ("B (T),R (Ohm)\n0,1\n1,2,3\n", "line 3: 3 columns"),
])
def test_bad_files_raise_one_clear_message(tmp_path, text, message):
    with pytest.raises(InputError, match=message):
        read_table(write(tmp_path, "bad.csv", text))


def test_binary_file_is_not_a_table(tmp_path):
    p = tmp_path / "x.csv"
    p.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00")
    with pytest.raises(InputError, match="not a text table"):
        read_table(p)


def test_manifest_lists_files_with_metadata_relative_to_itself(tmp_path):
    m = write(tmp_path, "s.toml", '[sample]\nname = "QX-1"\nshape = "circle"\nwidth_nm = 80\n'
                                  '[[file]]\npath = "a.csv"\ntemperature_K = 2\n'
                                  '[[file]]\npath = "b.csv"\ntemperature_K = 4\nreciprocal = "c.csv"\n')
    s = read_manifest(m)
    assert [e.path for e in s.entries] == [tmp_path / "a.csv", tmp_path / "b.csv"]
    assert s.entries[1].metadata == {"temperature_K": 4} and s.entries[1].reciprocal == tmp_path / "c.csv"
    assert s.sample["shape"] == "circle"
    bad = write(tmp_path, "t.toml", "[sample]\ncolour = 1\n[[file]]\npath = 'a'\n")
    with pytest.raises(InputError, match=r"\[sample\] colour"):
        read_manifest(bad)
