"""Figures of fits, flows and lot comparisons (matplotlib, imported lazily).

Every figure function takes plain results (FitResult, FlowPrediction,
Comparison, and the curves computed for them beforehand: ViscosityBand from
:mod:`rheofit.fitting.band`, OperatingCurve and VelocityProfile from
:mod:`rheofit.flow.curves`) and returns a :class:`matplotlib.figure.Figure`
drawn on the Agg canvas: no display, no pyplot state, nothing imported
before the first figure is asked for.  The figures draw; they run no flow
solve and no Monte Carlo (tests/test_results_data.py checks their imports).

=================================  ==============================================
:func:`flow_curve_figure`          viscosity against shear rate: data, the top
                                   models by AICc, the chosen model's 95 % band,
                                   the measured range, operating points; the
                                   extrapolated part dashed
:func:`residuals_figure`           log-space residuals against shear rate
:func:`velocity_profile_figure`    velocity across the channel against the
                                   Newtonian profile at the same flow rate,
                                   with the plug of a yield-stress fluid
:func:`operating_curve_figure`     pressure drop against flow rate with the
                                   Newtonian line(s), the uncertainty band and
                                   the operating point
:func:`lot_overlay_figure`         each lot's data and fit, shared range shaded
=================================  ==============================================

Style: units on every axis, log axes where the trade reads them (flow
curves), linear axes for the pressure-flow curve (so that a threshold
pressure shows as an intercept), and a palette of our own choosing that
stays apart under the common colour-vision deficiencies; series differ in
line style and marker as well, so that the figures read in grey-scale print.
"""

from __future__ import annotations

import functools
import importlib
import io
import math
import re

#: series colours, our own selection: a dark blue, an amber, a sky blue, a brown
#: and a mid grey.  They differ in lightness (grey-scale print) and along the
#: blue-yellow axis that red-green deficient viewers keep; tests check that
#: every pair stays apart under simulated protanopia, deuteranopia and tritanopia.
SERIES = ("#0b3c6f", "#e69a1c", "#5aa9e6", "#8a4b08", "#6e6e6e")
#: line styles and markers cycled together with the colours
LINESTYLES = ("-", (0, (1, 1.5)), "-.", (0, (6, 1.5, 1, 1.5, 1, 1.5)), (0, (4, 2)))
MARKERS = ("o", "s", "^", "D", "v")
#: named colours for the few roles that are not a series
INK = "#1d1d1d"          # data, text
MUTED = "#8c8c8c"        # reference lines
RANGE_FILL = "#e9eef4"   # the measured shear-rate range
PLUG_FILL = "#f3e3c4"    # the unsheared plug
#: the extrapolated part of a model curve
EXTRAPOLATED = (0, (5, 3))

#: figure size [in]: fits a printed page and a laptop screen
FIGSIZE = (6.6, 4.6)

STYLE = {
    "font.size": 10.0,
    "axes.titlesize": 11.0,
    "axes.labelsize": 10.5,
    "legend.fontsize": 9.0,
    "axes.grid": True,
    "axes.grid.which": "major",
    "grid.color": "#dcdcdc",
    "grid.linewidth": 0.6,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.edgecolor": "#444444",
    "legend.frameon": False,
    "lines.linewidth": 1.6,
    "lines.markersize": 5.0,
    "svg.fonttype": "path",       # glyphs as paths: the same picture with or without fonts
    "svg.hashsalt": "rheofit",    # stable ids, so a report is reproducible
    "savefig.dpi": 150,
}

#: axis labels, units always in brackets
SHEAR_RATE_LABEL = r"shear rate $\dot{\gamma}$ [1/s]"
VISCOSITY_LABEL = r"viscosity $\eta$ [Pa·s]"


def series_style(i: int) -> dict:
    """Colour, line style and marker of series ``i`` (cycled)."""
    return {"color": SERIES[i % len(SERIES)], "linestyle": LINESTYLES[i % len(LINESTYLES)],
            "marker": MARKERS[i % len(MARKERS)]}


def plain(text) -> str:
    """A user string safe for matplotlib text: '$' would start mathtext."""
    return str(text).replace("$", r"\$")


def styled(function):
    """Run a figure function inside the house style (rcParams set for it only)."""

    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        import matplotlib

        with matplotlib.rc_context(STYLE):
            return function(*args, **kwargs)

    return wrapper


def new_figure(figsize=FIGSIZE):
    """A Figure on the Agg canvas with constrained layout (no pyplot, no display)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def legend_below(figure, axes, columns: int = 2):
    """The legend under the axes, outside them, so it never hides data."""
    handles, labels = axes.get_legend_handles_labels()
    if not handles:
        return None
    columns = min(columns, len(handles))
    return figure.legend(handles, labels, loc="outside lower center", ncols=columns)


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def decade_label(value: float, _position=None) -> str:
    """A log-axis tick as people write it: 0.01, 0.1, 1, 10, 1000, and 10⁵ beyond.

    Plain text, no mathtext: quicker to draw and easier to read.
    """
    if not (value > 0 and math.isfinite(value)):
        return ""
    exponent = math.floor(math.log10(value) + 1e-9)
    if -3 <= exponent <= 4:
        return f"{value:.{max(-exponent, 0)}f}" if exponent < 0 else f"{value:g}"
    mantissa = value / 10.0**exponent
    head = "" if abs(mantissa - 1.0) < 1e-9 else f"{mantissa:g}×"
    return head + "10" + str(exponent).translate(_SUPERSCRIPT)


def _minor_label(axis):
    """Label 2 and 5 times a decade, but only on an axis spanning less than two decades."""

    def label(value, _position=None):
        low, high = sorted(axis.get_view_interval())
        if not (low > 0 and high / low < 100.0):
            return ""
        mantissa = value / 10.0 ** math.floor(math.log10(value) + 1e-9)
        return decade_label(value) if round(mantissa) in (2, 5) and abs(mantissa - round(mantissa)) < 1e-6 else ""

    return label


def log_axes(axes, x: bool = True, y: bool = True) -> None:
    """Log scale on the chosen axes, decades labelled by :func:`decade_label`."""
    from matplotlib.ticker import FuncFormatter

    for on, axis, scale in ((x, axes.xaxis, axes.set_xscale), (y, axes.yaxis, axes.set_yscale)):
        if on:
            scale("log")
            axis.set_major_formatter(FuncFormatter(decade_label))
            axis.set_minor_formatter(FuncFormatter(_minor_label(axis)))


# --- display units ----------------------------------------------------------------

def _flat(values):
    import numpy as np

    return np.ravel(np.asarray(values, dtype=float))


# --- output -------------------------------------------------------------------------

_PROLOG = re.compile(r"^.*?(?=<svg)", re.S)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)
_ID = re.compile(r'\bid="([^"]+)"')
_REF = re.compile(r'(href="#|url\(#)([^")]+)')


def svg_text(figure, prefix: str = "") -> str:
    """The figure as an ``<svg>`` element for inline use in HTML.

    The XML prolog, doctype and metadata are dropped; with ``prefix`` every
    id (and every reference to it) gets that prefix, so that several figures
    can share one HTML document without clashing ids.
    """
    import matplotlib

    buffer = io.StringIO()
    with matplotlib.rc_context(STYLE):
        figure.savefig(buffer, format="svg", metadata={"Date": None})
    # the layout is settled now; later saves (PNG) keep it instead of solving it again
    figure.set_layout_engine("none")
    text = _METADATA.sub("", _PROLOG.sub("", buffer.getvalue(), count=1))
    if prefix:
        text = _ID.sub(lambda m: f'id="{prefix}{m.group(1)}"', text)
        text = _REF.sub(lambda m: f"{m.group(1)}{prefix}{m.group(2)}", text)
    return text


def png_bytes(figure, dpi: int = 150) -> bytes:
    """The figure as PNG bytes."""
    import matplotlib

    buffer = io.BytesIO()
    with matplotlib.rc_context(STYLE):
        figure.savefig(buffer, format="png", dpi=dpi, metadata={"Software": None})
    return buffer.getvalue()


def save_figure(figure, directory, stem: str, *, force: bool = False, svg: str | None = None) -> list:
    """Write ``stem.png`` and ``stem.svg`` into ``directory`` (atomically; see write_atomic).

    ``svg`` reuses text from :func:`svg_text` instead of drawing the figure again.
    """
    from pathlib import Path

    from rheofit.output import write_atomic

    directory = Path(directory)
    svg = svg_text(figure) if svg is None else svg
    header = '<?xml version="1.0" encoding="utf-8" standalone="no"?>\n'
    return [write_atomic(directory / f"{stem}.svg", header + svg, force=force),
            write_atomic(directory / f"{stem}.png", png_bytes(figure), force=force)]


def close(figure) -> None:
    """Release a figure's memory (figures made here are not held by pyplot)."""
    figure.clear()


# --- the figure functions, loaded on first use ---------------------------------------------

_FIGURES = {
    "flow_curve_figure": "rheofit.report.figures_fit",
    "residuals_figure": "rheofit.report.figures_fit",
    "velocity_profile_figure": "rheofit.report.figures_flow",
    "operating_curve_figure": "rheofit.report.figures_flow",
    "lot_overlay_figure": "rheofit.report.figures_compare",
}

__all__ = [*_FIGURES, "SERIES", "LINESTYLES", "MARKERS", "series_style", "svg_text", "png_bytes",
           "save_figure", "decade_label", "log_axes"]


def __getattr__(name: str):
    module = _FIGURES.get(name)
    if module is None:
        raise AttributeError(f"module 'rheofit.report.plots' has no attribute '{name}'")
    return getattr(importlib.import_module(module), name)
