"""Every CSV rheofit writes is safe to open in a spreadsheet (issue 11, item 5).

Rule from OWASP, "CSV Injection" (owasp.org/www-community/attacks/CSV_Injection): a cell
starting with =, +, -, @, tab or carriage return is prefixed with a single quote.
"""

import csv
import io
import shutil
from pathlib import Path

import pandas as pd
import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.output import csv_text, spreadsheet_safe

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"


@pytest.mark.parametrize("cell", ["=1+1", "+1+cmd", "-2+3", "@SUM(A1)", "\tx", "\rx", '=HYPERLINK("http://x")'])
def test_formula_starts_are_quoted(cell):
    assert spreadsheet_safe(cell) == "'" + cell


@pytest.mark.parametrize("cell", [-1.5, 3, "-1.5", "+2e3", "lot A", "a=b", ""])
def test_numbers_and_plain_text_stay(cell):
    assert spreadsheet_safe(cell) == cell


def test_csv_text_keeps_negative_numbers_numbers():
    rows = list(csv.reader(io.StringIO(csv_text(pd.DataFrame({"lot": ["=cmd", "ok"], "deviation": [-0.25, 0.1]})))))
    assert rows == [["lot", "deviation"], ["'=cmd", "-0.25"], ["ok", "0.1"]]


def test_compare_out_csv_neutralises_a_file_stem(tmp_path):
    hostile = tmp_path / '=HYPERLINK("http-x","y").csv'
    other = tmp_path / "b.csv"
    shutil.copyfile(SAMPLES / "medium_lot_A.csv", hostile)
    shutil.copyfile(SAMPLES / "medium_lot_B.csv", other)
    before = hostile.read_bytes(), other.read_bytes()
    out = tmp_path / "lots.csv"
    result = CliRunner().invoke(app, ["compare", str(hostile), str(other), "--out", str(out), "--json"])
    assert result.exit_code == 0, result.output
    rows = list(csv.DictReader(out.open(encoding="utf-8")))
    assert rows[0]["lot"].startswith("'=HYPERLINK")
    assert not any(cell.startswith(("=", "+", "@", "\t", "\r")) for row in rows for cell in row.values())
    for row in rows:  # numbers stay numbers, a negative one too
        float(row["max_viscosity_deviation"])
    assert (hostile.read_bytes(), other.read_bytes()) == before
