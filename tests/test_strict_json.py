"""Every --json we print is strict JSON (RFC 8259: no NaN, Infinity) and a success leaves stderr clean.

Strictness is checked with json.loads and a parse_constant that refuses NaN/Infinity
(RFC 8259, Bray 2017, section 6: "Numeric values that cannot be represented ... such as
Infinity and NaN are not permitted").  The edge cases are invented operating points.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.output import REPLACED_KEY, strict_json

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
runner = CliRunner()
A, B, C = (str(SAMPLES / f"medium_lot_{x}.csv") for x in "ABC")
SLIT = ["--width", "1 cm", "--length", "10 cm"]
TUBE = ["--length", "10 cm"]


def _strict(text: str):
    def refuse(constant):
        raise ValueError(f"{constant} is not JSON (RFC 8259)")
    return json.loads(text, parse_constant=refuse)


CASES = [
    ["flow", A, "--gap", "1e-320 m", *SLIT, "--flow-rate", "1 uL/min", "--json"],
    ["flow", A, "--gap", "1e-9 m", *SLIT, "--flow-rate", "1 uL/min", "--json"],
    ["flow", A, "--gap", "1 m", *SLIT, "--flow-rate", "1e-30 uL/min", "--json"],
    ["flow", A, "--diameter", "1e-300 m", *TUBE, "--flow-rate", "1 uL/min", "--json"],
    ["flow", A, "--diameter", "1 mm", *TUBE, "--flow-rate", "1e30 uL/min", "--json"],
    ["flow", A, "--diameter", "1 mm", *TUBE, "--pressure-drop", "1e-30 Pa", "--json"],
    ["flow", A, "--diameter", "1 mm", *TUBE, "--pressure-drop", "1e30 Pa", "--json"],
    ["flow", str(SAMPLES / "microgel_carrier.csv"), "--diameter", "0.5 mm", *TUBE,
     "--pressure-drop", "1 Pa", "--json"],
    ["fit", A, "--json"],
    ["fit", str(SAMPLES / "microgel_carrier.csv"), "--json"],
    ["compare", A, B, C, "--json"],
]


@pytest.mark.parametrize("args", CASES, ids=[f"{i}-{a[0]}" for i, a in enumerate(CASES)])
def test_json_output_is_strict_and_success_is_quiet(args):
    result = runner.invoke(app, args)
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert result.exit_code in (0, 2), result.output
    if result.exit_code == 0:
        _strict(result.stdout)
        assert "Warning" not in result.stderr, result.stderr
    else:
        assert len(result.stderr.strip().splitlines()) == 1, result.stderr


def test_non_finite_values_are_written_as_null_with_a_flag():
    text = strict_json({"gap": np.float64(1e-320), "pressure": [1.0, math.inf], "q": np.array([np.nan])})
    document = _strict(text)
    assert document["pressure"] == [1.0, None] and document["q"] == [None]
    assert document[REPLACED_KEY] == ["pressure[1]", "q[0]"]
    assert REPLACED_KEY not in _strict(strict_json({"x": 1.0}))
