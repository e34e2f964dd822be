"""Figure of a lot comparison: every lot's data and fit, the shared shear-rate range shaded."""

from __future__ import annotations

import numpy as np

from rheofit.report.plots import (
    RANGE_FILL, SHEAR_RATE_LABEL, VISCOSITY_LABEL, legend_below, log_axes, new_figure, plain,
    series_style, styled,
)


def within(comparison) -> list[bool]:
    """Whether each lot is within tolerance, in input order."""
    return [bool(v) for v in comparison.table["within_tolerance"].tolist()]


def _role(i: int, ref: int, inside: bool, tolerance: float) -> str:
    if i == ref:
        return " (reference)"
    band = f" ±{100 * tolerance:.0f} %"
    return f" (within{band})" if inside else f" (OUTSIDE{band})"


def verdicts(comparison) -> list[str]:
    """The verdict of each lot, in input order."""
    return [str(v) for v in comparison.table["verdict"].tolist()]


@styled
def lot_overlay_figure(comparison):
    """Viscosity against shear rate (log-log) of every lot: data as markers, fit as a line.

    The shear-rate range all lots share (where they are compared) is
    shaded; the reference lot is drawn heavier; the legend says whether each
    lot is within the comparison's tolerance.
    """
    figure = new_figure()
    axes = figure.add_subplot()
    shared = comparison.shared_range
    if shared is not None:
        axes.axvspan(shared[0], shared[1], color=RANGE_FILL, zorder=0, label="shared shear-rate range")
    ref = comparison.reference
    tolerance = comparison.tolerance
    for i, (curve, fit, inside) in enumerate(zip(comparison.curves, comparison.fits, within(comparison))):
        style = series_style(i)
        role = _role(i, ref, inside, tolerance)
        order = np.argsort(curve.shear_rate)
        axes.plot(curve.shear_rate[order], curve.viscosity[order], linestyle="none",
                  marker=style["marker"], color=style["color"], markersize=4.5,
                  markerfacecolor=style["color"] if i == ref else "white", zorder=4)
        grid = np.geomspace(*curve.shear_rate_range, 200)
        width = 2.4 if i == ref else 1.5
        axes.plot(grid, fit.viscosity(grid), color=style["color"], linestyle=style["linestyle"],
                  linewidth=width, zorder=3)
        axes.plot([], [], color=style["color"], linestyle=style["linestyle"], linewidth=width,
                  marker=style["marker"], markerfacecolor=style["color"] if i == ref else "white",
                  label=f"{plain(curve.name)}{role}: data and {fit.declaration.title} fit")
    log_axes(axes)
    axes.set_xlabel(SHEAR_RATE_LABEL)
    axes.set_ylabel(VISCOSITY_LABEL)
    axes.set_title(f"Lot comparison ({plain(comparison.model)} model)")
    legend_below(figure, axes, columns=1)
    return figure
