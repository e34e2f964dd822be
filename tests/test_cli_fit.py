"""The `rheofit fit` and `rheofit models` commands, in-process."""

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.models import MODELS

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_models_lists_every_model_with_source():
    result = run("models")
    assert result.exit_code == 0
    for m in MODELS.values():
        assert m.name in result.output
    assert "Herschel" in result.output and "1926" in result.output


def test_fit_ranks_and_reports_the_sample():
    result = run("fit", SAMPLES / "medium_lot_A.csv")
    assert result.exit_code == 0, result.output
    assert "Ranking" in result.output and "95 % interval" in result.output
    # the bundled lot A was generated from a Carreau curve (rheofit/sample_data/make_samples.py)
    assert "carreau" in result.output.split("Ranking")[1].splitlines()[4]


def test_fit_json_has_the_documented_fields():
    result = run("fit", SAMPLES / "medium_lot_A.csv", "--model", "power_law", "--json")
    assert result.exit_code == 0
    document = json.loads(result.output)
    entry = document["curves"][0]["fits"][0]
    assert entry["model"] == "power_law"
    assert set(entry["params"]) == {"K", "n"}
    for est in entry["params"].values():
        assert {"value", "stderr", "ci95"} <= set(est)
    assert {"aicc", "bic", "flags"} <= set(entry)


def test_water_in_millipascal_seconds_fits_to_the_reference(tmp_path):
    # Source: IAPWS (2008) formulation for the viscosity of ordinary water substance
    # (Huber et al. 2009, J. Phys. Chem. Ref. Data 38, 101): 1.0016 mPa s at 20 °C, 0.1 MPa
    rates = [1, 3, 10, 30, 100, 300, 1000]
    path = tmp_path / "water_20C.csv"
    path.write_text("Shear rate [s-1];Viscosity [mPas]\n" + "".join(f"{g};1,0016\n" for g in rates),
                    encoding="utf-8")
    result = run("fit", path, "--model", "newtonian", "--json")
    assert result.exit_code == 0, result.output
    mu = json.loads(result.output)["curves"][0]["fits"][0]["params"]["mu"]["value"]
    assert mu == pytest.approx(1.0016e-3, rel=1e-6)


def test_several_files_end_with_a_summary():
    result = run("fit", SAMPLES / "medium_lot_A.csv", SAMPLES / "microgel_carrier.csv")
    assert result.exit_code == 0
    assert "Summary" in result.output and "microgel_carrier" in result.output


def test_out_is_saved_and_not_overwritten_without_force(tmp_path):
    out = tmp_path / "fit.json"
    first = run("fit", SAMPLES / "medium_lot_A.csv", "--model", "carreau", "--out", out)
    assert first.exit_code == 0 and out.exists()
    saved = out.read_text()
    second = run("fit", SAMPLES / "medium_lot_A.csv", "--model", "cross", "--out", out)
    assert second.exit_code == 2 and "--force" in second.output
    assert out.read_text() == saved
    third = run("fit", SAMPLES / "medium_lot_A.csv", "--model", "cross", "--out", out, "--force")
    assert third.exit_code == 0
    assert json.loads(out.read_text())["curves"][0]["best"] == "cross"


def test_misspelt_model_suggests_the_nearest():
    result = run("fit", SAMPLES / "medium_lot_A.csv", "--model", "herschel_bulky")
    assert result.exit_code == 2
    assert "Did you mean 'herschel_bulkley'" in result.output
    assert "Traceback" not in result.output


def test_missing_file_is_named():
    result = run("fit", "no_such_sweep.csv")
    assert result.exit_code == 2
    assert "no_such_sweep.csv" in result.output and "Traceback" not in result.output


def test_input_file_is_not_modified(tmp_path):
    source = SAMPLES / "microgel_carrier.csv"
    before = source.read_bytes()
    run("fit", source, "--model", "bingham")
    assert source.read_bytes() == before


def test_unit_override_on_the_command_line(tmp_path):
    # Source: BIPM SI Brochure, 9th ed. (2019), Table 8: 1 cP = 1 mPa s
    path = tmp_path / "no_units.csv"
    path.write_text("shear rate,viscosity\n1,1.0016\n10,1.0016\n100,1.0016\n1000,1.0016\n")
    result = run("fit", path, "--model", "newtonian", "--unit", "viscosity=cP", "--json")
    assert result.exit_code == 0, result.output
    mu = json.loads(result.output)["curves"][0]["fits"][0]["params"]["mu"]["value"]
    assert mu == pytest.approx(1.0016e-3, rel=1e-9)


def test_column_override_on_the_command_line(tmp_path):
    path = tmp_path / "odd_names.csv"
    path.write_text("x,y\n1,2\n10,2\n100,2\n1000,2\n")
    result = run("fit", path, "--model", "newtonian", "--column", "shear_rate=x",
                 "--column", "viscosity=y", "--json")
    assert result.exit_code == 0, result.output


@pytest.mark.parametrize("option,message", [(["--unit", "viscosity"], "ROLE=VALUE"),
                                            (["--unit", "viscositty=cP"], "Did you mean 'viscosity'")])
def test_bad_override_is_one_sentence(option, message):
    result = run("fit", SAMPLES / "medium_lot_A.csv", *option)
    assert result.exit_code == 2 and message in result.output


def test_unknown_unit_in_a_header_is_named(tmp_path):
    path = tmp_path / "odd_unit.csv"
    path.write_text("Shear rate (1/s),Viscosity (furlong)\n1,2\n2,3\n3,4\n")
    result = run("fit", path)
    assert result.exit_code == 2
    assert "'furlong'" in result.output and "--unit viscosity=" in result.output


# --- several files at once -----------------------------------------------------------------

def test_files_fitted_in_parallel_give_the_same_document_in_the_same_order(tmp_path):
    files = [SAMPLES / f"{stem}.csv" for stem in ("medium_lot_C", "microgel_carrier", "medium_lot_A")]
    serial = run("fit", *files, "--model", "power_law", "--json", "--jobs", "1")
    parallel = run("fit", *files, "--model", "power_law", "--json", "--jobs", "2")
    assert serial.exit_code == 0 and parallel.exit_code == 0, parallel.output
    assert json.loads(parallel.output) == json.loads(serial.output)
    names = [c["name"] for c in json.loads(parallel.output)["curves"]]
    assert names == ["medium_lot_C", "microgel_carrier", "medium_lot_A"]


def test_the_first_bad_file_is_named_when_fitting_in_parallel(tmp_path):
    bad_1, bad_2 = tmp_path / "bad_1.csv", tmp_path / "bad_2.csv"
    bad_1.write_text("Shear rate [1/s],Viscosity [Pa s]\n", encoding="utf-8")
    bad_2.write_text("no numbers here\n", encoding="utf-8")
    files = [SAMPLES / "medium_lot_A.csv", bad_1, SAMPLES / "medium_lot_B.csv", bad_2]
    serial = run("fit", *files, "--model", "power_law", "--jobs", "1")
    parallel = run("fit", *files, "--model", "power_law", "--jobs", "2")
    assert parallel.exit_code == serial.exit_code == 2
    assert "bad_1.csv" in parallel.output and "bad_2.csv" not in parallel.output
    assert parallel.output == serial.output and "Traceback" not in parallel.output
