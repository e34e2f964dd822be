"""predict(): pressure drop or flow rate, wall shear, profile and regime of a fluid in a geometry.

>>> from rheofit.fluid import fluid
>>> from rheofit.flow import Tube, predict
>>> p = predict(fluid("power_law", K=2.0, n=0.5), Tube("1 mm", "100 mm"), pressure_drop="20 kPa")
>>> round(p.wall_shear_stress, 6)      # dP R / (2 L) [Pa]
50.0
>>> round(p.newtonian_ratio, 6)        # ((3n+1)/(4n))^n for a power law in a tube
1.118034
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass, replace

import numpy as np

from rheofit.curve import Flag
from rheofit.errors import GeometryError, ParameterError
from rheofit.fluid import Fluid, as_fluid
from rheofit.flow import engine, regime
from rheofit.flow.geometry import check_geometry
from rheofit.markup import join, key_values, table, tag
from rheofit.output import json_safe
from rheofit.units import parse_quantity, parse_tolerance

#: the caution every flow output ends with (the CLI and reports reuse it)
SAFETY_CAUTION = (
    "Caution: these estimates assume laminar, isothermal, fully developed flow without wall "
    "slip. Check the pressure rating of every component (tubing, fittings, chips, syringes); "
    "check shear on living cells against the cells' own tolerance; follow local codes, "
    "biosafety rules and licensed engineering practice."
)

#: density used when none is given [kg/m^3] (water near room temperature)
DEFAULT_DENSITY = 1000.0
#: default relative tolerance before a Newtonian estimate is flagged as misleading
DEFAULT_TOLERANCE = 0.10

_DEFAULT_REFERENCE = "the model's viscosity at the apparent (Newtonian) wall shear rate"


@dataclass(frozen=True, eq=False)
class FlowPrediction:
    """A solved flow problem, all SI.  Scalars in, floats out; arrays in, arrays out.

    Attributes
    ----------
    pressure_drop [Pa], flow_rate [m^3/s], mean_velocity [m/s] (Q / area),
    max_velocity [m/s] (centre line; plug velocity with a yield stress),
    wall_shear_stress [Pa], wall_shear_rate [1/s], apparent_wall_shear_rate
    [1/s] (Newtonian: tube 4Q/(pi R^3), slit 6Q/(W H^2)), plug_fraction [-]
    (plug radius / R or plug half-thickness / h; 0 without a yield stress),
    flowing (False where a yield-stress fluid stays at rest),
    threshold_pressure_drop [Pa] (dP at which tau_w = tau_y; 0 without),
    flow_index [-] (local n' = d ln tau_w / d ln gd_app), reynolds [-]
    (Metzner-Reed, see :mod:`rheofit.flow.regime`), critical_reynolds [-],
    laminar (bool), laminar_criterion (text), newtonian_viscosity [Pa*s] and
    newtonian_reference (how it was chosen), newtonian_pressure_drop [Pa],
    newtonian_ratio [-] (= pressure_drop / newtonian_pressure_drop),
    zero_shear_viscosity [Pa*s] or None, zero_shear_pressure_drop [Pa],
    zero_shear_ratio [-] (None without a zero-shear plateau), density
    [kg/m^3], density_is_default, profile (pandas DataFrame with
    ``position`` [m from the centre line] and ``velocity`` [m/s]: of the
    single point, or of the FIRST point for array input; see
    :meth:`profile_at` for others), flags (tuple of Flag).

    Uncertainty (a prediction from a fit result; None for a fluid with given
    parameters): ``pressure_drop_ci95`` when the flow rate is given, or
    ``flow_rate_ci95`` when the pressure drop is, and
    ``wall_shear_stress_ci95`` and ``wall_shear_rate_ci95``: each a 95 %
    interval (low, high), floats or arrays shaped like the input;
    ``uncertainty_method`` (text) and ``uncertainty_samples`` (Monte Carlo
    draws), see :mod:`rheofit.flow.intervals`.

    Beside the best model (a model the data reject, chosen by the user; None
    otherwise): ``best_model``, ``{"model": name, "value": the best model's
    answer}`` for the solved quantity, said in the headline's warning
    (:func:`beside_best`).

    Evidence (a prediction from a fit result; None otherwise): ``evidence``,
    a :class:`rheofit.fitting.evidence.Evidence` (the model's misfit, runs
    test, Akaike weight, unresolved parameters), shown in the headline
    (:mod:`rheofit.flow.headline`) with ``solved_for`` ("pressure_drop" or
    "flow_rate") and the extrapolation.
    """

    geometry: object
    fluid: Fluid
    pressure_drop: object
    flow_rate: object
    mean_velocity: object
    max_velocity: object
    wall_shear_stress: object
    wall_shear_rate: object
    apparent_wall_shear_rate: object
    plug_fraction: object
    flowing: object
    threshold_pressure_drop: float
    flow_index: object
    reynolds: object
    critical_reynolds: object
    laminar: object
    laminar_criterion: str
    newtonian_viscosity: object
    newtonian_reference: str
    newtonian_pressure_drop: object
    newtonian_ratio: object
    zero_shear_viscosity: float | None
    zero_shear_pressure_drop: object
    zero_shear_ratio: object
    density: float
    density_is_default: bool
    tolerance: float
    profile: object
    flags: tuple[Flag, ...]
    pressure_drop_ci95: tuple | None = None
    flow_rate_ci95: tuple | None = None
    wall_shear_stress_ci95: tuple | None = None
    wall_shear_rate_ci95: tuple | None = None
    uncertainty_method: str | None = None
    uncertainty_samples: int | None = None
    evidence: object = None
    solved_for: str = ""
    best_model: dict | None = None

    #: the interval fields, in the order shown
    _INTERVALS = ("pressure_drop_ci95", "flow_rate_ci95", "wall_shear_stress_ci95",
                  "wall_shear_rate_ci95")

    _ARRAYS = (
        "pressure_drop", "flow_rate", "mean_velocity", "max_velocity", "wall_shear_stress",
        "wall_shear_rate", "apparent_wall_shear_rate", "plug_fraction", "flowing", "flow_index",
        "reynolds", "critical_reynolds", "laminar", "newtonian_viscosity",
        "newtonian_pressure_drop", "newtonian_ratio", "zero_shear_pressure_drop", "zero_shear_ratio",
    )

    @property
    def size(self) -> int:
        """Number of operating points."""
        return int(np.size(self.pressure_drop))

    def profile_at(self, index: int = 0, points: int = 101):
        """Velocity profile (DataFrame: position [m], velocity [m/s]) of operating point ``index``."""
        stress = np.atleast_1d(self.wall_shear_stress).ravel()
        if not (isinstance(index, (int, np.integer)) and -stress.size <= index < stress.size):
            raise ParameterError(
                f"Operating point index {index!r} is out of range; valid: 0 to {stress.size - 1}."
            )
        return _profile_frame(self.fluid, self.geometry, float(stress[index]), points)

    def to_dict(self) -> dict:
        """Plain JSON-able dict: floats, lists (NaN as None), the profile as two lists."""
        out = {"geometry": self.geometry.to_dict(), "fluid": self.fluid.to_dict()}
        for name in self._ARRAYS:
            out[name] = json_safe(getattr(self, name))
        for name in ("threshold_pressure_drop", "laminar_criterion", "newtonian_reference",
                     "zero_shear_viscosity", "density", "density_is_default", "tolerance"):
            out[name] = json_safe(getattr(self, name))
        for name in self._INTERVALS:
            value = getattr(self, name)
            out[name] = None if value is None else [json_safe(value[0]), json_safe(value[1])]
        out["uncertainty_method"] = self.uncertainty_method
        out["uncertainty_samples"] = self.uncertainty_samples
        out["solved_for"] = self.solved_for
        out["evidence"] = None if self.evidence is None else self.evidence.to_dict()
        out["best_model"] = None if self.best_model is None else {
            "model": self.best_model["model"], "value": json_safe(self.best_model["value"]),
            "ratio": json_safe(np.asarray(getattr(self, self.solved_for), dtype=float)
                               / np.asarray(self.best_model["value"], dtype=float))}
        out["headline"] = self.headline().lines()
        out["profile"] = {
            "position": json_safe(self.profile["position"].to_numpy()),
            "velocity": json_safe(self.profile["velocity"].to_numpy()),
        }
        out["flags"] = [flag.to_dict() for flag in self.flags]
        out["caution"] = SAFETY_CAUTION
        return out

    def __str__(self) -> str:
        return self.text()

    def _repr_html_(self) -> str:
        """A compact HTML table for notebooks (every user string escaped)."""
        return _html(self)

    def headline(self, show=None):
        """The warning, the answer with its 95 % interval, the extrapolation and the evidence
        (:func:`rheofit.flow.headline.headline`; ``show(value, kind)`` formats values)."""
        from rheofit.flow import headline

        return headline.headline(self, show or headline.si)

    def text(self) -> str:
        """Readable report: headline, operating point(s), regime, Newtonian comparison, flags, caution."""
        label = f" '{self.fluid.name}'" if self.fluid.name else ""
        lines = [f"Flow of {self.fluid.model}{label} in a {self.geometry.describe()}"]
        top = self.headline()
        lines += [f"WARNING: {top.warning}"] if top.warning else []
        lines += [f"  {part}" for part in (top.answer, top.reach, top.evidence) if part]
        if np.ndim(self.pressure_drop) == 0 and not bool(self.flowing):
            lines.append(SAFETY_CAUTION)  # a sample at rest: the threshold is the whole answer
            return "\n".join(lines)
        lines += _scalar_lines(self) if np.ndim(self.pressure_drop) == 0 else _table_lines(self)
        lines.append(f"  laminar criterion: {self.laminar_criterion}")
        lines.append(f"  Newtonian reference viscosity: {self.newtonian_reference}")
        if self.zero_shear_viscosity is not None:
            lines.append(f"  zero-shear viscosity: {self.zero_shear_viscosity:.4g} Pa*s")
        default = " (default, not given)" if self.density_is_default else ""
        lines.append(f"  density: {self.density:.4g} kg/m^3{default}")
        if self.uncertainty_method:
            lines += textwrap.wrap(f"95 % intervals: {self.uncertainty_method}.", width=96,
                                   initial_indent="  ", subsequent_indent="    ")
        if self.flags:
            lines.append("Flags:")
            lines += [f"  - [{flag.code}] {flag.message}" for flag in self.flags]
        lines.append(SAFETY_CAUTION)
        return "\n".join(lines)


def _quantities(p: FlowPrediction) -> list[tuple[str, object, str]]:
    """(name, value, unit) of a prediction, in the order shown."""
    rows = [
        ("pressure drop", p.pressure_drop, "Pa"),
        ("flow rate", p.flow_rate, "m^3/s"),
        ("mean velocity", p.mean_velocity, "m/s"),
        ("max velocity (centre)", p.max_velocity, "m/s"),
        ("wall shear stress", p.wall_shear_stress, "Pa"),
        ("wall shear rate", p.wall_shear_rate, "1/s"),
        ("apparent wall shear rate", p.apparent_wall_shear_rate, "1/s"),
        ("plug fraction", p.plug_fraction, "-"),
        ("flow index n'", p.flow_index, "-"),
        ("Reynolds number", p.reynolds, "-"),
        ("critical Reynolds number", p.critical_reynolds, "-"),
        ("Newtonian viscosity", p.newtonian_viscosity, "Pa*s"),
        ("Newtonian pressure drop", p.newtonian_pressure_drop, "Pa"),
        ("pressure drop / Newtonian", p.newtonian_ratio, "-"),
    ]
    if p.zero_shear_viscosity is not None:
        rows += [("zero-shear pressure drop", p.zero_shear_pressure_drop, "Pa"),
                 ("pressure drop / zero-shear", p.zero_shear_ratio, "-")]
    return rows


def _interval_rows(p: FlowPrediction) -> list[tuple[str, tuple, str]]:
    """(name, (low, high), unit) of the 95 % intervals the prediction carries."""
    found = []
    for name, unit in (("pressure_drop", "Pa"), ("flow_rate", "m^3/s"), ("wall_shear_stress", "Pa"),
                       ("wall_shear_rate", "1/s")):
        ci = getattr(p, name + "_ci95")
        if ci is not None:
            found.append((name.replace("_", " ") + ", 95 %", ci, unit))
    return found


def _scalar_lines(p: FlowPrediction) -> list[str]:
    lines = [f"  {name:<27}{value:.4g} {unit}" for name, value, unit in _quantities(p)]
    lines.append(f"  {'laminar':<27}{'yes' if p.laminar else 'no'}")
    lines += [f"  {label:<27}{ci[0]:.4g} to {ci[1]:.4g} {unit}" for label, ci, unit in _interval_rows(p)]
    return lines


def _columns(p: FlowPrediction) -> list[tuple[str, object]]:
    """(heading, values) of the table of an array prediction."""
    columns = [("dP [Pa]", p.pressure_drop), ("Q [m^3/s]", p.flow_rate),
               ("tau_w [Pa]", p.wall_shear_stress), ("gd_w [1/s]", p.wall_shear_rate),
               ("V [m/s]", p.mean_velocity), ("Re", p.reynolds),
               ("dP/dP_Newt", p.newtonian_ratio)]
    for short, ci in (("dP", p.pressure_drop_ci95), ("Q", p.flow_rate_ci95)):
        if ci is not None:
            columns[2:2] = [(f"{short} 2.5%", ci[0]), (f"{short} 97.5%", ci[1])]
    return columns


def _table_lines(p: FlowPrediction, shown: int = 12) -> list[str]:
    columns = _columns(p)
    head = "  " + "".join(f"{name:>12}" for name, _ in columns) + f"{'laminar':>9}"
    lines = [head]
    flat = [np.ravel(values) for _, values in columns]
    laminar = np.ravel(p.laminar)
    for i in range(min(shown, p.size)):
        cells = "".join(f"{values[i]:>12.4g}" for values in flat)
        lines.append(f"  {cells}{'yes' if laminar[i] else 'no':>9}")
    if p.size > shown:
        lines.append(f"  ... {p.size - shown} more operating points (see to_dict())")
    return lines


def _html(p: FlowPrediction, shown: int = 12) -> str:
    """The prediction as a compact HTML block: quantities (or a table of points), flags, caution."""
    label = f" '{p.fluid.name}'" if p.fluid.name else ""
    parts = [tag("p", tag("strong", f"Flow of {p.fluid.model}{label} in a {p.geometry.describe()}"))]
    top = p.headline()
    if top.warning:
        parts.append(tag("p", tag("strong", "Warning: " + top.warning)))
    parts += [tag("p", part) for part in (top.answer, top.reach, top.evidence) if part]
    if np.ndim(p.pressure_drop) == 0 and not bool(p.flowing):
        parts.append(tag("p", SAFETY_CAUTION))
        return join(*parts)
    if np.ndim(p.pressure_drop) == 0:
        pairs = [(name, f"{float(value):.4g} {unit}") for name, value, unit in _quantities(p)]
        pairs.append(("laminar", "yes" if p.laminar else "no"))
        pairs += [(name, f"{float(ci[0]):.4g} to {float(ci[1]):.4g} {unit}")
                  for name, ci, unit in _interval_rows(p)]
        parts.append(key_values(pairs))
    else:
        columns = _columns(p)
        flat = [np.ravel(values) for _, values in columns]
        rows = [[f"{values[i]:.4g}" for values in flat] for i in range(min(shown, p.size))]
        more = f"{p.size - shown} more operating points in to_dict()" if p.size > shown else None
        parts.append(table([name for name, _ in columns], rows, caption=more))
    if p.flags:
        parts.append(table(["flag", "message"], [[f.code, f.message] for f in p.flags]))
    parts.append(tag("p", SAFETY_CAUTION))
    return join(*parts)


def _profile_frame(fluid: Fluid, geometry, wall_shear_stress: float, points: int):
    import pandas as pd

    position = np.linspace(0.0, geometry.half_size, points)
    velocity = engine.velocity_profile(fluid, geometry, wall_shear_stress, position)
    return pd.DataFrame({"position": position, "velocity": velocity})


# --- input checks -------------------------------------------------------------

def operating_input(value, kind: str):
    """Number, array or text with a unit -> float array (shape kept)."""
    if isinstance(value, str):
        value = parse_quantity(value, kind)
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise GeometryError(
            f"Cannot read {kind.replace('_', ' ')} {value!r} as numbers; give SI numbers "
            f"(an array is fine) or text with a unit such as '10 uL/min' or '25 kPa'."
        ) from None


def _positive(value, name: str, kind: str, example: str) -> float:
    number = parse_quantity(value, kind, name) if isinstance(value, str) else value
    try:
        number = float(number)
    except (TypeError, ValueError):
        number = float("nan")
    if not (math.isfinite(number) and number > 0):
        raise ParameterError(f"{name} = {value!r} must be a positive, finite number, e.g. {example}.")
    return number


def require_one_operating_point(flow_rate, pressure_drop):
    if (flow_rate is None) == (pressure_drop is None):
        given = "both" if flow_rate is not None else "neither"
        raise GeometryError(
            f"Give exactly one operating condition, flow_rate or pressure_drop ({given} was given): "
            "flow_rate=... [m^3/s or e.g. '10 uL/min'] to get the pressure drop, or "
            "pressure_drop=... [Pa or e.g. '25 kPa'] to get the flow rate."
        )


# --- flags ------------------------------------------------------------------------

def _where(mask: np.ndarray) -> str:
    count, total = int(mask.sum()), mask.size
    return "" if total == 1 else f" (at {count} of {total} operating points)"


def _no_flow_flag(state, threshold):
    rest = ~state.flowing & (state.pressure_drop > 0)
    if not rest.any():
        return ()
    return (Flag(
        "no_flow",
        f"The wall shear stress does not exceed the yield stress, so the fluid does not flow"
        f"{_where(rest)}; a pressure drop above {threshold:.4g} Pa is needed to start flow.",
        {"points": int(rest.sum()), "threshold_pressure_drop": threshold},
    ),)


def _extrapolation_flag(fluid: Fluid, state):
    if fluid.shear_rate_range is None:
        return ()
    low, high = (float(v) for v in fluid.shear_rate_range)
    g = state.wall_shear_rate
    flowing = state.flowing
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = np.where(flowing, np.maximum(low / g, g / high), 1.0)
    outside = flowing & (factor > 1.0)
    if not outside.any():
        return ()
    worst = float(factor[outside].max())
    side = "above" if np.any(g[outside] > high) else "below"
    if np.any(g[outside] > high) and np.any(g[outside] < low):
        side = "above and below"
    return (Flag(
        "extrapolation",
        f"The wall shear rate lies {side} the measured range ({low:.3g} to {high:.3g} 1/s), by a "
        f"factor of up to {worst:.3g}{_where(outside)}; the model is extrapolated there.",
        {"factor": worst, "measured_range": [low, high], "points": int(outside.sum())},
    ),)


def _laminar_flag(laminar, reynolds, critical):
    turbulent = ~laminar
    if not turbulent.any():
        return ()
    worst = float(np.max(reynolds[turbulent] / critical[turbulent]))
    return (Flag(
        "not_laminar",
        f"The flow is not laminar{_where(turbulent)}: the Reynolds number is up to {worst:.3g} "
        "times its critical value, and these laminar estimates do not hold.",
        {"points": int(turbulent.sum()), "worst_ratio": worst},
    ),)


def _newtonian_flag(ratio, viscosity, reference, tolerance):
    with np.errstate(invalid="ignore"):
        off = np.isfinite(ratio) & (np.abs(ratio - 1.0) > tolerance)
    if not off.any():
        return ()
    error = 1.0 / ratio[off] - 1.0  # (Newtonian dP - dP) / dP
    worst = float(error[np.argmax(np.abs(error))])
    word = "under-predict" if worst < 0 else "over-predict"
    which = "the model's viscosity at the apparent wall shear rate" if reference == _DEFAULT_REFERENCE \
        else f"{float(np.ravel(viscosity)[0]):.4g} Pa*s"
    size = "by" if off.size == 1 else "by up to"
    return (Flag(
        "newtonian_misleads",
        f"A Newtonian estimate (viscosity: {which}) would {word} the pressure drop {size} "
        f"{100 * abs(worst):.0f} %{_where(off)}.",
        {"worst_relative_error": worst, "tolerance": tolerance, "points": int(off.sum())},
    ),)


def _density_flag(is_default: bool):
    if not is_default:
        return ()
    return (Flag(
        "density_default",
        f"No density was given; {DEFAULT_DENSITY:g} kg/m^3 (water) was used for the Reynolds number.",
        {"density": DEFAULT_DENSITY},
    ),)


# --- predict ------------------------------------------------------------------------

def predict(fluid_or_fit, geometry, flow_rate=None, pressure_drop=None, density=None,
            newtonian_viscosity=None, *, tolerance: float = DEFAULT_TOLERANCE,
            profile_points: int = 101, method: str = "auto", uncertainty: bool = True,
            samples: int = 400, seed: int | None = 0) -> FlowPrediction:
    """Predict laminar flow of a fluid (or fit result) in a Tube or Slit.

    Give exactly one of ``flow_rate`` [m^3/s] or ``pressure_drop`` [Pa]
    (numbers, arrays, or text with a unit such as ``"10 uL/min"``).

    Parameters
    ----------
    fluid_or_fit : Fluid or an object with a ``fluid`` attribute (a fit result)
    geometry : Tube or Slit
    density : float or str, optional
        [kg/m^3]; 1000 when not given (then flagged ``density_default``).
    newtonian_viscosity : float or str, optional
        Reference viscosity [Pa*s] of the Newtonian comparison; by default the
        model's viscosity at the apparent wall shear rate (tube 4Q/(pi R^3),
        slit 6Q/(W H^2), with the predicted Q when dP is given).
    tolerance : float or str
        Flag ``newtonian_misleads`` when |dP / dP_Newtonian - 1| > tolerance
        (a fraction below 1, or text such as '10 %'; see parse_tolerance).
    profile_points : int
        Points of the velocity profile (centre line to wall).
    method : "auto" or "generic"
        "auto" uses a model's closed-form flow rate when it has one.
    uncertainty : bool
        For a fit result, carry the fit's parameter uncertainty into 95 %
        intervals of the pressure drop (or flow rate) and the wall shear
        stress and rate (:mod:`rheofit.flow.intervals`); ignored for a fluid
        with given parameters, which has none.
    samples : int
        Monte Carlo draws of the parameters (at least 40).
    seed : int or None
        Seed of the draws; the fixed default makes the interval repeatable.

    Flags: ``extrapolation`` (wall shear rate outside the fluid's measured
    range, with the factor), ``no_flow``, ``not_laminar``,
    ``newtonian_misleads``, ``density_default``, ``interval_unreliable``
    (an interval end rests on a parameter the data do not bound), and the
    geometry's own (``narrow_slit``).
    """
    fluid = as_fluid(fluid_or_fit)
    geometry = check_geometry(geometry)
    require_one_operating_point(flow_rate, pressure_drop)
    is_default = density is None
    density = DEFAULT_DENSITY if is_default else _positive(density, "density", "density", "'1050 kg/m^3'")
    tolerance = parse_tolerance(tolerance)
    if not (isinstance(profile_points, (int, np.integer)) and profile_points >= 2):
        raise ParameterError(f"profile_points = {profile_points!r} must be an integer of at least 2, e.g. 101.")
    if flow_rate is not None:
        given = operating_input(flow_rate, "flow_rate")
        state = engine.solve_flow_rate(fluid, geometry, given, method)
    else:
        given = operating_input(pressure_drop, "pressure")
        state = engine.solve_pressure_drop(fluid, geometry, given, method)
    intervals = _intervals(fluid_or_fit, geometry, state, flow_rate is not None, method,
                           uncertainty, samples, seed)
    prediction = _assemble(fluid, geometry, state, given.shape, density, is_default,
                           newtonian_viscosity, tolerance, profile_points)
    prediction = _with_evidence(prediction, fluid_or_fit, "pressure_drop" if flow_rate is not None else "flow_rate")
    return prediction if intervals is None else _with_intervals(prediction, intervals, given.shape)


def beside_best(prediction: FlowPrediction, best: FlowPrediction) -> FlowPrediction:
    """``prediction`` (of a model the data reject) with the best model's answer at the same
    operating point, which its headline warning then gives (``best_model``)."""
    name = prediction.solved_for or "pressure_drop"
    model = best.evidence.model if best.evidence is not None else best.fluid.model
    return replace(prediction, best_model={"model": model, "value": getattr(best, name)})


def _with_evidence(prediction: FlowPrediction, source, solved_for: str) -> FlowPrediction:
    """The prediction with the evidence of the fit behind it (its warnings first among the flags)."""
    from rheofit.fitting import draws
    from rheofit.fitting.evidence import Evidence

    if not draws.is_fit(source):
        return replace(prediction, solved_for=solved_for)
    evidence = Evidence.of(source)
    return replace(prediction, evidence=evidence, solved_for=solved_for,
                   flags=tuple(evidence.flags) + prediction.flags)


def _intervals(source, geometry, state, flow_rate_given: bool, method, uncertainty, samples, seed):
    """FlowIntervals of a fit result (None for a fluid with given parameters or when not asked)."""
    if not isinstance(uncertainty, (bool, np.bool_)):
        raise ParameterError(f"uncertainty = {uncertainty!r} must be True or False.")
    if isinstance(seed, bool) or not (seed is None or isinstance(seed, (int, np.integer))):
        raise ParameterError(f"seed = {seed!r} must be a whole number or None, e.g. 0.")
    from rheofit.fitting import draws  # loads scipy: only when asked
    from rheofit.flow import intervals

    samples = draws.check_samples(samples)
    if not uncertainty or not draws.is_fit(source):
        return None
    given = {"flow_rate": state.flow_rate} if flow_rate_given else {"pressure_drop": state.pressure_drop}
    return intervals.flow_intervals(source, geometry, **given, samples=samples, seed=seed, method=method)


def _with_intervals(prediction: FlowPrediction, intervals, shape) -> FlowPrediction:
    def out(values):
        return values.reshape(shape) if shape else values[0].item()

    fields = {f"{name}_ci95": (out(low), out(high)) for name, (low, high) in intervals.intervals.items()}
    return replace(prediction, **fields, uncertainty_method=intervals.method,
                   uncertainty_samples=intervals.samples, flags=prediction.flags + intervals.flags)


def _assemble(fluid, geometry, state, shape, density, is_default, newtonian_viscosity,
              tolerance, profile_points) -> FlowPrediction:
    q, dp, flowing = state.flow_rate, state.pressure_drop, state.flowing
    apparent = geometry.apparent_wall_shear_rate(q)
    if newtonian_viscosity is None:
        reference = _DEFAULT_REFERENCE
        with np.errstate(divide="ignore", invalid="ignore"):
            eta_ref = np.where(flowing, fluid.viscosity(np.where(flowing, apparent, 1.0)), np.nan)
    else:
        value = _positive(newtonian_viscosity, "newtonian_viscosity", "viscosity", "'10 mPa*s'")
        reference = f"given, {value:.4g} Pa*s"
        eta_ref = np.full(q.shape, value)
    newtonian_dp, ratio = _comparison(geometry, eta_ref, apparent, dp, flowing)
    eta0 = fluid.zero_shear_viscosity
    zero_dp = zero_ratio = None
    if eta0 is not None:
        zero_dp, zero_ratio = _comparison(geometry, np.full(q.shape, eta0), apparent, dp, flowing)
    reynolds = regime.reynolds_number(geometry, density, q, state.wall_shear_stress)
    critical = regime.laminar_limit(fluid, geometry, density, state.wall_shear_stress, state.wall_shear_rate, q)
    with np.errstate(invalid="ignore"):
        laminar = ~(reynolds >= critical)
    threshold = float(geometry.pressure_drop(fluid.yield_stress))
    flags = (
        tuple(geometry.flags) + _density_flag(is_default) + _no_flow_flag(state, threshold)
        + _extrapolation_flag(fluid, state) + _laminar_flag(laminar, reynolds, critical)
        + _newtonian_flag(ratio, eta_ref, reference, tolerance)
    )

    def out(values):
        return None if values is None else (values.reshape(shape) if shape else values[0].item())

    return FlowPrediction(
        geometry=geometry, fluid=fluid,
        pressure_drop=out(dp), flow_rate=out(q), mean_velocity=out(q / geometry.area),
        max_velocity=out(state.max_velocity), wall_shear_stress=out(state.wall_shear_stress),
        wall_shear_rate=out(state.wall_shear_rate), apparent_wall_shear_rate=out(apparent),
        plug_fraction=out(state.plug_fraction), flowing=out(flowing),
        threshold_pressure_drop=threshold,
        flow_index=out(regime.flow_behaviour_index(geometry, q, state.wall_shear_rate)),
        reynolds=out(reynolds), critical_reynolds=out(critical), laminar=out(laminar),
        laminar_criterion=regime.criterion(fluid, geometry),
        newtonian_viscosity=out(eta_ref), newtonian_reference=reference,
        newtonian_pressure_drop=out(newtonian_dp), newtonian_ratio=out(ratio),
        zero_shear_viscosity=eta0, zero_shear_pressure_drop=out(zero_dp), zero_shear_ratio=out(zero_ratio),
        density=density, density_is_default=is_default, tolerance=tolerance,
        profile=_profile_frame(fluid, geometry, float(state.wall_shear_stress[0]), profile_points),
        flags=flags,
    )


def _comparison(geometry, viscosity, apparent, dp, flowing):
    """Newtonian pressure drop at the same Q with ``viscosity`` [Pa*s], and dP / that [-]."""
    newtonian = geometry.pressure_drop(viscosity * apparent)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(flowing, dp / newtonian, np.nan)
    return np.where(flowing, newtonian, np.nan), ratio
