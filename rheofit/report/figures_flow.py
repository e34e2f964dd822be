"""Figures of a flow prediction: the velocity profile and the pressure-flow operating curve.

Pure renderers of data computed beforehand: :class:`rheofit.flow.curves.VelocityProfile`
and :class:`rheofit.flow.curves.OperatingCurve` (no flow solve, no Monte Carlo here).
"""

from __future__ import annotations

import numpy as np

from rheofit.report.display import display_scale, length_scale
from rheofit.report.plots import (
    INK, MUTED, PLUG_FILL, legend_below, new_figure, plain, series_style, styled,
)


def _scalar(value, index: int = 0) -> float:
    return float(np.ravel(value)[index])


def _title(prediction, label) -> str:
    head = plain(label) if label else plain(prediction.fluid.name or prediction.fluid.model)
    return f"{head}\n{plain(prediction.geometry.describe())}"


# --- velocity profile ---------------------------------------------------------------

def _across(values, sign: float = 1.0) -> np.ndarray:
    """Centre-to-wall values mirrored to span the whole channel, wall to wall."""
    values = np.asarray(values, float)
    return np.r_[sign * values[:0:-1], values]


def _mark_plug(axes, profile, scale, unit):
    if not profile.plug_half_width > 0:
        return
    width = profile.plug_half_width * scale
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
def velocity_profile_figure(prediction, profile, *, label: str | None = None):
    """Velocity across the channel, the model against the Newtonian profile at the same Q.

    ``profile`` is the :class:`~rheofit.flow.curves.VelocityProfile` of
    ``prediction`` (:func:`rheofit.flow.curves.profile_against_newtonian`).  Position
    is the distance from the centre line (tube: radius r, slit: y) in µm or
    mm; velocity in mm/s or m/s.  A yield-stress fluid's plug is shaded; a
    fluid at rest gets a note with the threshold pressure drop.  Operating
    point 0 is drawn for an array prediction.
    """
    half = prediction.geometry.half_size
    scale, unit = length_scale(half)
    position = _across(profile.position, -1.0)
    velocity, newtonian = _across(profile.velocity), _across(profile.newtonian_velocity)
    moving = _scalar(prediction.flow_rate) > 0
    v_factor, v_unit = display_scale("velocity", np.concatenate([velocity, newtonian]))
    figure = new_figure()
    axes = figure.add_subplot()
    _mark_plug(axes, profile, scale, unit)
    main, other = series_style(0), series_style(1)
    axes.plot(position * scale, velocity * v_factor, color=main["color"], linewidth=2.2, zorder=4,
              label=f"{prediction.fluid.declaration.title} model")
    if moving:
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

#: how each Newtonian line is labelled, by its basis
_NEWTONIAN_LABELS = {
    "operating point": "Newtonian, η = {eta:.3g} Pa·s (at the operating point)",
    "zero shear": "Newtonian, zero-shear η₀ = {eta:.3g} Pa·s",
}


def _newtonian_lines(axes, curve, q_factor, p_factor):
    for i, line in enumerate(curve.newtonian, start=1):
        style = series_style(i)
        text = _NEWTONIAN_LABELS.get(line.basis, "Newtonian, η = {eta:.3g} Pa·s").format(eta=line.viscosity)
        axes.plot(curve.flow_rate * q_factor, line.pressure_drop * p_factor, color=style["color"],
                  linestyle=style["linestyle"], linewidth=1.8, zorder=3, label=text)


def _band(axes, curve, q_factor, p_factor) -> float:
    if curve.low is None:
        return 0.0
    axes.fill_between(curve.flow_rate * q_factor, curve.low * p_factor, curve.high * p_factor,
                      color=series_style(0)["color"], alpha=0.18, linewidth=0, zorder=2,
                      label=f"{100 * curve.level:.0f} % band (parameter uncertainty)")
    return float(np.nanmax(curve.high))


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
def operating_curve_figure(prediction, curve, *, label: str | None = None):
    """Pressure drop against flow rate for this fluid and geometry (linear axes from 0).

    ``curve`` is the :class:`~rheofit.flow.curves.OperatingCurve` of
    ``prediction`` (:func:`rheofit.flow.curves.operating_curve`): the
    model's dP(Q), the Newtonian line(s), the 95 % band when the curve has
    one, the threshold pressure drop of a yield-stress fluid; the operating
    point(s) come from ``prediction``.  Units: µL/min or mL/min and Pa, kPa
    or MPa, as the console shows them.
    """
    q, dp = curve.flow_rate, curve.pressure_drop
    q_factor, q_unit = display_scale("flow_rate", q)
    p_factor, p_unit = display_scale("pressure", [float(np.nanmax(dp)), _scalar(prediction.pressure_drop)])
    figure = new_figure()
    axes = figure.add_subplot()
    band_top = _band(axes, curve, q_factor, p_factor)
    main = series_style(0)
    axes.plot(q * q_factor, dp * p_factor, color=main["color"], linewidth=2.2, zorder=4,
              label=f"{prediction.fluid.declaration.title} model")
    _newtonian_lines(axes, curve, q_factor, p_factor)
    threshold = curve.threshold_pressure_drop
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
