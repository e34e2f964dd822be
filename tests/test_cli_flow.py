"""The `rheofit flow` command, in-process: units at the edge, saved fits, errors."""

import json
import math
from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
runner = CliRunner()

# Source: IAPWS (2008) viscosity formulation (Huber et al. 2009, J. Phys. Chem. Ref.
# Data 38, 101): water at 20 °C and 0.1 MPa, 1.0016 mPa s
WATER_20C = 1.0016e-3


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


@pytest.fixture
def water_file(tmp_path):
    path = tmp_path / "water.csv"
    rates = [1, 3, 10, 30, 100, 300, 1000]
    path.write_text("shear rate (1/s),viscosity (cP)\n" + "".join(f"{g},1.0016\n" for g in rates))
    return path


def test_water_in_a_tube_follows_hagen_poiseuille(water_file):
    result = run("flow", water_file, "--model", "newtonian", "--diameter", "0.5 mm",
                 "--length", "10 cm", "--flow-rate", "100 uL/min", "--json")
    assert result.exit_code == 0, result.output
    p = json.loads(result.output)
    # Source: Hagen (1839), Poiseuille (1840): dP = 8 mu L Q / (pi R^4)
    q, radius, length = 100e-9 / 60, 0.25e-3, 0.1
    expected = 8 * WATER_20C * length * q / (math.pi * radius**4)
    assert p["pressure_drop"] == pytest.approx(expected, rel=1e-6)
    assert p["newtonian_ratio"] == pytest.approx(1.0, rel=1e-6)
    assert len(p["profile"]["position"]) == len(p["profile"]["velocity"]) > 10
    assert "caution" in p


def test_slit_from_pressure_drop(water_file):
    result = run("flow", water_file, "--model", "newtonian", "--gap", "200 um", "--width", "8 mm",
                 "--length", "2 cm", "--pressure-drop", "1 kPa", "--json")
    assert result.exit_code == 0, result.output
    # Source: plane Poiseuille flow between parallel plates, Q = W H^3 dP / (12 mu L)
    # (Bird, Stewart & Lightfoot 2002, problem 2B.3)
    expected = 8e-3 * (200e-6) ** 3 * 1e3 / (12 * WATER_20C * 0.02)
    assert json.loads(result.output)["flow_rate"] == pytest.approx(expected, rel=1e-6)


def test_saved_fit_is_read_back(tmp_path):
    saved = tmp_path / "lot_A.json"
    assert run("fit", SAMPLES / "medium_lot_A.csv", "--out", saved).exit_code == 0
    from_file = run("flow", saved, "--diameter", "0.8 mm", "--length", "30 cm",
                    "--flow-rate", "50 uL/min", "--json")
    on_the_spot = run("flow", SAMPLES / "medium_lot_A.csv", "--diameter", "0.8 mm",
                      "--length", "30 cm", "--flow-rate", "50 uL/min", "--json")
    assert from_file.exit_code == 0 and on_the_spot.exit_code == 0
    a, b = json.loads(from_file.output), json.loads(on_the_spot.output)
    assert a["pressure_drop"] == pytest.approx(b["pressure_drop"], rel=1e-9)


def test_readable_output_has_caution_and_comparison():
    result = run("flow", SAMPLES / "medium_lot_A.csv", "--diameter", "0.8 mm", "--length", "30 cm",
                 "--flow-rate", "50 uL/min")
    assert result.exit_code == 0, result.output
    assert "Newtonian comparison" in result.output
    assert "pressure rating" in result.output and "biosafety" in result.output


def test_yield_stress_sample_below_threshold_does_not_flow():
    result = run("flow", SAMPLES / "microgel_carrier.csv", "--gap", "200 um", "--width", "8 mm",
                 "--length", "2 cm", "--pressure-drop", "0.1 kPa")
    assert result.exit_code == 0, result.output
    assert "No flow" in result.output


@pytest.mark.parametrize(
    "options,message",
    [
        (["--diameter", "1 mm", "--flow-rate", "1 uL/min"], "--length"),
        (["--diameter", "1 mm", "--gap", "1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min"], "either --diameter"),
        (["--diameter", "1 mm", "--length", "1 cm"], "exactly one of"),
        (["--diameter", "1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min", "--pressure-drop", "1 kPa"], "exactly one of"),
        (["--diameter", "1 mm", "--length", "1 cm", "--flow-rate", "1 kPa"], "not a unit of flow rate"),
        (["--diameter", "-1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min"], "-1"),
        (["--diameter", "1 parsec/s", "--length", "1 cm", "--flow-rate", "1 uL/min"], "length"),
        (["--diameter", "1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min", "--model", "crosss"], "Did you mean 'cross'"),
        (["--diameter", "1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min", "--density", "heavy"], "density"),
    ],
)
def test_bad_options_end_in_one_sentence(options, message):
    result = run("flow", SAMPLES / "medium_lot_A.csv", *options)
    assert result.exit_code == 2, result.output
    assert message in result.output
    assert "Traceback" not in result.output


def test_a_file_that_is_not_a_sweep(tmp_path):
    bogus = tmp_path / "notes.json"
    bogus.write_text('{"hello": 1}')
    result = run("flow", bogus, "--diameter", "1 mm", "--length", "1 cm", "--flow-rate", "1 uL/min")
    assert result.exit_code == 2 and "notes.json" in result.output
