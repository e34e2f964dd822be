"""Numbers typed as options are ASCII digits; '²', '①', '¹' are names, never a traceback (issue 11, item 7).

``str.isdigit`` is true for superscripts and circled digits (Python docs, str.isdigit:
"digits that need special handling, such as the compatibility superscript digits"),
while ``int`` refuses them.
"""

from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.units import counting_number

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
LOT_A, LOT_B = str(SAMPLES / "medium_lot_A.csv"), str(SAMPLES / "medium_lot_B.csv")


def run(*args):
    return CliRunner().invoke(app, list(args))


@pytest.mark.parametrize("text", ["²", "①", "¹", "٣", "1²"])
def test_only_ascii_digits_count(text):
    assert text.isdigit() or text == "1²"
    assert counting_number(text) is None


@pytest.mark.parametrize("text", ["²", "①", "¹"])
def test_curve_with_a_non_ascii_digit_is_one_sentence(text):
    before = Path(LOT_A).read_bytes()
    result = run("fit", LOT_A, "--curve", text)
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output and "has no curve" in result.output
    assert Path(LOT_A).read_bytes() == before


@pytest.mark.parametrize("text", ["²", "①"])
def test_compare_reference_with_a_non_ascii_digit_is_one_sentence(text):
    result = run("compare", LOT_A, LOT_B, "-r", text)
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output and "lot" in result.output


def test_column_with_a_non_ascii_digit_is_one_sentence():
    result = run("fit", LOT_A, "--column", "viscosity=²")
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output


def test_curve_number_still_works():
    assert run("fit", LOT_A, "--curve", "1", "--json").exit_code == 0


def test_double_percent_tolerance_is_refused():
    result = run("compare", LOT_A, LOT_B, "-t", "10%%")
    assert result.exit_code == 2, result.output
    assert "'10%%' is not a positive fraction or percentage" in result.output
