"""The headline of a flow prediction: what to read first, with the evidence it rests on.

Four parts, in the order shown (text, console, HTML, lot verdicts and report rows all use them):

1. ``warning``: one line BEFORE the number when the data reject the model the
   user chose, or when only one model could be ranked (None otherwise);
2. ``answer``: the solved quantity with its 95 % interval (or, when the
   sample does not flow, the threshold pressure drop and nothing else);
3. ``reach``: where the wall shear rate lies against the measured shear
   rates: inside, or extrapolated by a factor above or below;
4. ``evidence``: the model's misfit (rms in log space, runs test), its Akaike
   weight and any unresolved parameter (:mod:`rheofit.fitting.evidence`);
   None for a fluid with given parameters.

Values go through ``show(value, kind)`` with kind ``"pressure"`` or
``"flow_rate"``; the default writes SI (Pa, m^3/s), the reports pass their
display units.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

_SI = {"pressure": "Pa", "flow_rate": "m^3/s"}
_KIND = {"pressure_drop": "pressure", "flow_rate": "flow_rate"}
_WORDS = {"pressure_drop": "pressure drop", "flow_rate": "flow rate"}


def si(value, kind: str) -> str:
    """'1.25e+04 Pa': a value in SI with 4 significant digits."""
    return f"{float(value):.4g} {_SI[kind]}"


@dataclass(frozen=True)
class Headline:
    """The parts of a prediction's headline (see the module docstring)."""

    warning: str | None
    answer: str
    reach: str | None
    evidence: str | None

    def lines(self) -> list[str]:
        """The parts that are there, warning first."""
        return [part for part in (self.warning, self.answer, self.reach, self.evidence) if part]


def solved(p) -> str:
    """'pressure_drop' or 'flow_rate': the quantity the prediction solved for."""
    if getattr(p, "solved_for", ""):
        return p.solved_for
    return "flow_rate" if p.flow_rate_ci95 is not None else "pressure_drop"


def flowing_points(p) -> np.ndarray:
    return np.atleast_1d(np.asarray(p.flowing, dtype=bool)).ravel()


def answer(p, show=si) -> str:
    """The solved quantity with its 95 % interval; for a sample at rest, its threshold only."""
    flowing = flowing_points(p)
    threshold = show(p.threshold_pressure_drop, "pressure")
    if not flowing.any():
        return (f"no flow: the wall shear stress stays below the yield stress; the sample starts to "
                f"flow only above {threshold} over this length")
    name = solved(p)
    kind, word = _KIND[name], _WORDS[name]
    values = np.atleast_1d(np.asarray(getattr(p, name), dtype=float)).ravel()
    ci = getattr(p, name + "_ci95")
    if values.size == 1:
        text = f"{word} {show(values[0], kind)}"
        if ci is None:
            return text + " (no 95 % interval: the parameters were given, not fitted)"
        low, high = (float(np.ravel(v)[0]) for v in ci)
        return text + f" (95 % interval {show(low, kind)} to {show(high, kind)})"
    shown = values[flowing]
    text = f"{word} {show(shown.min(), kind)} to {show(shown.max(), kind)} over {values.size} operating points"
    if not flowing.all():
        text += f" ({int((~flowing).sum())} at rest: flow starts above {threshold})"
    return text + ("" if ci is None else "; 95 % intervals per point in the table")


def reach(p) -> str | None:
    """'wall shear rate 2032 1/s: 2.03x above the measured 0.1 to 1000 1/s (extrapolated)' or inside."""
    measured = p.fluid.shear_rate_range
    flowing = flowing_points(p)
    if measured is None or not flowing.any():
        return None
    low, high = (float(v) for v in measured)
    rate = np.atleast_1d(np.asarray(p.wall_shear_rate, dtype=float)).ravel()[flowing]
    factor = np.maximum(low / rate, rate / high)
    where = f"the measured {low:.4g} to {high:.4g} 1/s"
    worst = int(np.argmax(factor))
    if factor[worst] <= 1.0:
        told = f"{rate[0]:.4g} 1/s" if rate.size == 1 else f"{rate.min():.4g} to {rate.max():.4g} 1/s"
        return f"wall shear rate {told}: inside {where}"
    side = "above" if rate[worst] > high else "below"
    if rate.size == 1:
        return f"EXTRAPOLATED: wall shear rate {rate[0]:.4g} 1/s lies {factor[0]:.3g}x {side} {where}"
    return (f"EXTRAPOLATED at {int((factor > 1).sum())} of {rate.size} points: the wall shear rate lies "
            f"up to {factor[worst]:.3g}x {side} {where} ({rate[worst]:.4g} 1/s)")


def extrapolation_factor(p) -> float:
    """The largest factor by which a flowing wall shear rate lies outside the measured range [-]
    (1 inside; NaN without a measured range or without flow)."""
    measured = p.fluid.shear_rate_range
    flowing = flowing_points(p)
    if measured is None or not flowing.any():
        return math.nan
    rate = np.atleast_1d(np.asarray(p.wall_shear_rate, dtype=float)).ravel()[flowing]
    return float(max(1.0, np.max(np.maximum(measured[0] / rate, rate / measured[1]))))


def beside_best(p, show=si) -> str | None:
    """'The best model (carreau) gives 325 kPa here; this answer is 3.3x that.' (None without one)."""
    best = getattr(p, "best_model", None)
    flowing = flowing_points(p)
    if not best or not flowing.any():
        return None
    name = solved(p)
    ours = np.atleast_1d(np.asarray(getattr(p, name), dtype=float)).ravel()[flowing]
    theirs = np.atleast_1d(np.asarray(best["value"], dtype=float)).ravel()[flowing]
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = ours / theirs
    if ours.size == 1:
        gives = f"{show(theirs[0], _KIND[name])} here"
        times = f"{ratio[0]:.2g}x that" if math.isfinite(ratio[0]) else "not comparable"
    else:
        gives = f"{show(np.nanmin(theirs), _KIND[name])} to {show(np.nanmax(theirs), _KIND[name])}"
        times = f"{np.nanmin(ratio):.2g}x to {np.nanmax(ratio):.2g}x those"
    return f"The best model ({best['model']}) gives {gives}; this answer is {times}."


def headline(p, show=si) -> Headline:
    """The four parts of ``p``'s headline."""
    evidence = getattr(p, "evidence", None)
    warning = None if evidence is None else evidence.warning()
    best = beside_best(p, show)
    if warning and best:
        warning = f"{warning} {best}"
    return Headline(warning, answer(p, show), reach(p),
                    None if evidence is None else f"evidence ({evidence.model} model): {evidence.line()}")
