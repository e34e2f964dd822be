"""The demo: the whole job on the bundled sample data, end to end, in-process."""

from __future__ import annotations

import json

import pytest
from typer.testing import CliRunner

import rheofit.jobs.demo as demo
from rheofit.cli import app
from rheofit.errors import OutputExistsError


runner = CliRunner()


@pytest.fixture(scope="module")
def first_run(tmp_path_factory):
    """`rheofit demo --out DIR` once (the slow part, shared by the tests below)."""
    out = tmp_path_factory.mktemp("demo")
    kept = {}
    original = demo.analyse_demo

    def keep(steps=None):
        kept["analysis"] = original(steps)
        return kept["analysis"]

    patch = pytest.MonkeyPatch()
    patch.setattr(demo, "analyse_demo", keep)
    try:
        result = runner.invoke(app, ["demo", "--out", str(out)])
    finally:
        patch.undo()
    return out, result, kept["analysis"]


def test_the_demo_writes_the_report_and_the_fits(first_run):
    out, result, _ = first_run
    assert result.exit_code == 0, result.output
    report = (out / "report.html").read_text(encoding="utf-8")
    assert report.startswith("<!DOCTYPE html>") and "INVENTED" in report
    document = json.loads((out / "fits.json").read_text(encoding="utf-8"))
    assert document["kind"] == "rheofit-fits"
    assert [c["name"] for c in document["curves"]] == [*demo.LOTS, demo.CARRIER]
    assert "INVENTED" in result.stdout and str(out / "report.html") in result.stdout


def test_the_demo_covers_the_scenario(first_run):
    _, _, analysis = first_run
    samples = {s.name: s for s in analysis.samples}
    assert set(samples) == {*demo.LOTS, demo.CARRIER}
    carrier = samples[demo.CARRIER]
    assert carrier.chosen.fluid.yield_stress > 0
    at_rest = [c for c in carrier.cases if not c.prediction.flowing]
    assert len(at_rest) == 1 and at_rest[0].prediction.threshold_pressure_drop > at_rest[0].case.pressure_drop
    priming = [c for c in samples["medium_lot_A"].cases if "priming" in c.case.label]
    assert priming and priming[0].prediction.flags  # beyond the measured shear rates
    assert any(f.code == "extrapolation" for f in priming[0].prediction.flags)
    comparison = analysis.comparison
    assert comparison is not None and list(comparison.lots) == list(demo.LOTS)
    # lot C was mixed with too little water (rheofit/sample_data/README.md): it must stand out
    assert comparison.table["within_tolerance"].tolist() == [True, True, False]


def test_a_second_run_refuses_in_one_sentence_and_force_overwrites(first_run, monkeypatch):
    out, _, analysis = first_run
    before = (out / "report.html").stat().st_mtime_ns
    again = runner.invoke(app, ["demo", "--out", str(out)])
    assert again.exit_code == 2
    message = again.stderr.strip()
    assert len(message.splitlines()) == 1 and message.count(". ") == 0 and message.endswith(".")
    assert "already holds report.html" in message and "--force" in message
    assert (out / "report.html").stat().st_mtime_ns == before
    # the analysis is the slow part and was checked above; --force must rewrite the files
    monkeypatch.setattr(demo, "analyse_demo", lambda steps=None: analysis)
    forced = runner.invoke(app, ["demo", "--out", str(out), "--force"])
    assert forced.exit_code == 0, forced.output
    assert (out / "report.html").stat().st_mtime_ns > before


def test_run_demo_refuses_before_any_work(tmp_path, monkeypatch):
    (tmp_path / "fits.json").write_text("{}", encoding="utf-8")

    def boom(steps=None):
        raise AssertionError("the demo started working on a folder it should refuse")

    monkeypatch.setattr(demo, "analyse_demo", boom)
    with pytest.raises(OutputExistsError, match="already holds fits.json"):
        demo.run_demo(tmp_path)


def test_without_out_the_demo_writes_a_fresh_folder_under_the_temporary_directory(
        first_run, tmp_path, monkeypatch):
    import tempfile

    _, _, analysis = first_run
    here, temporary = tmp_path / "cwd", tmp_path / "tmp"
    here.mkdir()
    temporary.mkdir()
    monkeypatch.chdir(here)
    monkeypatch.setattr(tempfile, "tempdir", str(temporary))  # what gettempdir() answers
    monkeypatch.setattr(demo, "analyse_demo", lambda steps=None: analysis)
    result = runner.invoke(app, ["demo"])
    assert result.exit_code == 0, result.output
    assert list(here.iterdir()) == []  # nothing in the current folder
    made, = temporary.iterdir()
    assert made.name.startswith("rheofit-demo-") and (made / "report.html").is_file()
    assert f"Writtento{made}" in "".join(result.stdout.split())  # says where (a long path may wrap)


def test_demo_out_under_a_missing_folder_is_refused(tmp_path):
    message = runner.invoke(app, ["demo", "--out", str(tmp_path / "no" / "demo")]).stderr.strip()
    assert message == (f"error: Cannot write into '{tmp_path / 'no' / 'demo'}': the folder "
                       f"'{tmp_path / 'no'}' does not exist; create it first or choose another path.")
