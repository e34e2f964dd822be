"""Figures: each figure function on real fits and predictions, the palette, the SVG/PNG output."""

from __future__ import annotations

import itertools
import math
import subprocess
import sys
from dataclasses import replace
from importlib.resources import files

import numpy as np
import pytest

from rheofit.errors import OutputExistsError, ParameterError
from rheofit.fitting import fit_all
from rheofit.flow import Slit, Tube, predict
from rheofit.fluid import fluid
from rheofit.ingest import read_flow_curve
from rheofit.report import display, plots
from rheofit.report.figures_fit import measured_points
from rheofit.fitting.band import drawn_band
from rheofit.flow.curves import operating_curve, profile_against_newtonian

TUBE = Tube("0.8 mm", "30 cm")
SLIT = Slit("200 um", "8 mm", "2 cm")
UL_PER_MIN = 1e-9 / 60.0


def _curve(stem):
    return read_flow_curve(files("rheofit.sample_data") / f"{stem}.csv")


@pytest.fixture(scope="module")
def medium():
    curve = _curve("medium_lot_A")
    return curve, fit_all(curve)


@pytest.fixture(scope="module")
def microgel():
    curve = _curve("microgel_carrier")
    return curve, fit_all(curve)


@pytest.fixture(autouse=True)
def _release(request):
    yield
    # figures made here are not held by pyplot; nothing to close globally


def _labelled(axes, text):
    """Artists of ``axes`` whose label contains ``text``."""
    artists = list(axes.lines) + list(axes.collections) + list(axes.patches)
    return [a for a in artists if text in str(a.get_label())]


def _exact(axes, label):
    (artist,) = [a for a in list(axes.lines) + list(axes.collections) + list(axes.patches)
                 if a.get_label() == label]
    return artist


def _xspan(patch):
    """(left, right) of a span drawn by axvspan (a Rectangle, or a Polygon in older matplotlib)."""
    if hasattr(patch, "get_width"):
        return patch.get_x(), patch.get_x() + patch.get_width()
    x = patch.get_xy()[:, 0]
    return x.min(), x.max()


def _axes(figure):
    return figure.axes[0]


# --- palette and style ------------------------------------------------------------------

# Colour-vision-deficiency simulation matrices (linear RGB, severity 1.0).
# Source: Machado, Oliveira & Fernandes (2009), IEEE TVCG 15(6), 1291-1298, table of
# matrices for protanopia, deuteranopia and tritanopia (values from memory).
CVD = {
    "protanopia": [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
                   [-0.003882, -0.048116, 1.051998]],
    "deuteranopia": [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                     [-0.011820, 0.042940, 0.968881]],
    "tritanopia": [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602],
                   [0.004733, 0.691367, 0.303900]],
    "normal": np.eye(3).tolist(),
}


def _linear_rgb(hex_colour):
    # Source: IEC 61966-2-1 (1999), sRGB transfer function
    c = np.array([int(hex_colour[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _lab(rgb):
    # Source: CIE 15:2004, CIELAB from XYZ (D65 white); sRGB->XYZ matrix from IEC 61966-2-1
    rgb = np.clip(rgb, 0.0, 1.0)
    xyz = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722],
                    [0.0193, 0.1192, 0.9505]]) @ rgb
    t = xyz / np.array([0.95047, 1.0, 1.08883])
    f = np.where(t > 216 / 24389, np.cbrt(t), (24389 / 27 * t + 16) / 116)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


@pytest.mark.parametrize("vision", sorted(CVD))
def test_palette_colours_stay_apart_under_colour_vision_deficiency(vision):
    # a CIELAB difference of about 20 separates colours at a glance (common practice, no source)
    matrix = np.array(CVD[vision])
    labs = [_lab(matrix @ _linear_rgb(c)) for c in plots.SERIES]
    for (a, la), (b, lb) in itertools.combinations(zip(plots.SERIES, labs), 2):
        assert np.linalg.norm(la - lb) >= 20.0, f"{a} and {b} too close under {vision}"


def test_series_differ_in_line_style_and_marker_for_grey_scale_print():
    styles = [plots.series_style(i) for i in range(len(plots.SERIES))]
    assert len({str(s["linestyle"]) for s in styles}) == len(styles)
    assert len({s["marker"] for s in styles}) == len(styles)


@pytest.mark.parametrize("value, text", [(0.001, "0.001"), (0.1, "0.1"), (1.0, "1"), (1000.0, "1000"),
                                         (1e5, "10⁵"), (1e-5, "10⁻⁵"), (2e5, "2×10⁵")])
def test_decade_labels_are_plain_numbers(value, text):
    assert plots.decade_label(value) == text


def test_display_scale_follows_the_console_units():
    assert display.display_scale("pressure", [2200.0]) == (1e-3, "kPa")
    assert display.display_scale("pressure", [300.0]) == (1.0, "Pa")
    assert display.display_scale("flow_rate", [50 * UL_PER_MIN]) == (60e9, "µL/min")
    assert display.display_scale("velocity", [0.002]) == (1e3, "mm/s")
    assert display.length_scale(100e-6) == (1e6, "µm")


def test_matplotlib_is_not_imported_with_rheofit():
    code = ("import sys, rheofit, rheofit.cli, rheofit.cli.report, rheofit.jobs.demo, rheofit.report.html, "
            "rheofit.report.plots; print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


# --- flow curve -----------------------------------------------------------------------------

def test_flow_curve_has_log_axes_units_data_models_band_and_range(medium):
    curve, ranking = medium
    figure = plots.flow_curve_figure(ranking, drawn_band(ranking[0]), curve=curve, top=3)
    axes = _axes(figure)
    assert axes.get_xscale() == "log" and axes.get_yscale() == "log"
    assert "[1/s]" in axes.get_xlabel() and "[Pa·s]" in axes.get_ylabel()
    data = _exact(axes, "measured")
    assert len(data.get_xdata()) == len(curve)
    np.testing.assert_allclose(data.get_ydata(), curve.viscosity)
    assert len(_labelled(axes, "(chosen)")) == 2              # the line and its band
    assert len(_labelled(axes, "ΔAICc")) == 2                 # the next two models
    assert _labelled(axes, "95 % confidence band")
    span = _exact(axes, "measured shear-rate range")
    assert _xspan(span) == pytest.approx(curve.shear_rate_range)
    assert not _labelled(axes, "extrapolated")                # nothing outside the data here


def test_flow_curve_band_brackets_the_fitted_curve(medium):
    _, ranking = medium
    best = ranking[0]
    band = drawn_band(best)
    low, high, eta = band.low, band.high, band.viscosity
    np.testing.assert_allclose(eta, best.viscosity(band.shear_rate), rtol=1e-12)
    assert np.all(low <= eta * (1 + 1e-9)) and np.all(eta <= high * (1 + 1e-9))
    assert np.all(high > low)
    assert band.shear_rate[0] == best.shear_rate_range[0] and band.shear_rate[-1] == best.shear_rate_range[1]
    assert band.level == 0.95 and band.samples >= 40 and "Monte Carlo" in band.method


def test_flow_curve_extrapolated_part_is_dashed_beyond_the_data(medium):
    curve, ranking = medium
    best = ranking[0]
    priming = predict(best, TUBE, flow_rate=5000 * UL_PER_MIN, uncertainty=False)
    assert priming.wall_shear_rate > best.shear_rate_range[1]  # the case must lie outside
    band = drawn_band(best, [float(priming.wall_shear_rate)])
    figure = plots.flow_curve_figure(ranking, band, curve=curve, operating=[("priming", priming)])
    axes = _axes(figure)
    (outside,) = _labelled(axes, "extrapolated")
    inside = _exact(axes, f"{best.declaration.title} (chosen)")
    assert outside.get_linestyle() != inside.get_linestyle()
    assert outside.get_color() == inside.get_color()
    assert min(outside.get_xdata()) >= best.shear_rate_range[1] * (1 - 1e-12)
    assert max(outside.get_xdata()) >= priming.wall_shear_rate
    assert max(inside.get_xdata()) <= best.shear_rate_range[1] * (1 + 1e-12)
    (marker,) = _labelled(axes, "priming")
    assert marker.get_xdata()[0] == pytest.approx(priming.wall_shear_rate)
    assert axes.get_xlim()[1] > priming.wall_shear_rate


def test_flow_curve_without_the_curve_rebuilds_the_data_from_the_residuals(medium):
    curve, ranking = medium
    rate, eta = measured_points(ranking[0])
    order = np.argsort(curve.shear_rate)
    np.testing.assert_allclose(rate, curve.shear_rate[order], rtol=1e-12)
    # the fit (and so the rebuilt data) works on the stress column: eta = tau / gamma_dot
    np.testing.assert_allclose(eta, (curve.stress / curve.shear_rate)[order], rtol=1e-9)


def test_flow_curve_survives_a_dollar_and_markup_in_the_sample_name(medium):
    curve, ranking = medium
    best = replace(ranking[0], name="lot $5 <b>")
    figure = plots.flow_curve_figure([best], drawn_band(best))
    assert "$5 <b>" in _axes(figure).get_title().replace("\\$", "$")
    assert plots.svg_text(figure).startswith("<svg")


def test_flow_curve_refuses_the_band_of_another_model(medium):
    _, ranking = medium
    with pytest.raises(ParameterError, match="band is of the .* model, but the chosen fit is"):
        plots.flow_curve_figure(ranking, drawn_band(ranking[1]))


# --- residuals -------------------------------------------------------------------------------

def test_residuals_are_log_residuals_against_log_shear_rate(medium):
    _, ranking = medium
    figure = plots.residuals_figure(ranking, top=2)
    axes = _axes(figure)
    assert axes.get_xscale() == "log" and axes.get_yscale() == "linear"
    assert "[1/s]" in axes.get_xlabel() and "[–]" in axes.get_ylabel()
    lines = _labelled(axes, "rms")
    assert len(lines) == 2
    np.testing.assert_allclose(lines[0].get_ydata(), ranking[0].residuals)
    bottom, top = axes.get_ylim()
    assert bottom == pytest.approx(-top) and top >= np.max(np.abs(ranking[1].residuals))


def test_residuals_name_a_residual_pattern(medium):
    _, ranking = medium
    patterned = [r for r in ranking if r.flags_with("residual_pattern")]
    assert patterned  # the power law misses the plateau of this sample
    figure = plots.residuals_figure([ranking[0], patterned[0]])
    assert _labelled(_axes(figure), "(residual pattern)")


# --- velocity profile ----------------------------------------------------------------------------

def test_velocity_profile_marks_the_plug_of_a_yield_stress_fluid(microgel):
    _, ranking = microgel
    best = ranking[0]
    assert best.fluid.yield_stress > 0
    p = predict(best, SLIT, pressure_drop=300.0, uncertainty=False)
    figure = plots.velocity_profile_figure(p, profile_against_newtonian(p))
    axes = _axes(figure)
    (plug,) = _labelled(axes, "plug")
    left, right = _xspan(plug)
    half_um = SLIT.half_gap * 1e6
    # plug half-thickness h * tau_y / tau_w (Bird, Stewart & Lightfoot 2002, problem 2B.7 form)
    expected = half_um * best.fluid.yield_stress / p.wall_shear_stress
    assert (left, right) == pytest.approx((-expected, expected), rel=1e-9)
    assert "[µm]" in axes.get_xlabel() and "[mm/s]" in axes.get_ylabel()


def test_velocity_profile_against_the_newtonian_parabola(medium):
    _, ranking = medium
    p = predict(ranking[0], TUBE, flow_rate=50 * UL_PER_MIN, uncertainty=False)
    axes = _axes(plots.velocity_profile_figure(p, profile_against_newtonian(p)))
    (model,) = _labelled(axes, "model")
    newtonian = _exact(axes, "Newtonian, same flow rate")
    # Source: Hagen-Poiseuille profile, u_max = 2 V in a tube (Bird, Stewart & Lightfoot 2002, eq. 2.3-19)
    assert max(newtonian.get_ydata()) == pytest.approx(2.0 * p.mean_velocity * 1e3, rel=1e-6)
    assert max(model.get_ydata()) == pytest.approx(p.max_velocity * 1e3, rel=1e-6)
    assert max(model.get_ydata()) < max(newtonian.get_ydata())   # shear thinning flattens it


def test_velocity_profile_of_a_slit_peaks_at_one_and_a_half_times_the_mean():
    water = fluid("newtonian", mu=1e-3)
    p = predict(water, SLIT, flow_rate=50 * UL_PER_MIN)
    axes = _axes(plots.velocity_profile_figure(p, profile_against_newtonian(p)))
    newtonian = _exact(axes, "Newtonian, same flow rate")
    # Source: plane Poiseuille flow, u_max = 3/2 V (Bird, Stewart & Lightfoot 2002, problem 2B.3)
    assert max(newtonian.get_ydata()) == pytest.approx(1.5 * p.mean_velocity * 1e3, rel=1e-6)


def test_velocity_profile_says_no_flow_below_the_threshold(microgel):
    _, ranking = microgel
    p = predict(ranking[0], SLIT, pressure_drop=100.0, uncertainty=False)
    assert not p.flowing
    axes = _axes(plots.velocity_profile_figure(p, profile_against_newtonian(p)))
    texts = " ".join(t.get_text() for t in axes.texts)
    assert "No flow" in texts and "159" in texts


# --- operating curve --------------------------------------------------------------------------------

def test_operating_curve_has_the_band_the_newtonian_lines_and_the_point(medium):
    _, ranking = medium
    best = ranking[0]
    p = predict(best, TUBE, flow_rate=50 * UL_PER_MIN)
    figure = plots.operating_curve_figure(p, operating_curve(p, best))
    axes = _axes(figure)
    assert axes.get_xscale() == "linear" and axes.get_xlim()[0] == 0.0 and axes.get_ylim()[0] == 0.0
    assert "[µL/min]" in axes.get_xlabel() and "[kPa]" in axes.get_ylabel()
    (band,) = _labelled(axes, "95 % band")
    assert band.get_paths()
    (model,) = _labelled(axes, "model")
    q, dp = model.get_xdata(), model.get_ydata()
    assert np.interp(50.0, q, dp) == pytest.approx(p.pressure_drop * 1e-3, rel=1e-3)
    (newtonian, zero_shear) = _labelled(axes, "Newtonian")
    assert np.interp(50.0, newtonian.get_xdata(), newtonian.get_ydata()) == pytest.approx(
        p.newtonian_pressure_drop * 1e-3, rel=1e-9)
    assert "zero-shear" in zero_shear.get_label()
    (point,) = [c for c in axes.containers if "operating point" in str(c.get_label())]
    x, y = point.lines[0].get_xdata()[0], point.lines[0].get_ydata()[0]
    assert (x, y) == pytest.approx((50.0, p.pressure_drop * 1e-3))


def test_operating_curve_of_a_newtonian_fluid_is_hagen_poiseuille():
    mu = 1e-3
    water = fluid("newtonian", mu=mu)
    p = predict(water, TUBE, flow_rate=50 * UL_PER_MIN)
    axes = _axes(plots.operating_curve_figure(p, operating_curve(p)))
    (model,) = _labelled(axes, "model")
    q = np.asarray(model.get_xdata()) * UL_PER_MIN
    # Source: Hagen-Poiseuille, dP = 8 mu L Q / (pi R^4) (Bird, Stewart & Lightfoot 2002, eq. 2.3-21)
    expected = 8 * mu * TUBE.length * q / (math.pi * TUBE.radius**4)
    factor, unit = display.display_scale("pressure", expected)
    np.testing.assert_allclose(np.asarray(model.get_ydata()) / factor, expected, rtol=1e-8, atol=1e-12)
    assert not _labelled(axes, "95 % band")   # a fluid with given parameters has no uncertainty


def test_operating_curve_shows_the_threshold_and_a_point_that_does_not_flow(microgel):
    _, ranking = microgel
    best = ranking[0]
    p = predict(best, SLIT, pressure_drop=100.0, uncertainty=False)
    axes = _axes(plots.operating_curve_figure(p, operating_curve(p, best)))
    (threshold,) = _labelled(axes, "threshold")
    # slit threshold dP = tau_y L / h (force balance; Bird, Stewart & Lightfoot 2002, ch. 2)
    assert threshold.get_ydata()[0] == pytest.approx(best.fluid.yield_stress * SLIT.length / SLIT.half_gap)
    (model,) = _labelled(axes, "model")
    assert model.get_xdata()[0] == 0.0 and model.get_ydata()[0] == pytest.approx(threshold.get_ydata()[0])
    (point,) = [c for c in axes.containers if "no flow" in str(c.get_label())]
    assert point.lines[0].get_xdata()[0] == 0.0


# --- lot overlay ----------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def comparison():
    from rheofit.lots import compare

    curves = [_curve(stem) for stem in ("medium_lot_A", "medium_lot_B", "medium_lot_C")]
    return compare(curves, geometry=TUBE, flow_rate=50 * UL_PER_MIN, model="carreau", samples=60)


def test_lot_overlay_shades_the_shared_range_and_draws_every_lot(comparison):
    figure = plots.lot_overlay_figure(comparison)
    axes = _axes(figure)
    assert axes.get_xscale() == "log" and axes.get_yscale() == "log"
    assert "[1/s]" in axes.get_xlabel() and "[Pa·s]" in axes.get_ylabel()
    span = _exact(axes, "shared shear-rate range")
    assert _xspan(span) == pytest.approx(comparison.shared_range)
    entries = _labelled(axes, "fit")
    assert len(entries) == 3
    assert "(reference)" in entries[0].get_label()
    within = comparison.table["within_tolerance"].tolist()
    for entry, inside in zip(entries[1:], within[1:]):
        assert ("within" if inside else "OUTSIDE") in entry.get_label()
    data = [line for line in axes.lines if line.get_linestyle() == "None"]
    assert sorted(len(line.get_xdata()) for line in data) == sorted(len(c) for c in comparison.curves)
    assert len({line.get_marker() for line in data}) == 3


# --- output ----------------------------------------------------------------------------------------

def test_svg_text_is_an_inline_element_with_prefixed_ids(medium):
    _, ranking = medium
    svg = plots.svg_text(plots.residuals_figure(ranking), prefix="fig7-")
    assert svg.startswith("<svg") and "<?xml" not in svg and "<metadata" not in svg
    import re

    ids = re.findall(r'\bid="([^"]+)"', svg)
    refs = re.findall(r'(?:href="#|url\(#)([^")]+)', svg)
    assert ids and all(i.startswith("fig7-") for i in ids)
    assert refs and set(refs) <= set(ids)


def test_save_figure_writes_png_and_svg_and_refuses_to_overwrite(tmp_path, medium):
    _, ranking = medium
    figure = plots.residuals_figure(ranking)
    paths = plots.save_figure(figure, tmp_path, "res")
    assert sorted(p.name for p in paths) == ["res.png", "res.svg"]
    assert (tmp_path / "res.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "<svg" in (tmp_path / "res.svg").read_text(encoding="utf-8")
    with pytest.raises(OutputExistsError, match="already exists"):
        plots.save_figure(figure, tmp_path, "res")
    plots.save_figure(figure, tmp_path, "res", force=True)


def test_unknown_figure_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'pie_chart'"):
        plots.pie_chart  # noqa: B018
