"""Cells that spreadsheets write: error values and typographic minus signs."""

import numpy as np
import pytest

from rheofit.ingest import read_flow_curve


def test_spreadsheet_error_cells_are_missing_values(tmp_path):
    path = tmp_path / "sheet.csv"
    path.write_text(
        "Shear rate (1/s),Viscosity (Pa s)\n1,2\n2,#DIV/0!\n4,#VALUE!\n8,0.5\n16,0.25\n",
        encoding="utf-8",
    )
    curve = read_flow_curve(path)
    np.testing.assert_allclose(curve.shear_rate, [1, 8, 16])
    assert any("2" in flag.message for flag in curve.flags)  # the dropped rows are counted


def test_typographic_minus_in_exponent(tmp_path):
    path = tmp_path / "minus.csv"
    path.write_text(
        "Shear rate (1/s),Viscosity (Pa s)\n1e\u22121,2\n1,1\n10,0.5\n100,0.25\n",
        encoding="utf-8",
    )
    curve = read_flow_curve(path)
    assert curve.shear_rate[0] == pytest.approx(0.1)
