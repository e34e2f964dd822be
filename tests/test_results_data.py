"""Results are data: what the figures draw is in the analysis JSON, the report draws without
computing, results show as escaped HTML in notebooks and as pandas frames."""

from __future__ import annotations

import ast
import json
import math
import shutil
from html.parser import HTMLParser
from importlib.resources import as_file, files
from pathlib import Path

import numpy as np
import pytest

from rheofit.fitting import fit_all
from rheofit.flow import Tube, predict
from rheofit.flow.curves import operating_curve
from rheofit.fluid import fluid
from rheofit.ingest import read_flow_curve
from rheofit.jobs.analysis import OperatingCase, analyse
from rheofit.report import display
from rheofit.report.figureset import figure_plan

TUBE = Tube("0.8 mm", "30 cm")
UL_PER_MIN = 1e-9 / 60.0
PERFUSION = OperatingCase("tube, 50 µL/min", TUBE, flow_rate=50 * UL_PER_MIN)
PRIMING = OperatingCase("tube, priming 5 mL/min", TUBE, flow_rate=5000 * UL_PER_MIN)
HOSTILE = "<script>alert(1)<script> & lot"
REPORT = Path(__file__).resolve().parent.parent / "rheofit" / "report"


def _sample(stem):
    return files("rheofit.sample_data") / f"{stem}.csv"


@pytest.fixture(scope="module")
def analysis():
    return analyse([read_flow_curve(_sample("medium_lot_A"))], cases=[PERFUSION, PRIMING])


@pytest.fixture(scope="module")
def document(analysis):
    # strict JSON: no NaN or Infinity may reach the file
    return json.loads(json.dumps(analysis.to_dict(), allow_nan=False))


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    """A sweep read from a file whose name (and so the sample's name) is markup."""
    folder = tmp_path_factory.mktemp("hostile")
    with as_file(_sample("medium_lot_C")) as source:
        path = folder / f"{HOSTILE}.csv"
        shutil.copyfile(source, path)
    curve = read_flow_curve(path)
    assert curve.name == HOSTILE
    return curve


def _figure(analysis, suffix):
    (planned,) = [p for p in figure_plan(analysis) if p.key.endswith(suffix)]
    return planned.make().axes[0]


def _array(values):
    return np.array([math.nan if v is None else v for v in values], dtype=float)


def _vertices_hold(collection, x, y):
    """True when every finite point (x_i, y_i) is a vertex of the filled band."""
    vertices = np.concatenate([path.vertices for path in collection.get_paths()])
    keep = np.isfinite(x) & np.isfinite(y)
    points = np.column_stack([x[keep], y[keep]])
    close = np.isclose(points[:, None, :], vertices[None, :, :], rtol=1e-12, atol=0.0).all(axis=2)
    return bool(close.any(axis=1).all())


# --- the JSON holds what the figures draw ----------------------------------------------------

def test_the_analysis_json_holds_the_viscosity_band_the_flow_curve_draws(analysis, document):
    band = document["samples"][0]["viscosity_band"]
    rate, eta = _array(band["shear_rate"]), _array(band["viscosity"])
    axes = _figure(analysis, "-flow-curve")
    lines = [line for line in axes.lines if "chosen" in str(line.get_label())]
    assert len(lines) == 2  # over the data, and extrapolated to the priming case
    drawn_x = np.unique(np.concatenate([line.get_xdata() for line in lines]))
    drawn_y = np.concatenate([line.get_ydata() for line in lines])
    np.testing.assert_array_equal(drawn_x, rate)
    assert set(drawn_y.tolist()) == set(eta.tolist())
    (fill,) = [c for c in axes.collections if "confidence band" in str(c.get_label())]
    assert _vertices_hold(fill, rate, _array(band["low"])) and _vertices_hold(fill, rate, _array(band["high"]))
    assert band["model"] == document["samples"][0]["chosen"] and band["samples"] >= 40
    low, high = band["measured_range"]
    assert rate[0] == low and high in rate and rate[-1] > high  # widened to reach the priming case


def test_the_analysis_json_holds_the_operating_curve_the_figure_draws(analysis, document):
    case = document["samples"][0]["cases"][0]
    curve = case["operating_curve"]
    q, dp = _array(curve["flow_rate"]), _array(curve["pressure_drop"])
    axes = _figure(analysis, "-tube-50-l-min-operating-curve")
    q_factor, _ = display.display_scale("flow_rate", q)
    p_factor, _ = display.display_scale("pressure", [np.nanmax(dp), case["prediction"]["pressure_drop"]])
    (model,) = [line for line in axes.lines if str(line.get_label()).endswith(" model")]
    np.testing.assert_allclose(model.get_xdata(), q * q_factor, rtol=1e-15)
    np.testing.assert_allclose(model.get_ydata(), dp * p_factor, rtol=1e-15)
    newtonian = [line for line in axes.lines if str(line.get_label()).startswith("Newtonian")]
    assert len(newtonian) == len(curve["newtonian"]) == 2
    for line, data in zip(newtonian, curve["newtonian"]):
        np.testing.assert_allclose(line.get_ydata(), _array(data["pressure_drop"]) * p_factor, rtol=1e-15)
    (fill,) = [c for c in axes.collections if "95 % band" in str(c.get_label())]
    low, high = _array(curve["low"]) * p_factor, _array(curve["high"]) * p_factor
    assert _vertices_hold(fill, q * q_factor, low) and _vertices_hold(fill, q * q_factor, high)


def test_the_analysis_json_holds_the_velocity_profile_the_figure_draws(analysis, document):
    profile = document["samples"][0]["cases"][0]["velocity_profile"]
    axes = _figure(analysis, "-tube-50-l-min-profile")
    (model,) = [line for line in axes.lines if str(line.get_label()).endswith(" model")]
    newtonian = [line for line in axes.lines if line.get_label() == "Newtonian, same flow rate"][0]
    velocity, parabola = _array(profile["velocity"]), _array(profile["newtonian_velocity"])
    factor, _ = display.display_scale("velocity", np.r_[velocity, parabola])
    np.testing.assert_allclose(model.get_ydata(), np.r_[velocity[:0:-1], velocity] * factor, rtol=1e-15)
    np.testing.assert_allclose(newtonian.get_ydata(), np.r_[parabola[:0:-1], parabola] * factor, rtol=1e-15)
    # Source: Hagen-Poiseuille profile, u_max = 2 V in a tube (Bird, Stewart & Lightfoot 2002, eq. 2.3-19)
    mean = document["samples"][0]["cases"][0]["prediction"]["mean_velocity"]
    assert parabola[0] == pytest.approx(2.0 * mean, rel=1e-6)


def test_the_analysis_json_carries_fits_models_not_fitted_and_the_caution(analysis, document):
    sample, result = document["samples"][0], analysis.samples[0]
    assert document["kind"] == "rheofit-analysis" and "laminar" in document["caution"]
    assert [f["model"] for f in sample["fits"]] == [r.model for r in result.ranking]
    assert sample["skipped"] == [{"model": m, "reason": r} for m, r in result.ranking.skipped]
    assert len(sample["curve"]["shear_rate"]) == len(result.curve)
    assert [c["label"] for c in sample["cases"]] == [PERFUSION.label, PRIMING.label]


def test_the_operating_band_agrees_with_the_prediction_interval_at_the_operating_point(analysis):
    result = analysis.samples[0].cases[0]
    curve, p = result.operating_curve, result.prediction
    assert math.isnan(curve.low[0]) and math.isnan(curve.high[0])  # not defined at rest
    assert np.all(curve.low[1:] <= curve.pressure_drop[1:]) and np.all(curve.pressure_drop[1:] <= curve.high[1:])
    i = int(np.argmin(np.abs(curve.flow_rate - p.flow_rate)))
    assert curve.flow_rate[i] == pytest.approx(p.flow_rate, rel=1e-12)
    # the same draws (fixed seed) carried through the same engine: the same interval
    assert (curve.low[i], curve.high[i]) == pytest.approx(p.pressure_drop_ci95, rel=1e-6)


# --- the report draws, it does not compute -------------------------------------------------------

#: modules and functions that compute bands or solve flows; report/ must import none of them
COMPUTING_MODULES = {"rheofit.fitting.draws", "rheofit.fitting.band", "rheofit.flow.intervals",
                     "rheofit.flow.engine", "rheofit.flow.curves"}
COMPUTING_NAMES = {"viscosity_band", "operating_band", "flow_intervals", "parameter_draws", "drawn_band",
                   "operating_curve", "velocity_profile", "profile_against_newtonian", "newtonian_profile",
                   "pressure_drop", "flow_rate", "engine", "draws", "intervals", "band", "curves"}


def computing_imports(source: str) -> list[str]:
    """Every import of ``source`` (top level or inside a function) that reaches a computing module or name."""
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found += [a.name for a in node.names if a.name in COMPUTING_MODULES]
        elif isinstance(node, ast.ImportFrom) and (node.module or "").startswith("rheofit"):
            if node.module in COMPUTING_MODULES:
                found.append(node.module)
            elif node.module.startswith(("rheofit.flow", "rheofit.fitting")):
                found += [f"{node.module}.{a.name}" for a in node.names if a.name in COMPUTING_NAMES]
    return found


def test_report_modules_import_no_band_or_flow_solver():
    # common practice, no source: renderers draw stored results (STYLE.md, "Results are data")
    offenders = {path.name: computing_imports(path.read_text(encoding="utf-8"))
                 for path in sorted(REPORT.glob("*.py"))}
    assert {name: found for name, found in offenders.items() if found} == {}


def test_the_import_check_can_fail():
    assert computing_imports("from rheofit.fitting.draws import viscosity_band\n") == ["rheofit.fitting.draws"]
    assert computing_imports("def f():\n    from rheofit.flow import engine\n") == ["rheofit.flow.engine"]
    assert computing_imports("from rheofit.flow.intervals import operating_band as b\n")
    assert computing_imports("from rheofit.flow.predict import SAFETY_CAUTION\n") == []


# --- notebooks: escaped HTML ---------------------------------------------------------------------

class Tags(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags, self.text = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def _parsed(markup: str) -> Tags:
    page = Tags()
    page.feed(markup)
    page.close()
    return page


def _assert_escaped(markup: str):
    page = _parsed(markup)
    assert "script" not in page.tags and "<script" not in markup
    assert HOSTILE in "".join(page.text)  # shown as text, not lost
    return page


def test_a_fit_shows_as_an_escaped_table_in_a_notebook(hostile):
    best = fit_all(hostile)[0]
    markup = best._repr_html_()
    page = _assert_escaped(markup)
    assert "table" in page.tags
    text = "".join(page.text)
    for p in best.params.values():
        assert f"{p.value:.4g}" in text and p.interval_text() in text
    assert f"{best.aicc:.4g}" in text
    pairs = best.correlations()
    assert pairs  # this Carreau fit has correlated estimates
    for a, b, r in pairs:  # listed as the text report lists them
        assert f"{a}, {b}" in text and f"{r:+.3f}" in text


def test_a_prediction_shows_as_an_escaped_table_with_the_caution(hostile):
    from rheofit.flow import SAFETY_CAUTION

    best = fit_all(hostile)[0]
    p = predict(best, TUBE, flow_rate=50 * UL_PER_MIN)
    text = "".join(_assert_escaped(p._repr_html_()).text)
    assert f"{p.pressure_drop:.4g} Pa" in text and SAFETY_CAUTION in text
    assert f"{p.pressure_drop_ci95[0]:.4g} to {p.pressure_drop_ci95[1]:.4g} Pa" in text
    many = predict(best, TUBE, flow_rate=np.linspace(10, 100, 20) * UL_PER_MIN, uncertainty=False)
    page = _assert_escaped(many._repr_html_())
    flag_rows = 1 + len(many.flags) if many.flags else 0
    assert page.tags.count("tr") == 1 + 12 + flag_rows and "8 more operating points" in "".join(page.text)


def test_a_comparison_shows_as_an_escaped_table(hostile):
    from rheofit.lots import compare

    lot_a = read_flow_curve(_sample("medium_lot_A"))
    comparison = compare([lot_a, hostile], geometry=TUBE, flow_rate=50 * UL_PER_MIN, model="carreau",
                         samples=60)
    page = _assert_escaped(comparison._repr_html_())
    text = "".join(page.text)
    flag_rows = 1 + len(comparison.flags) if comparison.flags else 0
    assert page.tags.count("tr") == 1 + 2 + flag_rows
    for verdict in comparison.table["verdict"]:
        assert verdict in text


# --- pandas frames ----------------------------------------------------------------------------------

def test_a_ranking_frame_holds_the_ranking(analysis):
    ranking = analysis.samples[0].ranking
    frame = ranking.to_frame()
    assert list(frame.columns) == ["model", "title", "n_params", "aicc", "delta_aicc", "akaike_weight",
                                   "aic", "bic", "rms_log_residual", "r_squared_log", "resolved", "flags"]
    assert frame["model"].tolist() == [r.model for r in ranking]
    np.testing.assert_array_equal(frame["aicc"], [r.aicc for r in ranking])
    np.testing.assert_array_equal(frame["bic"], [r.bic for r in ranking])
    np.testing.assert_array_equal(frame["rms_log_residual"], [r.rms_log_residual for r in ranking])
    assert frame["resolved"].tolist() == [r.resolved for r in ranking]
    delta = frame["aicc"] - frame["aicc"].min()
    np.testing.assert_allclose(frame["delta_aicc"], delta, rtol=0, atol=1e-12)
    # Akaike weights w_i = exp(-D_i/2) / sum_j exp(-D_j/2) (Burnham & Anderson 2002, sec. 2.9; from memory)
    np.testing.assert_allclose(frame["akaike_weight"], np.exp(-delta / 2) / np.exp(-delta / 2).sum(), rtol=1e-12)


def test_an_operating_curve_frame_holds_the_curve_and_hagen_poiseuille():
    mu = 1e-3
    p = predict(fluid("newtonian", mu=mu), TUBE, flow_rate=50 * UL_PER_MIN)
    curve = operating_curve(p)
    frame = curve.to_frame()
    # a Newtonian fluid's zero-shear viscosity is its viscosity: both lines are the fluid itself
    assert list(frame.columns) == ["flow_rate", "pressure_drop", "newtonian_operating_point",
                                   "newtonian_zero_shear"]
    np.testing.assert_array_equal(frame["flow_rate"], curve.flow_rate)
    np.testing.assert_array_equal(frame["pressure_drop"], curve.pressure_drop)
    # Source: Hagen-Poiseuille, dP = 8 mu L Q / (pi R^4) (Bird, Stewart & Lightfoot 2002, eq. 2.3-21)
    expected = 8 * mu * TUBE.length * frame["flow_rate"] / (math.pi * TUBE.radius**4)
    np.testing.assert_allclose(frame["pressure_drop"], expected, rtol=1e-8, atol=1e-12)
    for column in ("newtonian_operating_point", "newtonian_zero_shear"):
        np.testing.assert_allclose(frame[column], expected, rtol=1e-9, atol=1e-12)
    assert curve.low is None and curve.to_dict()["low"] is None  # given parameters: no band


def test_an_operating_curve_frame_of_a_fit_has_its_band(analysis):
    curve = analysis.samples[0].cases[0].operating_curve
    frame = curve.to_frame()
    assert list(frame.columns) == ["flow_rate", "pressure_drop", "pressure_drop_low", "pressure_drop_high",
                                   "newtonian_operating_point", "newtonian_zero_shear"]
    np.testing.assert_array_equal(frame["pressure_drop_low"], curve.low)
    np.testing.assert_array_equal(frame["pressure_drop_high"], curve.high)
    np.testing.assert_array_equal(frame["newtonian_zero_shear"], curve.newtonian[1].pressure_drop)


def test_a_comparison_frame_is_a_copy_of_its_table():
    from rheofit.lots import compare

    lots = [read_flow_curve(_sample(s)) for s in ("medium_lot_A", "medium_lot_B")]
    comparison = compare(lots, model="carreau")
    frame = comparison.to_frame()
    assert frame.equals(comparison.table) and frame is not comparison.table
    frame.loc[0, "verdict"] = "changed"
    assert comparison.table.loc[0, "verdict"] != "changed"
