"""Curves around one flow prediction, as data: the operating curve dP(Q) and the velocity profile.

:func:`operating_curve` solves the pressure drop a fluid needs over flow
rates from 0 to twice the operating one (with the 95 % band of a fit,
:func:`rheofit.flow.intervals.flow_intervals`, and the Newtonian lines);
:func:`profile_against_newtonian` puts the prediction's profile beside a
Newtonian fluid carrying the same flow rate.  Both are frozen objects that
the report draws and that go to JSON (``to_dict``) as they are; the
operating curve also to pandas (``to_frame``).

Units: flow rate [m^3/s], pressure [Pa], position [m from the centre line],
velocity [m/s], viscosity [Pa*s].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.fitting.draws import LEVEL
from rheofit.fluid import fluid as make_fluid
from rheofit.flow import engine
from rheofit.flow.intervals import flow_intervals
from rheofit.output import json_safe

__all__ = ["NewtonianLine", "OperatingCurve", "VelocityProfile", "operating_curve", "profile_against_newtonian",
           "newtonian_profile"]

#: even steps of the flow-rate grid (linear axis) ...
LINEAR_POINTS = 32
#: ... and log-spaced steps from 1e-4 of the span, where dP(Q) bends fast near Q = 0
LOG_POINTS = 16
#: the operating curve runs to this multiple of the operating flow rate [-]
SPAN = 2.0


@dataclass(frozen=True)
class NewtonianLine:
    """dP(Q) [Pa] of a Newtonian fluid with viscosity ``viscosity`` [Pa*s], on the curve's grid.

    ``basis`` says where the viscosity comes from: ``"operating point"`` (the
    prediction's reference viscosity) or ``"zero shear"`` (the model's eta0).
    """

    basis: str
    viscosity: float
    pressure_drop: np.ndarray


@dataclass(frozen=True, eq=False)
class OperatingCurve:
    """Pressure drop against flow rate for one fluid in one geometry (SI).

    Attributes
    ----------
    flow_rate : (M,) array [m^3/s] from 0; pressure_drop : (M,) array [Pa]
        the model needs (the threshold pressure drop at Q = 0).
    low, high : (M,) arrays [Pa], the band of the pressure drop, or None for
        a fluid with given parameters (no uncertainty); nan at Q = 0 (not
        computed: at rest, a yield-stress fluid holds any pressure drop up to
        its threshold).
    level, method, samples : of the band (None without one).
    newtonian : the Newtonian lines.
    threshold_pressure_drop : [Pa] below which a yield-stress fluid rests (0 without).
    flags : anything that makes the band unreliable.
    """

    flow_rate: np.ndarray
    pressure_drop: np.ndarray
    low: np.ndarray | None
    high: np.ndarray | None
    level: float | None
    method: str | None
    samples: int | None
    newtonian: tuple[NewtonianLine, ...]
    threshold_pressure_drop: float
    flags: tuple[Flag, ...] = ()

    def to_dict(self) -> dict:
        """A JSON-able dict (arrays as lists, nan as null)."""
        return {
            "flow_rate": json_safe(self.flow_rate),
            "pressure_drop": json_safe(self.pressure_drop),
            "low": json_safe(self.low),
            "high": json_safe(self.high),
            "level": self.level,
            "method": self.method,
            "samples": self.samples,
            "newtonian": [{"basis": line.basis, "viscosity": json_safe(line.viscosity),
                           "pressure_drop": json_safe(line.pressure_drop)} for line in self.newtonian],
            "threshold_pressure_drop": json_safe(self.threshold_pressure_drop),
            "flags": [json_safe(flag.to_dict()) for flag in self.flags],
        }

    def to_frame(self):
        """A pandas DataFrame, one row per flow rate: ``flow_rate`` [m^3/s],
        ``pressure_drop`` [Pa], ``pressure_drop_low``/``_high`` [Pa] (with a
        band) and ``newtonian_<basis>`` [Pa] per Newtonian line (spaces as _)."""
        import pandas as pd

        columns = {"flow_rate": self.flow_rate, "pressure_drop": self.pressure_drop}
        if self.low is not None:
            columns.update(pressure_drop_low=self.low, pressure_drop_high=self.high)
        for line in self.newtonian:
            columns["newtonian_" + line.basis.replace(" ", "_")] = line.pressure_drop
        return pd.DataFrame({name: np.asarray(values, float) for name, values in columns.items()})


@dataclass(frozen=True, eq=False)
class VelocityProfile:
    """Velocity from the centre line to the wall: the model against a Newtonian fluid (SI).

    ``position`` [m] from the centre line (tube: r, slit: y) to the wall;
    ``velocity`` [m/s] of the model (operating point 0 of the prediction);
    ``newtonian_velocity`` [m/s] of a Newtonian fluid carrying the same flow
    rate (zeros when nothing flows); ``plug_half_width`` [m] of the unsheared
    core of a yield-stress fluid (0 without one or at rest).
    """

    position: np.ndarray
    velocity: np.ndarray
    newtonian_velocity: np.ndarray
    plug_half_width: float

    def to_dict(self) -> dict:
        """A JSON-able dict (arrays as lists)."""
        return {"position": json_safe(self.position), "velocity": json_safe(self.velocity),
                "newtonian_velocity": json_safe(self.newtonian_velocity),
                "plug_half_width": json_safe(self.plug_half_width)}


def _first(value) -> float:
    return float(np.ravel(value)[0])


# --- operating curve ----------------------------------------------------------------

def _flow_span(prediction) -> float:
    """The largest flow rate of the curve [m^3/s]: SPAN times the operating one, or (at
    rest) the flow at three times the larger of the threshold and the given pressure drop."""
    q = float(np.nanmax(np.ravel(prediction.flow_rate)))
    if q > 0:
        return SPAN * q
    dp = float(np.nanmax(np.ravel(prediction.pressure_drop)))
    target = 3.0 * max(prediction.threshold_pressure_drop, dp)
    return float(engine.flow_rate(prediction.fluid, prediction.geometry, target))


def flow_rate_grid(span: float) -> np.ndarray:
    """Flow rates [m^3/s] from 0 to ``span``: even steps plus log steps near 0."""
    even = np.linspace(0.0, span, LINEAR_POINTS + 1)[1:]
    return np.r_[0.0, np.union1d(even, np.geomspace(1e-4 * span, span, LOG_POINTS))]


def _newtonian_lines(prediction, q) -> tuple[NewtonianLine, ...]:
    """dP = geometry.pressure_drop(eta * apparent wall shear rate(Q)) for the reference
    viscosity and the zero-shear one (Hagen-Poiseuille in a tube, plane Poiseuille in a slit)."""
    geometry = prediction.geometry
    lines = []
    for basis, eta in (("operating point", _first(prediction.newtonian_viscosity)),
                       ("zero shear", prediction.zero_shear_viscosity)):
        if eta is not None and math.isfinite(eta):
            dp = geometry.pressure_drop(eta * geometry.apparent_wall_shear_rate(q))
            lines.append(NewtonianLine(basis, float(eta), np.asarray(dp, float)))
    return tuple(lines)


def _band(fit, geometry, q):
    """(low, high, level, method, samples, flags) of dP over q, None's without a fit.

    Not computed at Q = 0 (nan): at rest, a yield-stress fluid holds any
    pressure drop up to its threshold.
    """
    if fit is None:
        return None, None, None, None, None, ()
    result = flow_intervals(fit, geometry, flow_rate=q[1:], level=LEVEL)
    low, high = (np.r_[math.nan, end] for end in result.intervals["pressure_drop"])
    return low, high, LEVEL, result.method, result.samples, result.flags


def operating_curve(prediction, fit=None) -> OperatingCurve:
    """dP(Q) of the prediction's fluid and geometry, from Q = 0 to twice the operating flow rate.

    Solved by :func:`rheofit.flow.engine.pressure_drop` (the Rabinowitsch-Mooney
    relation of the geometry); at Q = 0 the threshold pressure drop (0 without
    a yield stress); at rest, out to the flow at three times the larger of the
    threshold and the given pressure drop.  With ``fit`` (the FitResult
    behind the prediction) the curve carries its 95 % band; the Newtonian
    lines use the prediction's reference viscosity and, when the model has
    one, its zero-shear viscosity.
    """
    q = flow_rate_grid(_flow_span(prediction))
    dp = np.asarray(engine.pressure_drop(prediction.fluid, prediction.geometry, q[1:]), float)
    dp = np.r_[prediction.threshold_pressure_drop, dp]
    low, high, level, method, samples, flags = _band(fit, prediction.geometry, q)
    return OperatingCurve(q, dp, low, high, level, method, samples, _newtonian_lines(prediction, q),
                          float(prediction.threshold_pressure_drop), tuple(flags))


# --- velocity profile ---------------------------------------------------------------

def newtonian_profile(geometry, flow_rate: float, position) -> np.ndarray:
    """Velocity [m/s] of a Newtonian fluid carrying the same flow rate [m^3/s] at ``position`` [m].

    Computed by the same engine (a parabola: tube u = 2 V (1 - (r/R)^2),
    slit u = 1.5 V (1 - (y/h)^2); Bird, Stewart & Lightfoot 2002, ch. 2);
    at fixed Q the viscosity cancels.
    """
    newtonian = make_fluid("newtonian", mu=1.0)
    dp = engine.pressure_drop(newtonian, geometry, flow_rate)
    tau_w = float(geometry.wall_shear_stress(dp))
    return engine.velocity_profile(newtonian, geometry, tau_w, np.abs(position))


def profile_against_newtonian(prediction) -> VelocityProfile:
    """The prediction's profile (operating point 0) beside the Newtonian one at the same Q."""
    position = np.asarray(prediction.profile["position"], float)
    velocity = np.asarray(prediction.profile["velocity"], float)
    flow_rate = _first(prediction.flow_rate)
    newtonian = newtonian_profile(prediction.geometry, flow_rate, position) if flow_rate > 0 else 0 * position
    flowing = bool(_first(prediction.flowing))
    plug = _first(prediction.plug_fraction) * prediction.geometry.half_size if flowing else 0.0
    return VelocityProfile(position, velocity, np.asarray(newtonian, float), float(plug))
