"""Display units: SI values shown in the unit a practitioner reads most easily.

One table (:data:`DISPLAY_UNITS`) serves the console, the HTML report and the
figures, so a pressure reads in the same unit everywhere.
"""

from __future__ import annotations

import math
import unicodedata

import numpy as np


def visible(value) -> str:
    """Text from a file made safe for a terminal: control and format characters (escape
    codes, carriage returns, bidirectional overrides) shown as ``\\x1b``-style escapes.

    >>> print(visible("lot\\x1b[2J A\\u202e"))
    lot\\x1b[2J A\\u202e
    """
    text = str(value)
    return "".join(c if unicodedata.category(c) not in ("Cc", "Cf") else
                   (f"\\x{ord(c):02x}" if ord(c) < 0x100 else f"\\u{ord(c):04x}") for c in text)


def markup_safe(value) -> str:
    """Text from a file for a place that reads rich markup (a progress line, an f-string
    printed by a console): :func:`visible`, with ``[`` escaped so ``[/]`` prints as itself."""
    from rich.markup import escape

    return escape(visible(value))


def literal(value):
    """Text from a file as a rich ``Text`` (never read as markup) with :func:`visible` escapes,
    for table cells."""
    from rich.text import Text

    return Text(visible(value))


def number(x, digits: int = 4) -> str:
    """Compact number: 4 significant digits, '—' for missing."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "—"
    return f"{x:.{digits}g}"


#: display units chosen by magnitude: (SI threshold, factor, label)
DISPLAY_UNITS = {
    "pressure": [(1e6, 1e-6, "MPa"), (1e3, 1e-3, "kPa"), (0.0, 1.0, "Pa")],
    "flow_rate": [(1e-6 / 60, 60e6, "mL/min"), (0.0, 60e9, "µL/min")],
    "velocity": [(1.0, 1.0, "m/s"), (0.0, 1e3, "mm/s")],
}


def shown(value, kind: str) -> str:
    """An SI value in the unit a practitioner reads most easily."""
    if value is None or not math.isfinite(float(value)):
        return "—"
    for threshold, factor, label in DISPLAY_UNITS[kind]:
        if abs(value) >= threshold:
            return f"{value * factor:.4g} {label}"
    return f"{value:.4g}"


def display_scale(kind: str, values) -> tuple[float, str]:
    """(factor, unit) that shows SI ``values`` of ``kind`` in a practical unit.

    Kinds and units follow the console's :func:`shown`
    (pressure: Pa, kPa, MPa; flow_rate: µL/min, mL/min; velocity: mm/s, m/s),
    chosen by the largest magnitude so that one axis has one unit.
    """
    finite = [abs(float(v)) for v in np.ravel(np.asarray(values, dtype=float)) if math.isfinite(float(v))]
    largest = max(finite, default=0.0)
    for threshold, factor, label in DISPLAY_UNITS[kind]:
        if largest >= threshold:
            return factor, label
    _, factor, label = DISPLAY_UNITS[kind][-1]
    return factor, label


def length_scale(metres: float) -> tuple[float, str]:
    """(factor, unit) for a length: µm below 1 mm, mm below 1 m, else m."""
    if metres < 1e-3:
        return 1e6, "µm"
    return (1e3, "mm") if metres < 1.0 else (1.0, "m")
