"""Display units: SI values shown in the unit a practitioner reads most easily.

One table (:data:`DISPLAY_UNITS`) serves the console, the HTML report and the
figures, so a pressure reads in the same unit everywhere.
"""

from __future__ import annotations

import math

import numpy as np


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
