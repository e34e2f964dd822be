"""Sweep direction: segments of a ramp (up, down, ...) and the hysteresis between them.

A sweep measured up and then down again should retrace itself when the
sample is at steady state.  A gap between the two segments — a hysteresis
loop — is the classic sign of time-dependent (thixotropic or
rheopectic) behaviour (Barnes (1997), J. Non-Newtonian Fluid Mech. 70, 1-33;
Mewis & Wagner (2009), Adv. Colloid Interface Sci. 147-148, 214-227); the
importer measures it and flags it.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from rheofit.curve import Flag, FlowCurve
from rheofit.errors import InputFileError, ParameterError, choice_message, spelled

#: relative viscosity difference between segments above which a hysteresis is flagged [-]
HYSTERESIS_THRESHOLD = 0.05
#: which points of a sweep to keep: every point, those of rising or those of falling shear rate
SEGMENTS = ("all", "up", "down")


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
    data = {"max_relative_difference": float(gap), "shear_rate": float(shear_rate[point]),
            "line": int(lines[point]), "segments": [a, a + 1]}
    return Flag("hysteresis", _hysteresis_message(data, "all"), data)


def _hysteresis_message(data: dict, kept: str) -> str:
    a, b = data["segments"]
    advice = (
        "fit one segment (" + spelled("segment='up' or 'down'", "--segment up or --segment down")
        + ") or allow more time per point" if kept == "all" else
        f"only the {kept} segment was kept, as asked; check that it is at steady state"
    )
    return (
        f"Viscosity differs by up to {data['max_relative_difference'] * 100:.0f} % between sweep "
        f"segments {a} and {b} (at {data['shear_rate']:.3g} 1/s, line {data['line']}): a hysteresis "
        "loop, a sign of time-dependent (thixotropic) behaviour or of points taken before steady "
        f"state; {advice}."
    )


def check_segment(which: str) -> str:
    """``which`` if it is one of SEGMENTS, else ParameterError listing them."""
    if which not in SEGMENTS:
        raise ParameterError(choice_message(spelled("segment", "--segment"), str(which), SEGMENTS))
    return which


def runs_up(shear_rate: np.ndarray, segment: np.ndarray) -> np.ndarray:
    """Per point: True where its segment runs up in shear rate.

    Segment 0 rises when its last shear rate is at least its first; a later
    segment rises when it ends above the end of the segment before it (so a
    one-point segment has a direction too).
    """
    count = int(segment.max()) + 1 if segment.size else 0
    last = np.array([shear_rate[segment == s][-1] for s in range(count)])
    up = np.empty(count, dtype=bool)
    if count:
        up[0] = last[0] >= shear_rate[segment == 0][0]
        up[1:] = last[1:] > last[:-1]
    return up[segment]


def keep_segment(curve: FlowCurve, which: str, shown: str) -> FlowCurve:
    """The points of ``curve`` in its up or down segments (``which``), flagged; all for 'all'.

    A sweep that runs only that way is returned as it is.  Raises
    InputFileError naming the file when fewer than 3 points are left.
    """
    if which == "all" or curve.segment is None:
        return curve
    keep = runs_up(curve.shear_rate, curve.segment) == (which == "up")
    if keep.all():
        return curve
    sweep = curve.metadata.get("import", {}).get("sweep", "")
    if keep.sum() < 3:
        other = "down" if which == "up" else "up"
        raise InputFileError(
            f"File '{shown}' ({curve.name}: {sweep}) has {int(keep.sum())} points in "
            f"{which} segments; a flow curve needs at least 3, so choose "
            f"{spelled(f'segment={other!r}', f'--segment {other}')} or "
            f"{spelled(repr('all'), 'all')}."
        )
    flags = tuple(Flag(f.code, _hysteresis_message(f.data, which), f.data) if f.code == "hysteresis" else f
                  for f in curve.flags)
    kept = Flag("segment_kept", f"Only the {which} segment of the {sweep} sweep was used "
                f"({int(keep.sum())} of {keep.size} points), as asked.",
                {"segment": which, "points": int(keep.sum()), "of": int(keep.size)})
    metadata = dict(curve.metadata, **{"import": dict(curve.metadata.get("import", {}), segment=which)})
    return replace(curve, shear_rate=curve.shear_rate[keep], viscosity=curve.viscosity[keep],
                   stress=curve.stress[keep], segment=curve.segment[keep], flags=flags + (kept,),
                   metadata=metadata)


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
