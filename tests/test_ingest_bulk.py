"""The bulk reader (rheofit.ingest.bulk, pandas) and the line index read what splitting rows in Python reads.

1. Every test of test_ingest*.py runs again here with every block read in
   bulk (threshold 0) and the file read in tiny chunks and windows, so that
   lines, CRLF pairs and rows fall across piece boundaries.
2. The line index is checked against the plain definition: the text split
   at LF, CRLF or CR (Python's str.replace / str.split), and per line
   "holds a byte outside digits, signs, decimal marks, delimiters and
   quotes" / "holds an ASCII digit".
3. Files above the real bulk threshold read back exactly the numbers
   written with repr(): Python's repr of a float is the shortest string
   that rounds back to it (Python 3.1 "What's New"; D. M. Gay (1990),
   Correctly rounded binary-decimal and decimal-binary conversions, AT&T
   Numerical Analysis Manuscript 90-10), so equality is exact.  Their
   error messages name the same line and column as for a small file.
"""

from __future__ import annotations

import re

import numpy as np
import pandas  # noqa: F401  (loaded, as in a notebook session, so that large blocks are read in bulk)
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import test_ingest
import test_ingest_corpus
import test_ingest_properties
import test_ingest_spreadsheet_cells
from rheofit.errors import InputFileError
from rheofit.ingest import bulk, lines, read_flow_curve, read_flow_curves, table
from rheofit.ingest.dialect import MISSING
from rheofit.ingest.lines import FileBytes, Lines

# --- 1. the existing tests, read in bulk and in tiny pieces ------------------------------------

for _module in (test_ingest, test_ingest_corpus, test_ingest_properties, test_ingest_spreadsheet_cells):
    for _name, _test in vars(_module).items():
        if _name.startswith("test_") and callable(_test):
            globals()[f"{_name}__{_module.__name__}"] = _test


@pytest.fixture(autouse=True)
def bulk_in_tiny_pieces(monkeypatch, request):
    """Bulk reading for every block, 64-byte chunks and a 32-byte read window (not for section 3)."""
    if not request.node.name.startswith("test_large_"):
        monkeypatch.setattr(table, "BULK_ROWS", 0)
        monkeypatch.setattr(table, "BULK_ROWS_COLD", 0)
        monkeypatch.setattr(lines, "CHUNK", 64)
        monkeypatch.setattr(FileBytes, "WINDOW", 32)


# --- 2. the line index ----------------------------------------------------------------------------

_NUMERIC = set("0123456789 \t.,;:|+-eE\"'")


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet="a1 ,;\t.\"-\r\n°x", max_size=300))
def test_line_index_matches_splitting_the_text(text):
    data = text.encode("utf-8")
    found = Lines(data, "utf-8")
    expected = text.replace("\r\n", "\n").replace("\r", "\n").split("\n")
    assert list(found) == expected
    assert found[-1] == expected[-1] and found[1:3] == expected[1:3]
    with pytest.raises(IndexError):  # a sequence like a list
        found[len(expected)]
    assert found.text.tolist() == [any(ch not in _NUMERIC for ch in line) for line in expected]
    assert found.digit.tolist() == [bool(re.search("[0-9]", line)) for line in expected]


def test_file_bytes_slices_like_bytes(tmp_path):
    data = bytes(range(256)) * 3
    path = tmp_path / "bytes.bin"
    path.write_bytes(data)
    with open(path, "rb") as handle:
        view = FileBytes(handle)
        assert len(view) == len(data)
        for low, high in [(0, 5), (3, 40), (30, 31), (700, 900), (100, 50), (0, 768), (760, 768)]:
            assert view[low:high] == data[low:high]
        assert view[:] == data and view[:4] == data[:4]


def test_missing_value_spellings_are_missing_values():
    # every spelling handed to pandas as "missing" is one the row-by-row reader treats as missing
    # (rheofit.ingest.dialect.MISSING, compared lower-case)
    assert all(text.lower() in MISSING for text in bulk.MISSING_TEXTS)
    assert {"", "NaN", "nan", "--", "n/a", "N/A", "#DIV/0!"} <= set(bulk.MISSING_TEXTS)


# --- 3. large files, above the real bulk threshold --------------------------------------------------

ROWS = max(25_000, table.BULK_ROWS + 5_000)  # read in bulk: pandas is loaded above


def sweep(rows=ROWS, seed=3):
    """Invented numbers: a shear-thinning sweep with scatter."""
    rng = np.random.default_rng(seed)
    rate = np.logspace(-2, 3, rows)
    return rate, 2.0 * rate ** -0.4 * (1 + 0.01 * rng.standard_normal(rows))


@pytest.mark.parametrize("delimiter,decimal,encoding,end", [
    (",", ".", "utf-8", "\n"), (";", ",", "cp1252", "\r\n"), ("\t", ".", "utf-8-sig", "\r"),
    ("|", ".", "latin-1", "\n"), ("  ", ".", "utf-8", "\r\n"),
])
def test_large_file_reads_back_exactly(tmp_path, delimiter, decimal, encoding, end):
    rate, eta = sweep()
    cell = (lambda x: repr(float(x)).replace(".", ",")) if decimal == "," else (lambda x: repr(float(x)))
    rows = [delimiter.join((cell(g), cell(e))) for g, e in zip(rate, eta)]
    rows[100] = delimiter.join((cell(rate[100]), "NaN"))
    rows[200] = delimiter.join((cell(rate[200]), "--" if delimiter.strip() else "n/a"))
    text = end.join(["Sample: invented", delimiter.join(("Shear rate [1/s]", "Viscosity [mPa·s]"))] + rows) + end
    path = tmp_path / "large.txt"
    path.write_bytes(text.encode(encoding))
    curve = read_flow_curve(path)
    keep = np.ones(ROWS, dtype=bool)
    keep[[100, 200]] = False
    assert np.array_equal(curve.shear_rate, rate[keep])
    assert np.array_equal(curve.viscosity, eta[keep] * 1e-3)  # 1 mPa s = 1e-3 Pa s (SI Brochure 2019, Table 8)
    (flag,) = [f for f in curve.flags if f.code == "missing_values"]
    assert flag.data["lines"] == [103, 203]  # header on line 2, first row on line 3
    assert curve.metadata["Sample"] == "invented"


def test_large_file_with_trailing_delimiters_blank_lines_and_quotes(tmp_path):
    rate, eta = sweep()
    rows = [f'"{g!r}";"{e!r}";' for g, e in zip(rate.tolist(), eta.tolist())]
    rows.insert(5_000, "")
    text = '"Shear rate [1/s]";"Viscosity [Pa s]";\n' + "\n".join(rows) + "\n"
    path = tmp_path / "quoted.csv"
    path.write_text(text, encoding="utf-8")
    curve = read_flow_curve(path)
    assert np.array_equal(curve.shear_rate, rate) and np.array_equal(curve.viscosity, eta)


def test_large_file_with_labels_and_temperatures(tmp_path):
    rate, eta = sweep(rows=ROWS // 2)
    lines_out = ["Lot;Temperature [°C];Shear rate [1/s];Viscosity [Pa s]"]
    for lot, t in (("A", 20), ("B", 37)):
        lines_out += [f"{lot if k == 0 else ''};{t};{g!r};{e!r}" for k, (g, e) in enumerate(zip(rate.tolist(), eta.tolist()))]
    path = tmp_path / "lots.csv"
    path.write_text("\n".join(lines_out) + "\n", encoding="utf-8")
    curves = read_flow_curves(path)
    assert [c.metadata["import"]["curve"] for c in curves] == ["A, 20 °C", "B, 37 °C"]
    assert [c.temperature for c in curves] == pytest.approx([293.15, 310.15])  # SI Brochure 2019, sec. 2.3.1
    assert all(np.array_equal(c.viscosity, eta) for c in curves)


def test_large_file_with_typographic_minus_and_error_cells(tmp_path):
    rate, eta = sweep()
    rows = [f"{g!r},{e!r}" for g, e in zip(rate.tolist(), eta.tolist())]
    rows[7] = rows[7].replace("e-", "e\u2212")
    rows[8] = f"{float(rate[8])!r},#DIV/0!"
    path = tmp_path / "sheet.csv"
    path.write_text("Shear rate (1/s),Viscosity (Pa s)\n" + "\n".join(rows) + "\n", encoding="utf-8")
    curve = read_flow_curve(path)
    assert curve.shear_rate[7] == rate[7] and len(curve) == ROWS - 1


@pytest.mark.parametrize("cell,expected", [
    ("abc", "line 20003, column 'Viscosity [Pa s]': 'abc' is not a number"),
    ("TRUE", "line 20003, column 'Viscosity [Pa s]': 'TRUE' is not a number"),  # pandas alone would read 1.0
    ("1,5", "'1,5' is not a number (decimal commas are read only when columns are separated by"),
])
def test_large_file_errors_name_the_line_and_column(tmp_path, cell, expected):
    rate, eta = sweep()
    rows = [f"{g!r}\t{e!r}" for g, e in zip(rate.tolist(), eta.tolist())]
    rows[20_001] = f"{float(rate[20_001])!r}\t{cell}"
    path = tmp_path / "bad.txt"
    path.write_text("Shear rate [1/s]\tViscosity [Pa s]\n" + "\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError, match=re.escape(expected)):
        read_flow_curves(path)


@pytest.mark.parametrize("row,found", [("1;2;3", 3), ("1", 1)])
def test_large_file_ragged_row(tmp_path, row, found):
    rate, eta = sweep()
    rows = [f"{g!r};{e!r}" for g, e in zip(rate.tolist(), eta.tolist())]
    rows[20_000] = row
    path = tmp_path / "ragged.csv"
    path.write_text("Shear rate [1/s];Viscosity [Pa s]\n" + "\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError, match=f"line 20002 has {found} values where the header on line 1 names 2"):
        read_flow_curves(path)


def test_large_file_with_a_column_of_booleans_is_not_read_as_ones(tmp_path, monkeypatch):
    # pandas reads a chunk of a column made only of TRUE/FALSE as 1.0/0.0; the row-by-row reader
    # calls such a cell text, and so must the bulk reader (small chunks: whole chunks of booleans)
    monkeypatch.setattr(bulk, "CHUNK_ROWS", 1000)
    rate, eta = sweep()
    rows = [f"{g!r};{'TRUE' if k % 2 else 'FALSE'}" if 1000 <= k < 2000 else f"{g!r};{e!r}"
            for k, (g, e) in enumerate(zip(rate.tolist(), eta.tolist()))]
    path = tmp_path / "flags.csv"
    path.write_text("Shear rate [1/s];Viscosity [Pa s]\n" + "\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError, match=r"line 1002, column 'Viscosity \[Pa s\]': 'FALSE' is not a number"):
        read_flow_curves(path)


def test_large_file_with_a_quote_inside_a_cell_reads_as_the_csv_module_does(tmp_path):
    # '"1.5"0' is one cell for the csv module (1.50, strict=False); the bulk reader leaves such rows to it
    rate, eta = sweep()
    rows = [f'"{g!r}";"{e!r}"' for g, e in zip(rate.tolist(), eta.tolist())]
    rows[9] = f'"{float(rate[9])!r}";"1.5"0'
    path = tmp_path / "odd_quotes.csv"
    path.write_text('"Shear rate [1/s]";"Viscosity [Pa s]"\n' + "\n".join(rows) + "\n", encoding="utf-8")
    assert read_flow_curve(path).viscosity[9] == 1.5
