"""Error paths that no other test file triggered, and command-line cases that must end in
one sentence on stderr with exit code 2 and no traceback.

House rule: every ``raise`` has a test.  The raises covered here are
``rheofit/__init__.py`` (unknown attribute), ``cli.py`` (unreadable path turned
into one line), ``curve.py`` (arrays that do not fit together) and every raise
of ``saved.py`` (reading a saved fit back).  Each test matches a distinctive
part of the message and the file, value or curve number it names.

The defects the audit found (tracebacks for outputs under a regular file,
markup eating bracketed units, curve numbers counted from 0, ...) were fixed;
the tests at the end keep them fixed.
"""

from __future__ import annotations

import json
import types
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

import rheofit
from rheofit.cli import fit as fit_cli
from rheofit.cli import app
from rheofit.curve import FlowCurve
from rheofit.errors import GeometryError, InputFileError, ModelNameError, ParameterError
from rheofit.models import MODELS
from rheofit.fitting.saved import load_fit

runner = CliRunner()

#: invented data (synthetic, only for error paths): a nearly constant viscosity of 2 Pa*s
TINY = "Shear rate [1/s],Viscosity [Pa s]\n1,2.00\n10,2.02\n100,1.98\n1000,2.01\n"
CHANNEL = ("--diameter", "1 mm", "--length", "10 cm", "--flow-rate", "10 uL/min")


def write(folder: Path, name: str, text: str, encoding: str = "utf-8") -> Path:
    path = folder / name
    path.write_text(text, encoding=encoding)
    return path


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def error_sentence(result) -> str:
    """The command's error: exit code 2, no traceback, stderr ending in 'error: <one sentence>'."""
    assert result.exit_code == 2, result.output
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert "Traceback" not in result.output
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert lines and lines[-1].startswith("error: "), result.stderr
    sentence = lines[-1][len("error: "):]
    assert sentence.endswith("."), sentence
    assert sentence.replace("e.g. ", "eg ").count(". ") == 0, sentence  # one sentence
    return sentence


@pytest.fixture(scope="module")
def saved_fit(tmp_path_factory) -> Path:
    """A real saved fit (one curve, the Newtonian model) written by `rheofit fit --out`."""
    folder = tmp_path_factory.mktemp("saved")
    data = write(folder, "tiny.csv", TINY)
    out = folder / "tiny_fit.json"
    result = run("fit", data, "--model", "newtonian", "--out", out)
    assert result.exit_code == 0, result.output
    return out


def saved_document(folder: Path, curves: list, name: str = "fit.json") -> Path:
    """A saved-fit document as ``rheofit fit --out`` lays it out (kind, version, curves)."""
    return write(folder, name, json.dumps({"kind": "rheofit-fits", "version": 1, "curves": curves}))


# --- rheofit/__init__.py:48 -------------------------------------------------------------------

def test_unknown_top_level_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match=r"^module 'rheofit' has no attribute 'fit_everything'$"):
        rheofit.fit_everything  # noqa: B018
    assert not hasattr(rheofit, "fit_everything")
    assert rheofit.fit is not None  # a listed name still resolves lazily


# --- rheofit/cli/common.py: unreadable paths become one line ----------------------------------

@pytest.mark.parametrize("error, words", [
    (PermissionError(13, "Permission denied", "locked.csv"), "cannot use 'locked.csv': Permission denied."),
    (IsADirectoryError(21, "Is a directory", "sweeps"), "cannot use 'sweeps': Is a directory."),
])
def test_unreadable_path_ends_in_one_sentence(tmp_path, monkeypatch, error, words):
    def refuse(*args, **kwargs):
        raise error

    monkeypatch.setattr(fit_cli, "fit_files", refuse)
    assert error_sentence(run("fit", write(tmp_path, "s.csv", TINY))) == words


def test_out_that_is_a_folder_with_force_ends_in_one_sentence(tmp_path):
    folder = tmp_path / "results"
    folder.mkdir()
    sentence = error_sentence(run("fit", write(tmp_path, "s.csv", TINY), "--model", "newtonian",
                                  "--out", folder, "--force"))
    assert "directory" in sentence.lower() or "folder" in sentence.lower()
    assert folder.is_dir() and list(folder.iterdir()) == []
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")] == []  # no temporary file left


# --- rheofit/curve.py:71 and :78 ---------------------------------------------------------------

def test_arrays_of_different_lengths_are_refused():
    with pytest.raises(ParameterError, match="same length; got shear_rate 3, viscosity 2, stress 3"):
        FlowCurve(np.array([1.0, 10.0, 100.0]), np.array([2.0, 1.0]), np.array([2.0, 10.0, 100.0]))
    with pytest.raises(ValueError, match="must have the same length"):
        FlowCurve.from_arrays([1.0, 10.0, 100.0], viscosity=[2.0, 1.0, 0.5], stress=[2.0, 10.0])


def test_from_arrays_needs_viscosity_or_stress():
    with pytest.raises(ParameterError, match="needs the viscosity or the stress"):
        FlowCurve.from_arrays([1.0, 10.0, 100.0])


# --- rheofit/saved.py (every raise) ------------------------------------------------------------

def test_a_saved_fit_reads_back(saved_fit):
    # the positive control for the errors below: the same layout, read without complaint
    assert load_fit(saved_fit).model == "newtonian"
    assert load_fit(saved_fit, model="newtonian", curve=1).model == "newtonian"
    assert load_fit(saved_fit, curve="tiny").model == "newtonian"


def test_missing_saved_fit_is_named(tmp_path):  # saved.py: _document
    with pytest.raises(InputFileError, match=r"^Saved fit '.*missing\.json' does not exist; check the path"):
        load_fit(tmp_path / "missing.json")


@pytest.mark.parametrize("name, content, said", [
    ("truncated.json", b'{"kind": "rheofit-fits", "curves": [', "is broken JSON at line 1, column 37"),
    ("latin1.json", '{"kind": "rheofit-fits", "note": "25 \u00b0C"}'.encode("latin-1"), "is not UTF-8"),
])
def test_unreadable_saved_fit_names_the_file(tmp_path, name, content, said):  # saved.py: _document
    (tmp_path / name).write_bytes(content)
    with pytest.raises(InputFileError, match=said) as info:
        load_fit(tmp_path / name)
    assert f"{name}'" in str(info.value)


@pytest.mark.parametrize("content", ['{"kind": "notes", "curves": []}', "[1, 2, 3]", '"rheofit-fits"'])
def test_json_that_is_not_a_saved_fit(tmp_path, content):  # saved.py:55
    path = write(tmp_path, "other.json", content)
    with pytest.raises(InputFileError, match="is not a saved rheofit fit") as info:
        load_fit(path)
    message = str(info.value)
    assert message.startswith(f"'{path}'") and "`rheofit fit DATA.csv --out other.json`" in message


@pytest.mark.parametrize("curve", [0, 2, -1, "B"])
def test_curve_beyond_the_saved_ones(tmp_path, curve):  # saved.py: _pick_curve (numbers from 1, or names)
    path = saved_document(tmp_path, [{"name": "A", "fits": [{"model": "power_law"}]}])
    with pytest.raises(InputFileError, match=rf"fit\.json' holds no curve '{curve}'; its curves are 1: A\.$"):
        load_fit(path, curve=curve)


def test_several_saved_curves_need_a_choice(tmp_path):
    path = saved_document(tmp_path, [{"name": "A", "fits": []}, {"name": "B", "fits": []}])
    with pytest.raises(InputFileError, match=r"holds 2 curves \(1: A, 2: B\); pick one with curve=N\.$"):
        load_fit(path)  # from Python the keyword is named; from the command line the option (below)
    sentence = error_sentence(run("flow", path, *CHANNEL))
    assert sentence.endswith("holds 2 curves (1: A, 2: B); pick one with --curve N.")


def test_saved_curve_without_fits(tmp_path):  # saved.py: load_fit
    path = saved_document(tmp_path, [{"name": "A", "fits": []}])
    with pytest.raises(InputFileError, match=r"fit\.json' holds no fitted model for A; fit it again"):
        load_fit(path)


def test_saved_curve_without_a_fits_entry(tmp_path):
    path = saved_document(tmp_path, [{"name": "A"}])
    with pytest.raises(InputFileError, match="holds no fitted model for A"):
        load_fit(path)


def test_model_that_was_not_saved(tmp_path):  # saved.py:69
    path = saved_document(tmp_path, [{"name": "A", "fits": [{"model": "power_law"}, {"model": "bingham"}]}])
    with pytest.raises(ModelNameError, match="'carreau'") as info:
        load_fit(path, model="carreau")
    message = str(info.value)
    assert "fit.json" in message and "power_law, bingham" in message


def test_saved_fit_errors_on_the_command_line(saved_fit):
    too_far = error_sentence(run("flow", saved_fit, "--curve", "3", *CHANNEL))
    assert f"'{saved_fit}' holds no curve '3'" in too_far and "1: tiny" in too_far
    unsaved = run("flow", saved_fit, "--model", "carreau", *CHANNEL)
    assert unsaved.exit_code == 2 and "Traceback" not in unsaved.output
    last = unsaved.stderr.strip().splitlines()[-1]
    assert last.startswith("error: ") and "'carreau'" in last and "newtonian" in last and saved_fit.name in last


# --- command-line cases that must end in one sentence (exit code 2) ------------------------------

def test_flow_on_an_empty_file(tmp_path):
    empty = write(tmp_path, "empty.csv", "")
    sentence = error_sentence(run("flow", empty, *CHANNEL))
    assert sentence == f"File '{empty}' is empty; export the sweep again or pick another file."


def test_fit_on_utf16_file_with_a_bad_number(tmp_path):
    text = "Shear rate [1/s],Viscosity [Pa s]\n1,2\n10,1.5\n100,abc\n1000,0.5\n"
    path = write(tmp_path, "wide.csv", text, encoding="utf-16")
    sentence = error_sentence(run("fit", path))
    assert sentence.startswith(f"File '{path}', line 4, column 'Viscosity [Pa s]': 'abc' is not a number")


def test_fit_with_a_unit_of_the_wrong_kind(tmp_path):
    path = write(tmp_path, "s.csv", TINY)
    sentence = error_sentence(run("fit", path, "--unit", "viscosity=Pa"))
    assert sentence.startswith(f"File '{path}', --unit viscosity=Pa: unit 'Pa' is not a unit of viscosity")
    assert "--unit viscosity=UNIT" in sentence and "viscosity_unit" not in sentence


def test_report_on_a_saved_fit(saved_fit, tmp_path):
    out = tmp_path / "r.html"
    sentence = error_sentence(run("report", saved_fit, "--out", out))
    assert sentence.startswith(f"'{saved_fit}' is a saved fit") and "measured sweep" in sentence
    assert not out.exists()


# --- defects found by the audit, fixed: these keep them fixed --------------------------------------
def test_demo_out_pointing_at_a_regular_file(tmp_path, monkeypatch):
    from rheofit.jobs import demo

    monkeypatch.setattr(demo, "analyse_demo", lambda steps=None: types.SimpleNamespace(samples=()))
    target = write(tmp_path, "not_a_folder", "keep me\n")
    sentence = error_sentence(run("demo", "--out", target))
    assert "not_a_folder" in sentence
    assert target.read_text() == "keep me\n"
def test_fit_out_below_a_regular_file(tmp_path):
    blocker = write(tmp_path, "results", "a file\n")
    sentence = error_sentence(run("fit", write(tmp_path, "s.csv", TINY), "--model", "newtonian",
                                  "--out", blocker / "fit.json"))
    assert "results" in sentence
def test_out_folder_error_names_the_out_path(tmp_path):
    folder = tmp_path / "results"
    folder.mkdir()
    sentence = error_sentence(run("fit", write(tmp_path, "s.csv", TINY), "--model", "newtonian",
                                  "--out", folder, "--force"))
    assert f"'{folder}'" in sentence and ".tmp" not in sentence and "cannot read" not in sentence
def test_bracketed_unit_survives_on_stderr(tmp_path):
    path = write(tmp_path, "m.csv", "Shear rate [1/s],Viscosity [mPa s]\n1,20\n10,abc\n100,4\n")
    assert "column 'Viscosity [mPa s]'" in error_sentence(run("fit", path))
def test_compare_with_one_file_and_no_channel(tmp_path):
    sentence = error_sentence(run("compare", write(tmp_path, "only.csv", TINY), "--model", "power_law"))
    assert "at least two lots" in sentence
def test_saved_fit_curve_number_is_the_one_given(saved_fit):
    assert "no curve '3'" in error_sentence(run("flow", saved_fit, "--curve", "3", *CHANNEL))
def test_saved_fit_curve_label_is_not_ignored(saved_fit):
    assert "no curve '25 °C'" in error_sentence(run("flow", saved_fit, "--curve", "25 °C", *CHANNEL))
def test_choice_message_plural_reads_right():
    with pytest.raises(ParameterError) as info:
        MODELS["cross"].parameter("n")
    assert "crosss" not in str(info.value)
def test_bad_operating_value_is_shown_as_a_number():
    from rheofit.flow import Tube, predict

    with pytest.raises(GeometryError) as info:
        predict(rheofit.fluid("newtonian", mu=1e-3), Tube(1e-3, 0.1), flow_rate=-1e-9)
    assert "flow rate = -1e-09 is" in str(info.value)
def test_from_arrays_with_one_short_array():
    with pytest.raises(ValueError, match="same length"):
        FlowCurve.from_arrays([1.0, 10.0, 100.0], viscosity=[2.0, 1.0])
def test_non_numeric_parameter_is_a_parameter_error():
    with pytest.raises(ParameterError, match="K"):
        rheofit.fluid("power_law", K="thick", n=0.5)
