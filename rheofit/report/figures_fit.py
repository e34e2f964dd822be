"""Figures of a fit: the flow curve with its 95 % band, and the log-space residuals.

Pure renderers: the band is computed beforehand (:class:`rheofit.fitting.band.ViscosityBand`);
only the fitted closed-form curves of the other models are evaluated here.
"""

from __future__ import annotations

import math

import numpy as np

from rheofit.errors import ParameterError
from rheofit.report.plots import (
    EXTRAPOLATED, INK, RANGE_FILL, SHEAR_RATE_LABEL, VISCOSITY_LABEL, legend_below, log_axes,
    new_figure, plain, series_style, styled,
)


def _ranked(fits) -> list:
    return list(fits) if isinstance(fits, (list, tuple)) else [fits]


def _operating(operating) -> list[tuple[str, object]]:
    """[(label, FlowPrediction)] from predictions or (label, prediction) pairs."""
    pairs = []
    for i, item in enumerate(operating or ()):
        label, prediction = item if isinstance(item, tuple) else (f"operating point {i + 1}", item)
        pairs.append((label, prediction))
    return pairs


def measured_points(fit, curve=None) -> tuple[np.ndarray, np.ndarray]:
    """Shear rate [1/s] and viscosity [Pa*s] of the data behind a fit.

    From the curve when given; otherwise rebuilt from the fit's log residuals
    r_i = ln tau_model - ln tau_i, so eta_i = eta_model(gd_i) exp(-r_i).
    """
    if curve is not None:
        return np.asarray(curve.shear_rate, float), np.asarray(curve.viscosity, float)
    rate = np.asarray(fit.shear_rate, float)
    return rate, fit.viscosity(rate) * np.exp(-np.asarray(fit.residuals, float))


def _wall_points(prediction) -> tuple[np.ndarray, np.ndarray]:
    """Wall shear rate [1/s] and the viscosity there, tau_w / gd_w [Pa*s], of the flowing points."""
    rate, stress = np.ravel(prediction.wall_shear_rate), np.ravel(prediction.wall_shear_stress)
    keep = np.ravel(prediction.flowing).astype(bool) & (rate > 0)
    return rate[keep], stress[keep] / rate[keep]


def _draw_chosen(axes, fit, band, style):
    """The chosen model: solid over the data, dashed where extrapolated, with its band."""
    low, high = band.measured_range
    rate, eta = band.shear_rate, band.viscosity
    inside = (rate >= low) & (rate <= high)
    axes.plot(rate[inside], eta[inside], color=style["color"], linewidth=2.2, zorder=4,
              label=f"{fit.declaration.title} (chosen)")
    for part in (rate <= low, rate >= high):
        if part.sum() > 1:
            axes.plot(rate[part], eta[part], color=style["color"], linewidth=2.0,
                      linestyle=EXTRAPOLATED, zorder=4, label="chosen model, extrapolated")
    axes.fill_between(rate, band.low, band.high, color=style["color"], alpha=0.18, linewidth=0,
                      zorder=2, label=f"{100 * band.level:.0f} % confidence band (chosen)")


def _draw_others(axes, others, best_aicc, low, high):
    grid = np.geomspace(low, high, 200)
    for i, fit in enumerate(others, start=1):
        style = series_style(i)
        delta = fit.aicc - best_aicc
        axes.plot(grid, fit.viscosity(grid), color=style["color"], linestyle=style["linestyle"],
                  linewidth=1.3, zorder=3, label=f"{fit.declaration.title}, ΔAICc {delta:.1f}")


def _draw_operating(axes, pairs):
    for j, (label, p) in enumerate(pairs):
        rates, eta = _wall_points(p)
        if not rates.size:
            continue
        marker = ("D", "v", "P", "X")[j % 4]
        axes.plot(rates, eta, linestyle="none", marker=marker,
                  markersize=8, markerfacecolor="white", markeredgecolor=INK, markeredgewidth=1.4,
                  zorder=6, label=f"{plain(label)}: wall {rates[0]:.3g} 1/s")


@styled
def flow_curve_figure(fits, band, *, curve=None, chosen=None, operating=(), top: int = 3):
    """Viscosity against shear rate (log-log) of one sample.

    Parameters
    ----------
    fits : FitResult or list of FitResult (best first, as from fit_all)
    band : ViscosityBand
        Of the chosen model (:func:`rheofit.fitting.band.drawn_band`): its
        curve is drawn solid over the measured shear-rate range and dashed
        where it is extrapolated (to reach an operating point), with its band.
    curve : FlowCurve, optional
        The measured data; rebuilt from the fit's residuals when not given.
    chosen : FitResult, optional
        The model used downstream (default: the first of ``fits``).
    operating : list of FlowPrediction or (label, FlowPrediction)
        Operating points, marked at their wall shear rate and viscosity.
    top : int
        How many of the best models (by AICc) to draw.

    Raises ParameterError when ``band`` is not of the chosen model.
    """
    ranked = _ranked(fits)
    chosen = chosen or ranked[0]
    if band.model != chosen.model:
        raise ParameterError(f"The band is of the {band.model} model, but the chosen fit is "
                             f"{chosen.model}; give the band of the chosen fit.")
    others = [f for f in ranked[:top] if f is not chosen][: max(top - 1, 0)]
    low, high = band.measured_range
    figure = new_figure()
    axes = figure.add_subplot()
    axes.axvspan(low, high, color=RANGE_FILL, zorder=0, label="measured shear-rate range")
    rate, eta = measured_points(chosen, curve)
    axes.plot(rate, eta, linestyle="none", marker="o", markerfacecolor="white", markeredgecolor=INK,
              markersize=5, zorder=5, label="measured")
    best = min(f.aicc for f in ranked if math.isfinite(f.aicc)) if ranked else chosen.aicc
    _draw_chosen(axes, chosen, band, series_style(0))
    _draw_others(axes, others, best, low, high)
    _draw_operating(axes, _operating(operating))
    log_axes(axes)
    axes.set_xlim(band.shear_rate[0] / 1.25, band.shear_rate[-1] * 1.25)
    axes.set_xlabel(SHEAR_RATE_LABEL)
    axes.set_ylabel(VISCOSITY_LABEL)
    axes.set_title(f"{plain(chosen.name or 'sample')}: flow curve")
    legend_below(figure, axes)
    return figure


@styled
def residuals_figure(fits, *, chosen=None, top: int = 3):
    """Log-space residuals r = ln(tau_model / tau_measured) [-] against shear rate.

    A good model scatters around zero without a run of signs; a right axis
    reads the same residual as a relative misfit exp(r) - 1 [%].
    """
    ranked = _ranked(fits)
    chosen = chosen or ranked[0]
    shown = [chosen] + [f for f in ranked[:top] if f is not chosen][: max(top - 1, 0)]
    figure = new_figure()
    axes = figure.add_subplot()
    axes.axhline(0.0, color=INK, linewidth=0.9, zorder=1)
    largest = 0.0
    for i, fit in enumerate(shown):
        style = series_style(i)
        pattern = " (residual pattern)" if fit.flags_with("residual_pattern") else ""
        axes.plot(fit.shear_rate, fit.residuals, color=style["color"], linestyle=style["linestyle"],
                  marker=style["marker"], markersize=4.5, linewidth=1.0 if i else 1.4,
                  markerfacecolor="white" if i else style["color"], zorder=3 + (i == 0),
                  label=f"{fit.declaration.title}{' (chosen)' if i == 0 else ''}, "
                        f"rms {fit.rms_log_residual:.3f}{pattern}")
        largest = max(largest, float(np.nanmax(np.abs(fit.residuals), initial=0.0)))
    limit = 1.12 * max(largest, 0.02)
    axes.set_ylim(-limit, limit)
    log_axes(axes, y=False)
    axes.set_xlabel(SHEAR_RATE_LABEL)
    axes.set_ylabel(r"residual ln($\tau_{\mathrm{model}}/\tau_{\mathrm{measured}}$) [–]")
    right = axes.secondary_yaxis("right", functions=(_percent, _from_percent))
    right.set_ylabel("relative misfit [%]")
    axes.set_title(f"{plain(chosen.name or 'sample')}: residuals in log space")
    legend_below(figure, axes, columns=1)
    return figure


def _percent(r):
    return 100.0 * np.expm1(r)


def _from_percent(p):
    """ln(1 + p/100); matplotlib also asks for p <= -100 % (off the axis), kept finite here."""
    return np.log1p(np.maximum(np.asarray(p, float), -99.999999) / 100.0)
