"""Figures of a flow prediction: the velocity profile and the pressure-flow operating curve."""

from __future__ import annotations

import math

import numpy as np

from rheofit.flow import engine
from rheofit.fluid import fluid as make_fluid
from rheofit.report.display import display_scale, length_scale
from rheofit.report.plots import (
    INK, MUTED, PLUG_FILL, legend_below, new_figure, plain, series_style, styled,
)

#: points of the drawn pressure-flow curve
_CURVE_POINTS = 60
#: flow rates at which the 95 % band is computed
_BAND_POINTS = 24
#: the operating curve runs to this multiple of the operating flow rate [-]
_SPAN = 2.0


def _scalar(value, index: int = 0) -> float:
    return float(np.ravel(value)[index])


def _title(prediction, label) -> str:
    head = plain(label) if label else plain(prediction.fluid.name or prediction.fluid.model)
    return f"{head}\n{plain(prediction.geometry.describe())}"


# --- velocity profile ---------------------------------------------------------------

def newtonian_profile(geometry, flow_rate: float, position) -> np.ndarray:
    """Velocity [m/s] of a Newtonian fluid carrying the same flow rate [m^3/s].

    Computed by the same engine (a parabola: tube u = 2 V (1 - (r/R)^2),
    slit u = 1.5 V (1 - (y/h)^2); Bird, Stewart & Lightfoot 2002, ch. 2);
    at fixed Q the viscosity cancels.
    """
    newtonian = make_fluid("newtonian", mu=1.0)
    dp = engine.pressure_drop(newtonian, geometry, flow_rate)
    tau_w = float(geometry.wall_shear_stress(dp))
    return engine.velocity_profile(newtonian, geometry, tau_w, np.abs(position))


def _profile_arrays(prediction, points: int = 201):
    """Positions across the whole channel [m] and the model velocity there [m/s]."""
    half = prediction.geometry.half_size
    position = np.linspace(-half, half, points)
    tau_w = _scalar(prediction.wall_shear_stress)
    velocity = engine.velocity_profile(prediction.fluid, prediction.geometry, tau_w, np.abs(position))
    return position, velocity


def _mark_plug(axes, prediction, half, scale, unit):
    plug = _scalar(prediction.plug_fraction)
    if not (plug > 0 and bool(_scalar(prediction.flowing))):
        return
    width = plug * half * scale
    axes.axvspan(-width, width, facecolor=PLUG_FILL, hatch="//", edgecolor="#b38a3e", linewidth=0.6,
                 zorder=0, label=f"plug (unsheared core), ±{width:.3g} {unit}")


def _no_flow_note(axes, prediction):
    threshold, kind = prediction.threshold_pressure_drop, "pressure"
    factor, unit = display_scale(kind, [threshold])
    axes.text(0.5, 0.55, "No flow: the wall shear stress stays below the yield stress.\n"
              f"Flow starts above a pressure drop of {threshold * factor:.3g} {unit}.",
              transform=axes.transAxes, ha="center", va="center", fontsize=10, color=INK,
              bbox={"boxstyle": "round", "facecolor": "white", "edgecolor": MUTED})


@styled
def velocity_profile_figure(prediction, *, label: str | None = None):
    """Velocity across the channel, the model against the Newtonian profile at the same Q.

    Position is the distance from the centre line (tube: radius r, slit: y)
    in µm or mm; velocity in mm/s or m/s.  A yield-stress fluid's plug is
    shaded; a fluid at rest gets a note with the threshold pressure drop.
    Operating point 0 is drawn for an array prediction.
    """
    geometry = prediction.geometry
    half = geometry.half_size
    scale, unit = length_scale(half)
    position, velocity = _profile_arrays(prediction)
    flow_rate = _scalar(prediction.flow_rate)
    newtonian = newtonian_profile(geometry, flow_rate, position) if flow_rate > 0 else 0 * position
    v_factor, v_unit = display_scale("velocity", np.concatenate([velocity, newtonian]))
    figure = new_figure()
    axes = figure.add_subplot()
    _mark_plug(axes, prediction, half, scale, unit)
    main, other = series_style(0), series_style(1)
    axes.plot(position * scale, velocity * v_factor, color=main["color"], linewidth=2.2, zorder=4,
              label=f"{prediction.fluid.declaration.title} model")
    if flow_rate > 0:
        axes.plot(position * scale, newtonian * v_factor, color=other["color"], linestyle=other["linestyle"],
                  linewidth=1.8, zorder=3, label="Newtonian, same flow rate")
    else:
        _no_flow_note(axes, prediction)
    for side in (-1, 1):
        axes.axvline(side * half * scale, color=INK, linewidth=2.5, zorder=5)
    axes.set_xlim(-1.04 * half * scale, 1.04 * half * scale)
    peak = float(np.max(np.r_[velocity, newtonian])) * v_factor
    if peak > 0:
        axes.set_ylim(0.0, 1.12 * peak)
    else:
        axes.set_ylim(0.0, 1.0)
        axes.set_yticks([0.0])
    axes.set_xlabel(f"distance from the centre line [{unit}] (walls at ±{half * scale:.3g} {unit})")
    axes.set_ylabel(f"velocity [{v_unit}]")
    axes.set_title(f"Velocity profile — {_title(prediction, label)}")
    legend_below(figure, axes)
    return figure


# --- operating curve ----------------------------------------------------------------

def _flow_span(prediction) -> float:
    """The largest flow rate drawn [m^3/s]."""
    q = float(np.nanmax(np.ravel(prediction.flow_rate)))
    if q > 0:
        return _SPAN * q
    dp = float(np.nanmax(np.ravel(prediction.pressure_drop)))
    target = 3.0 * max(prediction.threshold_pressure_drop, dp)
    return float(engine.flow_rate(prediction.fluid, prediction.geometry, target))


def operating_curve(prediction, points: int = _CURVE_POINTS):
    """Flow rates Q [m^3/s] from 0 and the pressure drops dP(Q) [Pa] the model needs.

    At Q = 0 the pressure drop is the threshold (zero without a yield stress).
    """
    span = _flow_span(prediction)
    # even steps for the linear axis, plus geometric ones where dP(Q) bends fast near Q = 0
    q = np.union1d(np.linspace(0.0, span, points + 1)[1:], np.geomspace(1e-4 * span, span, points // 2))
    dp = np.asarray(engine.pressure_drop(prediction.fluid, prediction.geometry, q), float)
    return np.r_[0.0, q], np.r_[prediction.threshold_pressure_drop, dp]


def operating_band(fit, geometry, flow_rate):
    """95 % band (low, high) [Pa] of dP(Q) (:func:`rheofit.flow.intervals.operating_band`), None without a fit."""
    if fit is None:
        return None
    from rheofit.flow.intervals import operating_band as band

    return band(fit, geometry, flow_rate)


def _newtonian_lines(axes, prediction, q, q_factor, p_factor):
    geometry = prediction.geometry
    reference = _scalar(prediction.newtonian_viscosity)
    lines = []
    if math.isfinite(reference):
        lines.append((reference, f"Newtonian, η = {reference:.3g} Pa·s (at the operating point)"))
    eta0 = prediction.zero_shear_viscosity
    if eta0 is not None and math.isfinite(eta0):
        lines.append((eta0, f"Newtonian, zero-shear η₀ = {eta0:.3g} Pa·s"))
    for i, (eta, text) in enumerate(lines, start=1):
        style = series_style(i)
        dp = geometry.pressure_drop(eta * geometry.apparent_wall_shear_rate(q))
        axes.plot(q * q_factor, dp * p_factor, color=style["color"], linestyle=style["linestyle"],
                  linewidth=1.8, zorder=3, label=text)


def _band(axes, fit, prediction, q, q_factor, p_factor):
    # the band is smooth: a coarser grid than the curve's is enough (each point costs draws)
    q = np.union1d(np.linspace(0.0, q[-1], _BAND_POINTS + 1)[1:], np.geomspace(1e-3 * q[-1], q[-1], 8))
    band = operating_band(fit, prediction.geometry, q)
    if band is None:
        return 0.0
    low, high = (np.asarray(b, float) for b in band)
    axes.fill_between(q * q_factor, low * p_factor, high * p_factor, color=series_style(0)["color"],
                      alpha=0.18, linewidth=0, zorder=2, label="95 % band (parameter uncertainty)")
    return float(np.nanmax(high))


def _interval_error(value: float, ci, factor: float):
    if ci is None or ci[0] is None or ci[1] is None:
        return None
    low, high = _scalar(ci[0]), _scalar(ci[1])
    return [[max(value - low, 0.0) * factor], [max(high - value, 0.0) * factor]]


def _mark_operating(axes, prediction, q_factor, p_factor, p_unit, q_unit):
    for i in range(prediction.size):
        q, dp = _scalar(prediction.flow_rate, i), _scalar(prediction.pressure_drop, i)
        flowing = bool(_scalar(prediction.flowing, i))
        xerr = _interval_error(q, getattr(prediction, "flow_rate_ci95", None), q_factor)
        yerr = _interval_error(dp, getattr(prediction, "pressure_drop_ci95", None), p_factor)
        text = (f"operating point: {dp * p_factor:.3g} {p_unit} at {q * q_factor:.3g} {q_unit}"
                if flowing else f"given {dp * p_factor:.3g} {p_unit}: no flow")
        axes.errorbar([q * q_factor], [dp * p_factor], xerr=xerr if prediction.size == 1 else None,
                      yerr=yerr if prediction.size == 1 else None, linestyle="none",
                      marker="D" if flowing else "X", markersize=8, markerfacecolor="white",
                      markeredgecolor=INK, markeredgewidth=1.4, ecolor=INK, capsize=3, zorder=6,
                      clip_on=False, label=text if i == 0 else None)


@styled
def operating_curve_figure(prediction, fit=None, *, label: str | None = None):
    """Pressure drop against flow rate for this fluid and geometry (linear axes from 0).

    Draws the model's dP(Q) by the flow engine, the Newtonian line with the
    reference viscosity of the prediction (and with the zero-shear viscosity
    when the model has one), the 95 % band when ``fit`` is given
    (:mod:`rheofit.flow.intervals`), the threshold pressure drop of
    a yield-stress fluid, and the operating point(s).  Units: µL/min or
    mL/min and Pa, kPa or MPa, as the console shows them.
    """
    q, dp = operating_curve(prediction)
    q_factor, q_unit = display_scale("flow_rate", q)
    band_top_guess = float(np.nanmax(dp))
    p_factor, p_unit = display_scale("pressure", [band_top_guess, _scalar(prediction.pressure_drop)])
    figure = new_figure()
    axes = figure.add_subplot()
    band_top = _band(axes, fit, prediction, q, q_factor, p_factor)
    main = series_style(0)
    axes.plot(q * q_factor, dp * p_factor, color=main["color"], linewidth=2.2, zorder=4,
              label=f"{prediction.fluid.declaration.title} model")
    _newtonian_lines(axes, prediction, q, q_factor, p_factor)
    threshold = prediction.threshold_pressure_drop
    if threshold > 0:
        axes.axhline(threshold * p_factor, color=MUTED, linestyle=(0, (2, 2)), linewidth=1.2, zorder=1,
                     label=f"threshold pressure drop {threshold * p_factor:.3g} {p_unit} (flow starts)")
    _mark_operating(axes, prediction, q_factor, p_factor, p_unit, q_unit)
    top = max(float(np.nanmax(dp)), band_top, float(np.nanmax(np.ravel(prediction.pressure_drop))))
    axes.set_xlim(0.0, q[-1] * q_factor * 1.02)
    axes.set_ylim(0.0, 1.15 * top * p_factor)
    axes.set_xlabel(f"flow rate Q [{q_unit}]")
    axes.set_ylabel(f"pressure drop Δp [{p_unit}]")
    axes.set_title(f"Operating curve — {_title(prediction, label)}")
    legend_below(figure, axes, columns=1)
    return figure
