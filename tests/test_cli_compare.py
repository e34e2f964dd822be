"""The `rheofit compare` command, in-process with typer's CliRunner.

The command is registered on a local typer app here (rheofit.cli registers it
the same way).  Lot files written below are invented sweeps (fixed seed).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
import typer
from typer.testing import CliRunner

from rheofit.cli.compare import compare_command
from rheofit.flow.predict import SAFETY_CAUTION

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
runner = CliRunner()

app = typer.Typer()
app.command("compare")(compare_command)


@app.command("other")
def _other():  # a second command, so that the app keeps "compare" as a subcommand
    pass


def run(*args):
    return runner.invoke(app, ["compare", *[str(a) for a in args]])


def write_lot(folder: Path, name: str, scale: float, seed: int, points: int = 15) -> Path:
    """An invented power-law lot (K = 2 Pa s^n * scale, n = 0.6) with 3 % noise, as CSV."""
    rng = np.random.default_rng(seed)
    rate = np.logspace(-1, 3, points)
    eta = scale * 2.0 * rate ** (0.6 - 1.0) * np.exp(0.03 * rng.standard_normal(points))
    path = folder / f"{name}.csv"
    path.write_text("shear rate [1/s],viscosity [Pa s]\n" + "".join(f"{g:.6g},{e:.6g}\n" for g, e in zip(rate, eta)),
                    encoding="utf-8")
    return path


@pytest.fixture
def lots(tmp_path):
    return [write_lot(tmp_path, "lot_A", 1.0, 1), write_lot(tmp_path, "lot_B", 1.0, 2),
            write_lot(tmp_path, "lot_thick", 1.3, 3)]


TUBE = ("--diameter", "1 mm", "--length", "20 cm")
FAST = ("--model", "power_law")


def one_error_line(result) -> str:
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert lines and lines[0].startswith("error:")
    return " ".join(lines)


# --- normal use ------------------------------------------------------------------------------

def test_bundled_lots_table_verdicts_test_flags_and_caution():
    files = [SAMPLES / f"medium_lot_{x}.csv" for x in "ABC"]
    result = run(*files, "-d", "0.8 mm", "-l", "30 cm", "-q", "10 uL/min", "--model", "carreau",
                 "--tolerance", "10%")
    assert result.exit_code == 0, result.output
    out = result.output
    assert "Parameters of the carreau model" in out and "Against the reference lot" in out
    assert "Verdicts:" in out and "NO" in out
    assert "medium_lot_B: within tolerance" in out
    # lot C of the bundled sweeps was made more viscous on purpose (rheofit/sample_data/make_samples.py)
    assert "medium_lot_C: outside tolerance" in out
    assert "Same-curve test" in out and "p = " in out
    assert "Flags:" in out and "Caution" in out


def test_json_output_has_the_comparison(lots):
    result = run(*lots, *TUBE, "-q", "1.2 mL/min", *FAST, "--json")
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["kind"] == "rheofit-comparison" and data["lots"] == ["lot_A", "lot_B", "lot_thick"]
    assert data["tolerance"] == pytest.approx(0.1) and data["reference"] == 0
    assert data["operating_point"]["flow_rate"] == pytest.approx(1.2e-6 / 60)
    rows = data["table"]
    assert [r["within_tolerance"] for r in rows] == [True, True, False]
    assert rows[2]["deviation"] == pytest.approx(0.3, abs=0.05)
    assert data["p_value"] < 1e-6 and data["caution"] == SAFETY_CAUTION


@pytest.mark.parametrize("text", ["10%", "10 %", "0.1"])
def test_tolerance_spellings(lots, text):
    result = run(*lots[:2], *TUBE, "-q", "1.2 mL/min", *FAST, "--tolerance", text, "--json")
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["tolerance"] == pytest.approx(0.1)


def test_reference_by_number_and_by_name(lots):
    by_number = run(*lots, *TUBE, "-q", "1.2 mL/min", *FAST, "--reference", "3", "--json")
    assert json.loads(by_number.stdout)["reference_lot"] == "lot_thick"
    by_name = run(*lots, *TUBE, "-q", "1.2 mL/min", *FAST, "--reference", "lot_B", "--json")
    assert json.loads(by_name.stdout)["reference_lot"] == "lot_B"


def test_slit_with_a_pressure_drop_compares_flow_rates(lots):
    result = run(*lots[:2], "--gap", "200 um", "--width", "5 mm", "--length", "2 cm",
                 "--pressure-drop", "5 kPa", *FAST)
    assert result.exit_code == 0, result.output
    assert "flow rate" in result.output and "slit" in result.output


def test_out_is_written_atomically_and_not_overwritten_without_force(lots, tmp_path):
    out = tmp_path / "comparison.json"
    first = run(*lots[:2], *TUBE, "-q", "1.2 mL/min", *FAST, "--out", out)
    assert first.exit_code == 0, first.output
    assert out.exists()
    saved = out.read_text()
    assert json.loads(saved)["kind"] == "rheofit-comparison"
    second = run(*lots[:2], *TUBE, "-q", "1.2 mL/min", *FAST, "--out", out)
    assert "--force" in one_error_line(second)
    assert out.read_text() == saved
    third = run(*lots[:2], *TUBE, "-q", "2 mL/min", *FAST, "--out", out, "--force")
    assert third.exit_code == 0 and out.read_text() != saved
    table = tmp_path / "lots.csv"
    csv = run(*lots[:2], *TUBE, "-q", "1.2 mL/min", *FAST, "--out", table)
    assert csv.exit_code == 0
    header = table.read_text().splitlines()[0]
    assert header.startswith("lot,K,K_low,K_high") and "verdict" in header


def test_json_with_out_writes_the_file_only(lots, tmp_path):
    out = tmp_path / "c.json"
    result = run(*lots[:2], *TUBE, "-q", "1.2 mL/min", *FAST, "--json", "--out", out)
    assert result.exit_code == 0 and result.stdout == ""
    assert json.loads(out.read_text())["lots"] == ["lot_A", "lot_B"]


def test_input_files_are_not_modified(lots):
    before = [p.read_bytes() for p in lots]
    run(*lots, *TUBE, "-q", "1.2 mL/min", *FAST)
    assert [p.read_bytes() for p in lots] == before


# --- every error path --------------------------------------------------------------------------

@pytest.mark.parametrize("args, words", [
    (("--diameter", "1 mm", "-q", "1 mL/min"), "--length"),
    (("--diameter", "1 mm", "--gap", "1 mm", "--length", "2 cm", "-q", "1 mL/min"), "not a mix"),
    ((*TUBE, "-q", "1 mL/min", "-p", "1 kPa"), "exactly one"),
    ((*TUBE,), "exactly one"),
    ((*TUBE, "-q", "1 kPa"), "not a unit of flow rate"),
    ((*TUBE, "-q", "1 mL/min", "--tolerance", "ten"), "--tolerance 'ten'"),
    ((*TUBE, "-q", "1 mL/min", "--tolerance", "-5%"), "positive fraction"),
    ((*TUBE, "-q", "1 mL/min", "--reference", "4"), "number from 1 to 3"),
    ((*TUBE, "-q", "1 mL/min", "--reference", "lot_b"), "Did you mean 'lot_B'"),
    ((*TUBE, "-q", "1 mL/min", "--model", "powerlaw"), "Did you mean 'power_law'"),
])
def test_errors_are_one_sentence(lots, args, words):
    message = one_error_line(run(*lots, *args, *(() if "--model" in args else FAST)))
    assert words in message


def test_missing_file_is_named(lots):
    message = one_error_line(run(lots[0], "no_such_lot.csv", *TUBE, "-q", "1 mL/min", *FAST))
    assert "no_such_lot.csv" in message


def test_a_single_lot_is_refused(lots):
    message = one_error_line(run(lots[0], *TUBE, "-q", "1 mL/min", *FAST))
    assert "at least two lots" in message


def test_lots_without_a_shared_range(tmp_path):
    low = tmp_path / "low.csv"
    low.write_text("shear rate [1/s],viscosity [Pa s]\n" + "".join(f"{g},{1 / g}\n" for g in (0.1, 0.3, 1, 3, 10)))
    high = tmp_path / "high.csv"
    high.write_text("shear rate [1/s],viscosity [Pa s]\n" + "".join(f"{g},{1 / g}\n" for g in (100, 300, 1000, 3000)))
    message = one_error_line(run(low, high, *TUBE, "-q", "1 mL/min", *FAST))
    assert "share no shear-rate range" in message

