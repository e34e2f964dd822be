"""Sweep direction: segments of a ramp (up, down, ...) and the hysteresis between them.

A sweep measured up and then down again should retrace itself when the
sample is at steady state.  A gap between the two segments — a hysteresis
loop — is the classic sign of time-dependent (thixotropic or
rheopectic) behaviour (Barnes (1997), J. Non-Newtonian Fluid Mech. 70, 1-33;
Mewis & Wagner (2009), Adv. Colloid Interface Sci. 147-148, 214-227); the
importer measures it and flags it.
"""

from __future__ import annotations

import numpy as np

from rheofit.curve import Flag

#: relative viscosity difference between segments above which a hysteresis is flagged [-]
HYSTERESIS_THRESHOLD = 0.05


def segments(shear_rate: np.ndarray) -> np.ndarray:
    """Segment index per point: a new segment starts where the ramp turns round.

    The turning point belongs to the segment it ends.  A single step against
    the trend between two steps with it (scatter of a measured shear rate)
    does not start a segment.
    """
    n = shear_rate.size
    segment = np.zeros(n, dtype=int)
    if n < 3:
        return segment
    sign = _fill_flat_steps(_directions(shear_rate))
    lone = (sign[1:-1] != sign[:-2]) & (sign[:-2] == sign[2:])
    sign[1:-1][lone] = sign[:-2][lone]
    np.cumsum(sign[1:] != sign[:-1], out=segment[2:])
    return segment


def _directions(shear_rate: np.ndarray, chunk: int = 1 << 16) -> np.ndarray:
    """Per step of ln(shear rate): +1 up, -1 down, 0 flat (within 1e-9), as int8, computed in chunks."""
    sign = np.empty(shear_rate.size - 1, dtype=np.int8)
    for low in range(0, sign.size, chunk):
        step = np.diff(np.log(shear_rate[low : low + chunk + 1]))
        sign[low : low + step.size] = (step > 1e-9).view(np.int8) - (step < -1e-9).view(np.int8)
    return sign


def _fill_flat_steps(sign: np.ndarray) -> np.ndarray:
    """Steps that keep the shear rate take the direction of the next step (at the end, the last).

    So a top shear rate measured twice (end of the up ramp, start of the down
    ramp) puts its second point in the down segment.
    """
    nonzero = np.flatnonzero(sign)
    if nonzero.size == sign.size:
        return sign
    if nonzero.size == 0:
        return np.ones_like(sign)
    following = np.minimum.accumulate(np.where(sign != 0, np.arange(sign.size), sign.size)[::-1])[::-1]
    following[following == sign.size] = nonzero[-1]
    return sign[following]


def describe(shear_rate: np.ndarray, segment: np.ndarray) -> str:
    """``"ascending"``, ``"descending"``, ``"up-down"``, ``"down-up"`` or ``"N segments"``."""
    count = int(segment.max()) + 1 if segment.size else 0
    first = segment == 0
    rising = shear_rate[first][-1] >= shear_rate[first][0] if first.any() else True
    if count == 1:
        return "ascending" if rising else "descending"
    if count == 2:
        return "up-down" if rising else "down-up"
    return f"{count} segments"


def hysteresis(shear_rate, viscosity, segment, lines) -> Flag | None:
    """Flag the largest viscosity gap between consecutive segments, when above the threshold.

    The gap at a shear rate of the later segment is |eta_b / eta_a - 1|, with
    eta_a interpolated log-log along the earlier segment inside the shear-rate
    range both cover.
    """
    worst = None
    for a in range(int(segment.max()) if segment.size else 0):
        found = _gap(shear_rate, viscosity, segment, a, a + 1)
        if found and (worst is None or found[0] > worst[0]):
            worst = found + (a,)
    if worst is None or worst[0] <= HYSTERESIS_THRESHOLD:
        return None
    gap, point, a = worst
    return Flag(
        "hysteresis",
        f"Viscosity differs by up to {gap * 100:.0f} % between sweep segments {a} and {a + 1} "
        f"(at {shear_rate[point]:.3g} 1/s, line {lines[point]}): a hysteresis loop, a sign of "
        "time-dependent (thixotropic) behaviour or of points taken before steady state; "
        "fit one segment (curve.segment) or allow more time per point.",
        {"max_relative_difference": float(gap), "shear_rate": float(shear_rate[point]),
         "line": int(lines[point]), "segments": [a, a + 1]},
    )


def _gap(shear_rate, viscosity, segment, a: int, b: int):
    first, second = segment == a, segment == b
    if first.sum() < 2 or second.sum() < 1:
        return None
    x = np.log(shear_rate[first])
    y = np.log(viscosity[first])
    order = np.argsort(x, kind="stable")
    x, y = x[order], y[order]
    where = np.flatnonzero(second)
    xb = np.log(shear_rate[where])
    inside = (xb >= x[0]) & (xb <= x[-1])
    if not inside.any():
        return None
    reference = np.exp(np.interp(xb[inside], x, y))
    gaps = np.abs(viscosity[where][inside] / reference - 1.0)
    k = int(np.argmax(gaps))
    return float(gaps[k]), int(where[inside][k])
