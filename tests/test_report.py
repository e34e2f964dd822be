"""The HTML report: self-contained, complete, escaped; written safely; the report command."""

from __future__ import annotations

import html
import json
import re
from dataclasses import replace
from html.parser import HTMLParser
from importlib.resources import files

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.curve import FlowCurve
from rheofit.errors import FitError, GeometryError, OutputExistsError
from rheofit.flow import SAFETY_CAUTION, Tube
from rheofit.ingest import read_flow_curve
from rheofit.jobs.analysis import OperatingCase, analyse, compare_samples, fit_curve
from rheofit.models import MODELS
from rheofit.report.display import number
from rheofit.report.figureset import figure_plan
from rheofit.report.html import build_report, report_files, write_report


SAMPLES = files("rheofit.sample_data")
EVIL = '<script>alert("x")</script> & lot'
TUBE_CASE = OperatingCase("tube, 50 µL/min", Tube("0.8 mm", "30 cm"), flow_rate=50e-9 / 60)


class Page(HTMLParser):
    """Every start tag with its attributes, and the text."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    handle_startendtag = handle_starttag

    def handle_data(self, data):
        self.text.append(data)


def parse(document: str) -> Page:
    page = Page()
    page.feed(document)
    page.close()
    return page


@pytest.fixture(scope="module")
def analysis():
    lot_a = read_flow_curve(SAMPLES / "medium_lot_A.csv")
    lot_c = read_flow_curve(SAMPLES / "medium_lot_C.csv")
    evil = replace(lot_c, name=EVIL, source=f"C:/data/{EVIL}.csv")
    return analyse([lot_a, evil], cases=[TUBE_CASE])


@pytest.fixture(scope="module")
def report(analysis):
    return build_report(analysis)


# --- self-contained ---------------------------------------------------------------------

def test_the_report_refers_to_nothing_outside_itself(report):
    page = parse(report)
    names = {tag for tag, _ in page.tags}
    assert not names & {"script", "link", "iframe", "object", "embed", "img", "base"}
    for tag, attrs in page.tags:
        for key, value in attrs.items():
            if key in ("src", "href", "xlink:href", "action", "poster", "srcset"):
                assert value.startswith("#") or value.startswith("data:"), (tag, key, value)
    # CSS: no imports, no fetched fonts or images; url() only to ids inside the page
    assert "@import" not in report and "@font-face" not in report
    urls = re.findall(r"url\(\s*['\"]?([^'\")]*)", report)
    assert urls and all(u.startswith("#") for u in urls)


def test_every_figure_is_embedded_as_inline_svg(analysis, report):
    page = parse(report)
    plan = figure_plan(analysis)
    figures = [attrs.get("id") for tag, attrs in page.tags if tag == "figure"]
    assert figures == [p.key for p in plan]
    assert sum(1 for tag, _ in page.tags if tag == "svg") == len(plan)
    # 2 samples x (flow curve, residuals, profile, operating curve) + the lot overlay
    assert len(plan) == 9
    ids = [attrs["id"] for _, attrs in page.tags if "id" in attrs]
    assert len(ids) == len(set(ids))  # figures sharing one page do not clash


def test_user_strings_are_escaped(report):
    assert "<script" not in report.lower()
    assert html.escape(EVIL) in report
    text = "".join(parse(report).text)
    assert EVIL in text  # shown literally to the reader


# --- content ----------------------------------------------------------------------------------

def test_the_fit_table_has_the_ranking_and_the_interval_columns(analysis, report):
    text = "".join(parse(report).text)
    for header in ("AICc", "ΔAICc", "weight", "BIC", "rms(ln)", "95 % low", "95 % high", "std. error",
                   "interval method"):
        assert header in text
    for sample in analysis.samples:
        for fit in sample.ranking:
            assert fit.declaration.title in text
        for est in sample.chosen.params.values():
            low, high = est.ci95
            assert (number(low) if low is not None else "open") in text
            assert (number(high) if high is not None else "open") in text



def test_the_chosen_fit_s_correlations_are_listed(analysis, report):
    # the pairs and values of FitResult.correlations (checked against the straight-line
    # closed form in test_fitting); here: each one is in the report, largest first
    text = "".join(parse(report).text)
    assert "correlation r" in text
    for sample in analysis.samples:
        pairs = sample.chosen.correlations()
        assert pairs  # the four-parameter fits of lots A and C have correlated estimates
        cells = [f"{a} and {b}{r:+.3f}" for a, b, r in pairs]
        places = [text.index(cell) for cell in cells]
        assert places == sorted(places)

def test_flags_appear_in_plain_words(analysis, report):
    messages = [f.message for s in analysis.samples for f in s.chosen.flags]
    messages += [f.message for s in analysis.samples for c in s.cases for f in c.prediction.flags]
    assert messages  # lot C's eta_inf is not resolved; the density is a default
    for message in messages:
        assert html.escape(message) in report


def test_the_flow_prediction_and_the_newtonian_comparison_are_there(analysis, report):
    text = "".join(parse(report).text)
    p = analysis.samples[0].cases[0].prediction
    assert "Newtonian comparison" in text and "pressure drop" in text
    assert f"{number(p.newtonian_ratio, 3)}× that" in text
    assert p.pressure_drop_ci95 is not None
    assert "95 % interval" in text


def test_the_lot_comparison_is_there(analysis, report):
    comparison = analysis.comparison
    assert comparison is not None
    text = "".join(parse(report).text)
    assert "Lot comparison" in text and "p-value" in text
    for verdict in comparison.table["verdict"]:
        assert verdict in text
    assert 'id="lot-comparison"' in report


def test_the_method_and_the_caution_are_there(report):
    text = "".join(parse(report).text)
    for words in ("log space", "profile likelihood", "AICc", "Rabinowitsch", "Laminar criterion"):
        assert words in text
    assert SAFETY_CAUTION in text


@pytest.fixture(scope="module")
def single():
    """One sample, no geometry: fits only."""
    return analyse([read_flow_curve(SAMPLES / "microgel_carrier.csv")])


def test_a_report_without_geometry_has_fits_but_no_flow_section(single):
    document = build_report(single)
    ids = {attrs.get("id") for _, attrs in parse(document).tags}
    assert "sample-0" in ids and "sample-0-case-0" not in ids and "comparison" not in ids
    assert "Models ranked by AICc" in document
    assert sum(1 for tag, _ in parse(document).tags if tag == "svg") == 2



def test_the_report_lists_the_models_not_fitted_and_why():
    # Invented data: four points of a power-law fluid.  A least-squares fit of k parameters
    # needs N >= k + 1 points (one degree of freedom for the error variance; common practice,
    # no source), so every model with four or more parameters is left out, with the reason.
    rate = [1.0, 10.0, 100.0, 1000.0]
    curve = FlowCurve.from_arrays(rate, stress=[2.0 * r**0.5 for r in rate], name="short")
    analysis = analyse([curve])
    too_many = {m.name for m in MODELS.values() if len(m.parameters) + 1 > len(rate)}
    skipped = dict(analysis.samples[0].ranking.skipped)
    assert too_many and too_many <= set(skipped)
    text = "".join(parse(build_report(analysis)).text)
    assert "Not fitted:" in text
    for name, why in skipped.items():
        assert f"{name}: {why}" in text

# --- analysis errors ----------------------------------------------------------------------------

def test_an_operating_case_needs_exactly_one_condition():
    with pytest.raises(GeometryError, match="exactly one of flow_rate"):
        OperatingCase("both", Tube("1 mm", "1 m"), flow_rate=1e-9, pressure_drop=100.0)
    with pytest.raises(GeometryError, match="exactly one of flow_rate"):
        OperatingCase("neither", Tube("1 mm", "1 m"))


def test_a_named_model_that_cannot_be_fitted_is_an_error():
    rate = [1.0, 10.0, 100.0, 1000.0]
    curve = FlowCurve.from_arrays(rate, stress=[2.0 * r**0.5 for r in rate], name="short")
    with pytest.raises(FitError, match="carreau_yasuda model could not be used for curve 'short'"):
        fit_curve(curve, "carreau_yasuda")


def test_one_sample_is_not_compared(analysis):
    assert compare_samples(analysis.samples[:1], TUBE_CASE) == (None, "")


# --- writing ------------------------------------------------------------------------------------

def test_write_report_refuses_to_overwrite_and_writes_figures(tmp_path, single):
    analysis = single
    out = tmp_path / "report.html"
    figures = tmp_path / "figures"
    write_report(out, analysis, figures_dir=figures)
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    expected = sorted(p.name for p in report_files(out, analysis, figures)[1:])
    assert sorted(p.name for p in figures.iterdir()) == expected
    assert len(expected) == 2 * len(figure_plan(analysis))
    with pytest.raises(OutputExistsError, match="report.html' already exists"):
        write_report(out, analysis)
    out.unlink()
    with pytest.raises(OutputExistsError, match=r"\.(png|svg)' already exists"):
        write_report(out, analysis, figures_dir=figures)
    assert not out.exists()  # refused before any work
    write_report(out, analysis, figures_dir=figures, force=True)


# --- the command ----------------------------------------------------------------------------------

runner = CliRunner()


def _run(*args):
    return runner.invoke(app, ["report", *map(str, args)])


def test_report_command_writes_one_self_contained_file(tmp_path):
    out = tmp_path / "r.html"
    result = _run(SAMPLES / "medium_lot_A.csv", SAMPLES / "medium_lot_B.csv", "--diameter", "0.8 mm",
                  "--length", "30 cm", "--flow-rate", "50 uL/min", "--model", "carreau", "--out", out)
    assert result.exit_code == 0, result.output
    assert "Report written to" in result.stdout
    document = out.read_text(encoding="utf-8")
    assert "Lot comparison" in document and "Flow: tube, 50 µL/min" in document
    again = _run(SAMPLES / "medium_lot_A.csv", "--out", out)
    assert again.exit_code == 2
    assert "already exists" in again.stderr and "--force" in again.stderr
    assert len(again.stderr.strip().splitlines()) == 1


def test_report_command_refuses_a_saved_fit(tmp_path):
    saved = tmp_path / "fit.json"
    saved.write_text(json.dumps({"kind": "rheofit-fits", "version": 1, "curves": []}), encoding="utf-8")
    result = _run(saved, "--out", tmp_path / "r.html")
    assert result.exit_code == 2
    assert "is a saved fit" in result.stderr and "measured sweep" in result.stderr


def test_report_command_needs_a_whole_geometry(tmp_path):
    result = _run(SAMPLES / "medium_lot_A.csv", "--diameter", "0.8 mm", "--flow-rate", "50 uL/min",
                  "--out", tmp_path / "r.html")
    assert result.exit_code == 2 and "--length" in result.stderr
    assert not (tmp_path / "r.html").exists()
