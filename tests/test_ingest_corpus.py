"""A corpus of realistic and broken exports, written here into tmp_path.

Every layout and every number is invented for these tests (generic headers
of the kinds people write); expected SI values are worked out by hand.
Unit facts used: 1 mPa s = 1e-3 Pa s, 1 cP = 1 mPa s, 1 P = 0.1 Pa s
(BIPM SI Brochure, 9th ed. (2019), Table 8) and T/K = t/°C + 273.15
(SI Brochure 2019, sec. 2.3.1).
"""

from __future__ import annotations

import codecs

import numpy as np
import pytest

from rheofit.errors import InputFileError, UnitError
from rheofit.ingest import read_flow_curve, read_flow_curves


def write(folder, name, text, encoding="utf-8"):
    path = folder / name
    path.write_bytes(text.encode(encoding) if isinstance(text, str) else text)
    return path


def codes(curve):
    return [flag.code for flag in curve.flags]


# --- realistic files ------------------------------------------------------------------------

PREAMBLE_SEMICOLON = """Flow curve export
Operator: A. Tester
Date: 2024-03-05 14:32
Sample;Hydrogel 2 % w/v
Gap: 500 µm
Temperature: 25 °C

Point;Shear rate [1/s];Shear stress [Pa];Viscosity [mPa·s]
1;0,1;0,52;5200
2;1,0;2,9;2900
3;1,0E+01;14,5;1450
4;100;71;710
"""


@pytest.mark.parametrize("encoding", ["cp1252", "latin-1"])  # °, µ and · share their bytes in both
def test_preamble_semicolon_decimal_comma_cp1252(tmp_path, encoding):
    curve = read_flow_curve(write(tmp_path, "gel.csv", PREAMBLE_SEMICOLON, encoding))
    np.testing.assert_allclose(curve.shear_rate, [0.1, 1.0, 10.0, 100.0], rtol=1e-12)
    np.testing.assert_allclose(curve.viscosity, [5.2, 2.9, 1.45, 0.71], rtol=1e-12)  # mPa s / 1000
    np.testing.assert_allclose(curve.stress, [0.52, 2.9, 14.5, 71.0], rtol=1e-12)
    assert curve.temperature == pytest.approx(298.15)  # 25 °C + 273.15
    meta = curve.metadata
    assert meta["lines"][0] == "Flow curve export"
    assert meta["Operator"] == "A. Tester"
    assert meta["Date"] == "2024-03-05 14:32"
    assert meta["Sample"] == "Hydrogel 2 % w/v"
    assert meta["Gap"] == "500 µm"
    assert meta["import"]["encoding"] == "cp1252"
    assert meta["import"]["delimiter"] == "semicolon" and meta["import"]["decimal"] == ","
    assert meta["import"]["header_line"] == 8
    assert codes(curve) == []  # stress and viscosity agree; all units given


def test_utf16_with_bom_tab_separated(tmp_path):
    text = "Shear rate (s⁻¹)\tViscosity (Pa·s)\r\n0.5\t3.5\r\n5\t1.25\r\n50\t0.5\r\n"
    curve = read_flow_curve(write(tmp_path, "export.txt", text, "utf-16"))
    np.testing.assert_allclose(curve.shear_rate, [0.5, 5, 50])
    np.testing.assert_allclose(curve.stress, [1.75, 6.25, 25.0])  # eta * rate by hand
    assert curve.metadata["import"]["encoding"] == "utf-16"


def test_utf16_without_bom(tmp_path):
    text = "Shear rate [1/s];Viscosity [cP]\n1;900\n10;450\n100;200\n"
    curve = read_flow_curve(write(tmp_path, "nobom.csv", text, "utf-16-le"))
    np.testing.assert_allclose(curve.viscosity, [0.9, 0.45, 0.2])


def test_utf8_with_bom(tmp_path):
    text = "\ufeffShear rate [1/s],Viscosity [P]\n1,9\n10,4.5\n100,2\n"
    curve = read_flow_curve(write(tmp_path, "bom.csv", text))
    np.testing.assert_allclose(curve.viscosity, [0.9, 0.45, 0.2])  # 1 P = 0.1 Pa s


def test_tab_separated_with_units_row(tmp_path):
    text = "Shear Rate\tViscosity\tTemperature\n[1/s]\t[mPas]\t[°C]\n2\t40\t20.0\n20\t30\t20.1\n200\t25\t19.9\n"
    curve = read_flow_curve(write(tmp_path, "units_row.tsv", text))
    np.testing.assert_allclose(curve.viscosity, [0.040, 0.030, 0.025])
    assert curve.temperature == pytest.approx(293.15, abs=1e-9)  # mean of 20.0, 20.1, 19.9 °C
    assert curve.metadata["import"]["units_line"] == 2
    assert codes(curve) == []


def test_multi_temperature_file(tmp_path):
    rows = []
    for t, eta in ((20, 1.0), (25, 0.8), (37, 0.5)):
        rows += [f"{g},{eta * g ** -0.3!r},{t + 0.05 * k}" for k, g in enumerate((1, 10, 100))]
    text = "Shear rate [1/s],Viscosity [Pa s],Temperature [°C]\n" + "\n".join(rows) + "\n"
    curves = read_flow_curves(write(tmp_path, "temps.csv", text))
    assert [c.metadata["import"]["curve"] for c in curves] == ["20 °C", "25 °C", "37 °C"]
    assert [c.name for c in curves] == ["temps 20 °C", "temps 25 °C", "temps 37 °C"]
    assert [c.temperature for c in curves] == pytest.approx([293.2, 298.2, 310.2])  # t + 0.05 mean
    np.testing.assert_allclose(curves[1].viscosity, [0.8, 0.8 * 10 ** -0.3, 0.8 * 100 ** -0.3], rtol=1e-12)
    with pytest.raises(InputFileError, match=r"temps\.csv' holds 3 curves \(1: 20 °C, 2: 25 °C, 3: 37 °C\)"):
        read_flow_curve(tmp_path / "temps.csv")


def test_blank_line_separated_blocks_with_labels(tmp_path):
    text = (
        "Instrument file, invented\n\n"
        "Sample: Lot A\nShear rate (1/s),Viscosity (Pa.s)\n1,2.0\n10,1.0\n100,0.5\n\n"
        "Sample: Lot B\nShear rate (1/s),Viscosity (Pa.s)\n1,2.2\n10,1.1\n100,0.55\n"
    )
    curves = read_flow_curves(write(tmp_path, "lots.csv", text))
    assert [c.metadata["import"]["curve"] for c in curves] == ["Lot A", "Lot B"]
    np.testing.assert_allclose(curves[1].viscosity, [2.2, 1.1, 0.55])
    assert curves[1].metadata["Sample"] == "Lot B"
    assert curves[1].metadata["lines"][0] == "Instrument file, invented"
    assert read_flow_curve(tmp_path / "lots.csv", curve="lot b").viscosity[0] == 2.2


def test_blocks_with_temperature_lines_and_section_titles(tmp_path):
    text = (
        "[Run 1]\nTemperature: 20 °C\nγ̇ [1/s]\tτ [Pa]\n1\t2\n10\t8\n100\t30\n\n"
        "[Run 2]\nTemperature: 40 °C\nγ̇ [1/s]\tτ [Pa]\n1\t1\n10\t4\n100\t15\n"
    )
    curves = read_flow_curves(write(tmp_path, "runs.txt", text))
    assert [c.temperature for c in curves] == pytest.approx([293.15, 313.15])
    assert [c.name for c in curves] == ["runs 20 °C", "runs 40 °C"]
    np.testing.assert_allclose(curves[1].viscosity, [1.0, 0.4, 0.15])  # tau / rate by hand


def test_label_column_splits_curves(tmp_path):
    text = "Lot;Shear rate [1/s];Viscosity [mPa s]\nL-1;1;50\n;10;40\n;100;30\nL-2;1;55\n;10;44\n;100;33\n"
    curves = read_flow_curves(write(tmp_path, "lots.csv", text))
    assert [c.metadata["import"]["curve"] for c in curves] == ["L-1", "L-2"]
    np.testing.assert_allclose(curves[1].viscosity, [0.055, 0.044, 0.033])


def test_up_down_sweep_with_hysteresis(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n1,2.0\n10,1.0\n100,0.5\n100,0.5\n10,0.8\n1,1.5\n"
    curve = read_flow_curve(write(tmp_path, "loop.csv", text))
    assert curve.segment.tolist() == [0, 0, 0, 1, 1, 1]
    assert curve.shear_rate.tolist() == [1, 10, 100, 100, 10, 1]  # measured order kept
    (flag,) = [f for f in curve.flags if f.code == "hysteresis"]
    # down vs up at matched rates: 10/s: |0.8/1.0 - 1| = 20 %; 1/s: |1.5/2.0 - 1| = 25 %
    assert flag.data["max_relative_difference"] == pytest.approx(0.25, rel=1e-9)
    assert flag.data["shear_rate"] == 1.0 and flag.data["line"] == 7
    assert "thixotropic" in flag.message and "25 %" in flag.message
    assert curve.metadata["import"]["sweep"] == "up-down"


def test_up_down_sweep_that_retraces_is_not_flagged(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n1,2.0\n10,1.0\n100,0.5\n10,1.01\n1,2.02\n"
    curve = read_flow_curve(write(tmp_path, "retrace.csv", text))
    assert curve.segment.tolist() == [0, 0, 0, 1, 1]
    assert "hysteresis" not in codes(curve)  # 1 % apart, below the threshold


def test_descending_sweep_keeps_its_order(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n100,0.5\n10,1.0\n1,2.0\n"
    curve = read_flow_curve(write(tmp_path, "down.csv", text))
    assert curve.shear_rate.tolist() == [100, 10, 1]
    assert curve.segment.tolist() == [0, 0, 0]
    assert curve.metadata["import"]["sweep"] == "descending"
    assert codes(curve) == []


def test_missing_values_are_dropped_and_counted(tmp_path):
    text = "Shear rate [1/s];Viscosity [Pa s]\n1;2\n2;\n5;NaN\n10;1\n20;--\n50;n/a\n70;—\n100;0.5\n"
    curve = read_flow_curve(write(tmp_path, "gaps.csv", text))
    np.testing.assert_allclose(curve.shear_rate, [1, 10, 100])
    (flag,) = [f for f in curve.flags if f.code == "missing_values"]
    assert flag.data == {"count": 5, "lines": [3, 4, 6, 7, 8]}
    assert "5 rows" in flag.message


def test_zero_and_negative_shear_rates_are_dropped(tmp_path):
    text = "Shear rate [1/s],Shear stress [Pa]\n0,0.3\n-0.01,0.3\n1,1\n10,3\n100,9\n"
    curve = read_flow_curve(write(tmp_path, "rest.csv", text))
    np.testing.assert_allclose(curve.viscosity, [1.0, 0.3, 0.09])
    (flag,) = [f for f in curve.flags if f.code == "nonpositive_shear_rate"]
    assert flag.data == {"count": 2, "lines": [2, 3]}


def test_index_column_trailing_delimiters_and_crlf(tmp_path):
    text = "No.;Shear rate [1/s];Viscosity [Pa s];\r\n1;1;3;\r\n2;10;2;\r\n3;100;1;\r\n\r\n"
    curve = read_flow_curve(write(tmp_path, "crlf.csv", text))
    np.testing.assert_allclose(curve.viscosity, [3, 2, 1])
    assert curve.metadata["import"]["ignored_columns"] == ["No."]


def test_whitespace_aligned_columns_with_scientific_notation(tmp_path):
    text = (
        "  Shear rate [1/s]    Viscosity [Pa s]    Shear stress [Pa]\n"
        "  1.000E-01           5.200E+00           5.200E-01\n"
        "  1.000E+00           2.900E+00           2.900E+00\n"
        "  1.000e+01           1.450e+00           1.450e+01\n"
    )
    curve = read_flow_curve(write(tmp_path, "aligned.txt", text))
    np.testing.assert_allclose(curve.shear_rate, [0.1, 1.0, 10.0])
    np.testing.assert_allclose(curve.viscosity, [5.2, 2.9, 1.45])
    assert curve.metadata["import"]["delimiter"] == "whitespace"


def test_quoted_cells_with_decimal_commas(tmp_path):
    text = '"Shear rate [1/s]","Viscosity [mPa s]"\n"0,5","120,5"\n"5","80,25"\n"50","40"\n'
    curve = read_flow_curve(write(tmp_path, "quoted.csv", text))
    np.testing.assert_allclose(curve.viscosity, [0.1205, 0.08025, 0.040])


def test_blank_lines_inside_the_data_and_a_footer(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n1,2\n\n10,1\n100,0.5\n\nEnd of data\nExported by hand\n"
    curve = read_flow_curve(write(tmp_path, "footer.csv", text))
    np.testing.assert_allclose(curve.shear_rate, [1, 10, 100])
    assert curve.metadata["lines"] == ["End of data", "Exported by hand"]


def test_header_without_units_stress_in_kpa_given_as_override(tmp_path):
    text = "Rate\tStress\n1\t0.002\n10\t0.01\n100\t0.05\n"
    curve = read_flow_curve(write(tmp_path, "kpa.txt", text), shear_rate_unit="1/s", stress_unit="kPa")
    np.testing.assert_allclose(curve.stress, [2, 10, 50])
    np.testing.assert_allclose(curve.viscosity, [2, 1, 0.5])
    assert codes(curve) == []


# --- broken files: one clear sentence each ------------------------------------------------

def _error(path, exc=InputFileError, **kwargs) -> str:
    with pytest.raises(exc) as info:
        read_flow_curves(path, **kwargs)
    message = str(info.value)
    assert path.name in message, message
    assert message.count(". ") == 0 or "e.g." in message, message  # one sentence
    return message


def test_file_not_found(tmp_path):
    assert "does not exist" in _error(tmp_path / "missing.csv")


def test_a_folder(tmp_path):
    (tmp_path / "folder.csv").mkdir()
    assert "is a folder" in _error(tmp_path / "folder.csv")


def test_unreadable_file(tmp_path, monkeypatch):
    path = write(tmp_path, "locked.csv", "Shear rate,Viscosity\n1,2\n")

    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr("rheofit.ingest.source.open", refuse, raising=False)
    assert "permission denied" in _error(path)


@pytest.mark.parametrize("text", ["", "  \n\n\r\n", codecs.BOM_UTF8.decode("utf-8")])
def test_empty_file(tmp_path, text):
    assert "is empty" in _error(write(tmp_path, "empty.csv", text))


def test_header_only(tmp_path):
    message = _error(write(tmp_path, "header.csv", "Shear rate [1/s];Viscosity [Pa s]\n"))
    assert "line 1" in message and "no data rows" in message


def test_header_after_the_numbers_only(tmp_path):
    message = _error(write(tmp_path, "late.csv", "1;2\nShear rate [1/s];Viscosity [Pa s]\n"))
    assert "line 2" in message and "no data rows" in message


def test_no_recognisable_columns(tmp_path):
    message = _error(write(tmp_path, "odd.csv", "Reading A,Reading B,Reading C\n1,2,3\n4,5,6\n7,8,9\n"))
    assert "'Reading A', 'Reading B', 'Reading C'" in message
    assert "shear_rate_column=" in message and "viscosity_column=" in message and "stress_column=" in message


def test_no_viscosity_or_stress_column(tmp_path):
    message = _error(write(tmp_path, "torque.csv", "Shear rate [1/s],Torque [mN m]\n1,2\n10,3\n100,4\n"))
    assert "viscosity or shear stress" in message and "'Torque [mN m]'" in message


def test_headerless_numbers_without_overrides(tmp_path):
    message = _error(write(tmp_path, "bare.txt", "1 2 3\n4 5 6\n7 8 9\n"))
    assert "3 unnamed columns, numbered 1 to 3" in message


def test_text_where_a_number_belongs(tmp_path):
    text = "Sample: x\nShear rate [1/s];Viscosity [Pa s]\n1;2\n10;abc\n100;0,5\n"
    message = _error(write(tmp_path, "text.csv", text))
    assert "line 4" in message and "column 'Viscosity [Pa s]'" in message and "'abc'" in message


def test_decimal_comma_among_decimal_points_gets_a_hint(tmp_path):
    text = "Shear rate [1/s]\tViscosity [Pa s]\n1.5\t2.5\n10.5\t1,5\n100.5\t0.5\n"
    message = _error(write(tmp_path, "mixed.txt", text))
    assert "line 3" in message and "'1,5'" in message and "decimal commas" in message


@pytest.mark.parametrize(
    "data,what",
    [
        (b"PK\x03\x04\x14\x00\x06\x00" + bytes(range(256)), "zip archive"),
        (b"\x00\x01\x02\x03\x00\xff\x00\x10" * 64, "binary data"),
        (bytes(range(1, 32)) * 20, "binary data"),
        (codecs.BOM_UTF8 + b"\xff\xfe\xfa\x80", "binary data"),
        (b"\x00\x00\x07\x01" * 64, "binary data"),  # zero bytes on both sides: not UTF-16
    ],
)
def test_binary_files(tmp_path, data, what):
    message = _error(write(tmp_path, "native.dat", data))
    assert "not a text file" in message and what in message and "export the sweep as text" in message


def test_unknown_unit_in_a_header(tmp_path):
    message = _error(write(tmp_path, "unit.csv", "Shear rate [1/s],Viscosity [blorp]\n1,2\n10,1\n100,0.5\n"), UnitError)
    assert "column 'Viscosity [blorp]'" in message and "'blorp'" in message and "viscosity_unit=" in message


def test_wrong_kind_of_unit_in_a_header(tmp_path):
    message = _error(write(tmp_path, "kind.csv", "Shear rate [1/s],Viscosity [Pa]\n1,2\n10,1\n100,0.5\n"), UnitError)
    assert "column 'Viscosity [Pa]'" in message and "not a unit of viscosity" in message


def test_single_column(tmp_path):
    message = _error(write(tmp_path, "one.csv", "Viscosity [Pa s]\n2\n1\n0.5\n"))
    assert "single column" in message


def test_no_numbers_at_all(tmp_path):
    message = _error(write(tmp_path, "prose.txt", "This file holds notes about the sample.\nNothing else.\n"))
    assert "no rows of numbers" in message


def test_ragged_row(tmp_path):
    text = "Shear rate [1/s];Viscosity [Pa s];Shear stress [Pa]\n1;2;2\n10;1;10;7\n100;0,5;50\n"
    message = _error(write(tmp_path, "ragged.csv", text))
    assert "line 3 has 4 values where the header on line 1 names 3 columns" in message


def test_short_row(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s],Shear stress [Pa]\n1,2,2\n10,1\n100,0.5,50\n"
    assert "line 3 has 2 values" in _error(write(tmp_path, "short.csv", text))


def test_ragged_row_without_header(tmp_path):
    message = _error(write(tmp_path, "bare.txt", "1 2\n3 4\n5 6 7\n"), shear_rate_column=1, viscosity_column=2)
    assert "line 3 has 3 values where the rows above have 2" in message


def test_negative_viscosity(tmp_path):
    text = "Shear rate [1/s],Viscosity [mPa s]\n1,20\n10,-5\n100,-4\n1000,3\n"
    message = _error(write(tmp_path, "neg.csv", text))
    assert "line 3" in message and "column 'Viscosity [mPa s]'" in message and "-5" in message
    assert "2 such rows" in message


def test_zero_stress(tmp_path):
    text = "Shear rate [1/s],Shear stress [Pa]\n1,0\n10,1\n100,5\n"
    message = _error(write(tmp_path, "zero.csv", text))
    assert "line 2" in message and "column 'Shear stress [Pa]'" in message and "not positive" in message


def test_fewer_than_three_points(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n1,2\n10,\n100,NaN\n1000,0.5\n"
    message = _error(write(tmp_path, "few.csv", text))
    assert "only 2 usable points out of 4 rows" in message and "at least 3" in message


def test_fewer_than_three_points_names_the_curve(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s],T [°C]\n1,2,20\n10,1,20\n100,0.5,20\n1,2,40\n10,1,40\n"
    assert "(curve 40 °C)" in _error(write(tmp_path, "few.csv", text))


def test_temperature_column_with_gaps(tmp_path):
    text = "Shear rate [1/s];Viscosity [Pa s];Temperature [°C]\n1;3;--\n10;2;25.0\n100;1;\n"
    curve = read_flow_curve(write(tmp_path, "tgaps.csv", text))
    np.testing.assert_allclose(curve.viscosity, [3, 2, 1])  # no point lost for a missing temperature
    assert curve.temperature == pytest.approx(298.15)


def test_temperature_column_left_empty(tmp_path):
    text = "Shear rate [1/s];Viscosity [Pa s];Temperature [°C]\n1;3;\n10;2;\n100;1;\n"
    curve = read_flow_curve(write(tmp_path, "tnone.csv", text))
    assert curve.temperature is None and len(curve) == 3


@pytest.mark.parametrize(
    "line,kelvin,assumed",
    [
        ("Temperature: 37 °C", 310.15, False),
        ("# temperature: 37 C; steady sweep, low to high rate", 310.15, False),
        ("Temp = 298.15 K", 298.15, False),
        ("Temperature;25,0 °C", 298.15, False),
        ("Temperature: 20", 293.15, True),  # unitless below 150: °C (flagged)
        ("Temperature: 300", 300.0, True),  # unitless above 150: K (flagged)
        ("Temperature: room", None, False),
    ],
)
def test_temperature_from_a_preamble_line(tmp_path, line, kelvin, assumed):
    text = f"{line}\nShear rate [1/s];Viscosity [Pa s]\n1;3\n10;2\n100;1\n"
    curve = read_flow_curve(write(tmp_path, "pre.csv", text))
    assert curve.temperature == (pytest.approx(kelvin) if kelvin else None)  # SI Brochure 2019, sec. 2.3.1
    assert ("assumed_unit" in codes(curve)) == assumed
