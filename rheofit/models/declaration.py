"""A viscosity model's declaration: its parameters and its equations, checked once.

A declaration is checked when it is made (:meth:`ViscosityModel.__post_init__`):
every function it holds must take exactly the declared parameter names as
keywords, and its example values must lie inside the bounds and satisfy its
joint constraint.  A mismatch raises :class:`~rheofit.errors.DeclarationError`
naming the model and the names that disagree, before any fit is tried.

A model is given by its flow curve tau(gamma_dot), by its inverse
gamma_dot(tau), or by both.  What is missing is computed generically by
:func:`monotone_inverse`, a vectorised bracketed root solve in log space;
no model needs a root finder of its own.

Units: shear rate gamma_dot [1/s], stress tau [Pa], viscosity eta [Pa*s].
"""

from __future__ import annotations

import inspect
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import DeclarationError, ParameterError, choice_message


@dataclass(frozen=True)
class Parameter:
    """One model parameter.

    ``positive_scale`` marks a parameter that spans decades (a viscosity, a
    time, a consistency); fitting and uncertainty work on its logarithm.
    """

    name: str
    unit: str
    lower: float
    upper: float
    meaning: str
    positive_scale: bool = True

    def bound_text(self, side: str) -> str:
        """'1' or '1e+09 Pa*s': the value of the ``side`` ("lower"/"upper") bound with its unit."""
        value = self.lower if side == "lower" else self.upper
        return f"{value:g}" if self.unit == "1" else f"{value:g} {self.unit}"


# --- the generic inverse -------------------------------------------------------

#: ln of the search range [ln(1/s) or ln(Pa)]: about 1e-323 to 1e308, the doubles
_LOG_LOW, _LOG_HIGH = -744.0, 709.0
_MAX_STEPS = 200


def _broadcast(target, params):
    """Flat target and parameters (arrays flattened, scalars kept), and the common shape."""
    shape = np.broadcast_shapes(np.shape(target), *(np.shape(v) for v in params.values()))
    flat = {k: (v if np.ndim(v) == 0 else np.broadcast_to(v, shape).ravel())
            for k, v in params.items()}
    return np.broadcast_to(np.asarray(target, dtype=float), shape).ravel(), flat, shape


def monotone_inverse(function, target, params) -> np.ndarray:
    """x > 0 with function(x, **params) = target, for a function increasing in x.

    Vectorised over ``target`` and over parameter arrays (broadcast
    together).  Solved in u = ln x for g(u) = ln function(e^u) - ln target,
    within [-744, 709] (every positive double): first a bracket, by secant
    steps from u = ln target that at least double their reach each time;
    then regula falsi with the Illinois modification (Dowell & Jarratt 1971,
    BIT 11, 168-174; from memory), bisecting where the secant leaves the
    bracket or meets an infinite end, until g is within its rounding
    (about 1e-15 (1 + |ln target|)) or the bracket is a few ulps wide.  A target at or below function(1e-323) gives 0 (e.g.
    at or below a yield stress), one above function(1e308) gives inf; a
    target of 0 gives 0 and a negative one nan.
    """
    flat, pars, shape = _broadcast(target, params)
    out = np.full(flat.shape, np.nan)
    out[flat == 0] = 0.0
    idx = np.nonzero(flat > 0)[0]
    log_target = np.log(flat[idx])

    def g(u, rows):
        local = {k: (v if np.ndim(v) == 0 else v[idx[rows]]) for k, v in pars.items()}
        with np.errstate(all="ignore"):
            value = np.log(function(np.exp(u), **local)) - log_target[rows]
        return np.where(np.isnan(value), -np.inf, value)  # undefined at the low end: too low

    lo, hi, f_lo, f_hi = _bracket(g, np.clip(log_target, _LOG_LOW, _LOG_HIGH))
    exact = np.where(f_lo == 0, lo, np.where(f_hi == 0, hi, np.nan))
    out[idx] = np.exp(exact)
    below, above = f_lo > 0, f_hi < 0  # the root lies outside the doubles
    out[idx[below]] = 0.0
    out[idx[above]] = np.inf
    live = ~(below | above | np.isfinite(exact))
    rows = np.nonzero(live)[0]
    # g carries rounding of about eps * (2 + 2 |ln target|): stop there
    tol = 1e-15 + 4.5e-16 * np.abs(log_target[live])
    u = _illinois(g, lo[live], hi[live], f_lo[live], f_hi[live], rows, tol)
    out[idx[live]] = np.exp(u)
    return out.reshape(shape)


def _bracket(g, u):
    """(lo, hi, g(lo), g(hi)) with g(lo) < 0 < g(hi), or an end of the range on the root's side.

    From u a first step of -g(u) (slope one), then secant steps, each
    reaching at least twice as far from u as the one before.
    """
    rows = np.arange(u.size)
    a, fa = u.copy(), g(u, rows)
    b = np.clip(a - np.where(np.isfinite(fa), fa, np.sign(fa)), _LOG_LOW, _LOG_HIGH)
    fb = g(b, rows)
    active = rows[(np.sign(fa) == np.sign(fb)) & (fa != 0)]
    for _ in range(_MAX_STEPS):
        if active.size == 0:
            break
        a0, b0, fa0, fb0 = a[active], b[active], fa[active], fb[active]
        direction = np.where(fb0 < 0, 1.0, -1.0)
        with np.errstate(all="ignore"):
            secant = -fb0 * (b0 - a0) / (fb0 - fa0)
        reach = np.where(np.isfinite(secant), np.abs(secant), 0.0)
        step = direction * np.maximum(reach, np.maximum(np.abs(b0 - u[active]), 1.0))
        new = np.clip(b0 + step, _LOG_LOW, _LOG_HIGH)
        a[active], fa[active] = b0, fb0
        b[active], fb[active] = new, g(new, active)
        stuck = new == b0  # at an end of the range and still on one side
        active = active[(np.sign(fa[active]) == np.sign(fb[active])) & ~stuck]
    low_first = a <= b
    lo, hi = np.where(low_first, a, b), np.where(low_first, b, a)
    return lo, hi, np.where(low_first, fa, fb), np.where(low_first, fb, fa)


def _illinois(g, lo, hi, f_lo, f_hi, rows, tol):
    """Roots u of g (increasing) bracketed by f_lo < 0 < f_hi, to |g| <= tol, all at once."""
    u = 0.5 * (lo + hi)
    side = np.zeros(lo.shape)  # -1: the last step moved lo, +1: it moved hi
    active = np.arange(lo.size)
    for _ in range(_MAX_STEPS):
        if active.size == 0:
            break
        a, b, fa, fb = lo[active], hi[active], f_lo[active], f_hi[active]
        with np.errstate(all="ignore"):
            c = (a * fb - b * fa) / (fb - fa)
        # a secant that rounds onto an end says the root is that end
        at_end = np.isfinite(c) & ((c == a) | (c == b))
        c = np.where((np.isfinite(c) & (c > a) & (c < b)) | at_end, c, 0.5 * (a + b))
        fc = np.where(at_end, 0.0, g(c, rows[active]))
        u[active] = c
        low = fc < 0
        # Illinois: the end kept twice in a row has its value halved
        fb = np.where(low & (side[active] < 0), 0.5 * fb, fb)
        fa = np.where(~low & (side[active] > 0), 0.5 * fa, fa)
        lo[active], f_lo[active] = np.where(low, c, a), np.where(low, fc, fa)
        hi[active], f_hi[active] = np.where(low, b, c), np.where(low, fb, fc)
        side[active] = np.where(low, -1.0, 1.0)
        width = hi[active] - lo[active]
        done = (np.abs(fc) <= tol[active]) | (width <= 4e-16 * np.maximum(1.0, np.abs(c)))
        active = active[~done]
    return u


def stress_from_inverse(shear_rate_function) -> Callable[..., np.ndarray]:
    """tau(gamma_dot) [Pa] of a model given by its inverse gamma_dot(tau) [1/s]."""

    def stress(shear_rate, **params):
        return monotone_inverse(shear_rate_function, shear_rate, params)

    stress.__doc__ = ("Stress [Pa] at a shear rate [1/s]: the declared inverse solved by "
                      f"monotone_inverse.\n\nThe inverse: {shear_rate_function.__doc__}")
    stress.__name__ = f"stress_from_{shear_rate_function.__name__}"
    return stress


# --- the declaration -----------------------------------------------------------

def _keyword_names(function) -> tuple[list[str], list[str], bool] | None:
    """(names, names without a default, takes **kwargs), or None if not inspectable."""
    try:
        signature = inspect.signature(function)
    except (TypeError, ValueError):
        return None
    kinds = inspect.Parameter
    names, required, var_kw = [], [], False
    for p in signature.parameters.values():
        if p.kind == kinds.VAR_KEYWORD:
            var_kw = True
        elif p.kind != kinds.VAR_POSITIONAL:
            names.append(p.name)
            if p.default is kinds.empty:
                required.append(p.name)
    return names, required, var_kw


@dataclass(frozen=True)
class ViscosityModel:
    """A declared viscosity model.

    Attributes
    ----------
    stress_function : callable (shear_rate, **params) -> stress [Pa], or None
        The flow curve; None for a model given by its inverse, which then
        gets :func:`stress_from_inverse` of ``shear_rate_function``.
    shear_rate_function : callable (stress, **params) -> shear rate [1/s], optional
        The inverse flow curve, where it is closed-form (0 at or below a
        yield stress); without it :meth:`shear_rate` inverts the flow curve.
    constraint : callable (**params) -> None or str, optional
        A joint condition on the values (e.g. eta_inf <= eta0): None when it
        holds, else one sentence saying why not.  :meth:`check` and the
        fitter enforce it.
    example : mapping name -> value (SI)
        Physical values whose flow curve rises over ``example_range``.
    example_range : (low, high) [1/s]
        A shear-rate sweep over which a fit of the example resolves every
        parameter (the registry-wide tests use both).
    extras : mapping
        Optional closed forms ("tube_flow_rate", "slit_flow_rate"; see
        :mod:`rheofit.models.closed_forms`).
    """

    name: str
    title: str
    equation: str
    parameters: tuple[Parameter, ...]
    stress_function: Callable[..., np.ndarray] | None
    guess_function: Callable[[np.ndarray, np.ndarray], dict]
    reference: str
    yield_stress_function: Callable[..., float] | None = None
    zero_shear_viscosity_function: Callable[..., float] | None = None
    extras: Mapping[str, Callable] = field(default_factory=dict)
    example: Mapping[str, float] = field(default_factory=dict, kw_only=True)
    example_range: tuple[float, float] = field(default=(math.nan, math.nan), kw_only=True)
    shear_rate_function: Callable[..., np.ndarray] | None = field(default=None, kw_only=True)
    constraint: Callable[..., str | None] | None = field(default=None, kw_only=True)

    def __post_init__(self):
        if self.stress_function is None:
            if self.shear_rate_function is None:
                self._fail("declares neither a stress function nor a shear-rate function")
            object.__setattr__(self, "stress_function", stress_from_inverse(self.shear_rate_function))
        names = self.parameter_names
        if len(set(names)) != len(names):
            self._fail(f"repeats a parameter name ({', '.join(names)})")
        hooks = [("stress function", self.stress_function, 1),
                 ("shear-rate function", self.shear_rate_function, 1),
                 ("constraint", self.constraint, 0),
                 ("yield stress function", self.yield_stress_function, 0),
                 ("zero-shear viscosity function", self.zero_shear_viscosity_function, 0)]
        hooks += [(f"closed form '{key}'", function, None) for key, function in self.extras.items()]
        for role, function, leading in hooks:
            if function is not None:
                self._check_signature(role, function, leading)
        self._check_example()

    def _fail(self, what: str):
        raise DeclarationError(f"The declaration of model '{self.name}' {what}.")

    def _check_signature(self, role: str, function, leading: int | None) -> None:
        """The function takes the declared names as keywords after ``leading`` other arguments.

        ``leading=None``: any arguments before the first declared name (e.g.
        tau_w and a radius for a closed form).
        """
        found = _keyword_names(function)
        if found is None:
            return
        names, required, var_kw = found
        declared = set(self.parameter_names)
        if leading is None:
            leading = next((i for i, n in enumerate(names) if n in declared), len(names))
        if len(names) < leading:
            self._fail(f"has a {role} without its leading argument (a shear rate or a stress)")
        own, own_required = names[leading:], [n for n in required if n in names[leading:]]
        unknown = [n for n in own_required if n not in declared]
        missing = [] if var_kw else [n for n in self.parameter_names if n not in own]
        if unknown or missing:
            parts = ([f"needs {', '.join(unknown)}, not declared"] if unknown else []) + (
                [f"does not take {', '.join(missing)}"] if missing else [])
            self._fail(f"does not match its {role} {getattr(function, '__name__', '')}: "
                       f"declared parameters {', '.join(self.parameter_names)}; the {role} "
                       + " and ".join(parts))

    def _check_example(self) -> None:
        names = self.parameter_names
        if set(self.example) != set(names):
            self._fail(f"gives example values for {', '.join(self.example) or 'nothing'}; "
                       f"it needs one for each of {', '.join(names)}")
        low, high = (float(v) for v in self.example_range)
        if not (0.0 < low < high < math.inf):
            self._fail(f"has the example shear-rate range {self.example_range!r}; give "
                       "(low, high) in 1/s with 0 < low < high")
        try:
            self.check(self.example)
        except ParameterError as exc:
            self._fail(f"has example values that fail its own check ({exc})")

    @property
    def parameter_names(self) -> tuple[str, ...]:
        return tuple(p.name for p in self.parameters)

    def parameter(self, name: str) -> Parameter:
        for p in self.parameters:
            if p.name == name:
                return p
        raise ParameterError(choice_message(f"{self.name} parameter", name, self.parameter_names))

    def stress(self, shear_rate, **params) -> np.ndarray:
        """Shear stress tau [Pa] at ``shear_rate`` [1/s]."""
        return self.stress_function(np.asarray(shear_rate, dtype=float), **params)

    def shear_rate(self, stress, **params) -> np.ndarray:
        """Inverse flow curve gamma_dot(tau) [1/s] at ``stress`` [Pa]; 0 at or below a yield stress.

        The declared ``shear_rate_function`` where there is one, else
        :func:`monotone_inverse` of the flow curve.
        """
        stress = np.asarray(stress, dtype=float)
        if self.shear_rate_function is not None:
            return self.shear_rate_function(stress, **params)
        rate = monotone_inverse(self.stress_function, stress, params)
        if self.yield_stress_function is None:
            return rate
        return np.where(stress <= self.yield_stress_function(**params), 0.0, rate)

    def viscosity(self, shear_rate, **params) -> np.ndarray:
        """Apparent viscosity eta = tau / gamma_dot [Pa*s]."""
        rate = np.asarray(shear_rate, dtype=float)
        return self.stress_function(rate, **params) / rate

    def yield_stress(self, **params) -> float:
        """Yield stress tau_y [Pa]; zero for models without one."""
        if self.yield_stress_function is None:
            return 0.0
        return float(self.yield_stress_function(**params))

    def zero_shear_viscosity(self, **params) -> float | None:
        """Zero-shear plateau eta_0 [Pa*s], or None when the model has none."""
        if self.zero_shear_viscosity_function is None:
            return None
        return float(self.zero_shear_viscosity_function(**params))

    def violation(self, params: Mapping[str, float]) -> str | None:
        """Why ``params`` break the declared joint constraint (one sentence), or None."""
        if self.constraint is None:
            return None
        return self.constraint(**params)

    def guess(self, shear_rate, stress) -> dict[str, float]:
        """Initial parameter values from data, clipped inside the bounds."""
        raw = self.guess_function(np.asarray(shear_rate, float), np.asarray(stress, float))
        out = {}
        for p in self.parameters:
            value = float(raw[p.name])
            if not np.isfinite(value):
                value = p.lower if np.isfinite(p.lower) and p.lower > 0 else 1.0
            if p.positive_scale:
                low, high = p.lower * 1.0001, p.upper / 1.0001
            else:  # the guesses are inside already; keep them off the bounds
                span = 1e-6 * (p.upper - p.lower)
                low = p.lower if value > p.lower else p.lower + span
                high = p.upper if value < p.upper else p.upper - span
            out[p.name] = float(np.clip(value, low, high))
        return out

    def check(self, params: Mapping[str, float]) -> dict[str, float]:
        """Validate names, values and the joint constraint; return a plain dict of floats.

        Raises ParameterError naming the bad or missing parameter and the
        valid ones, or quoting the constraint's reason.
        """
        names = self.parameter_names
        for key in params:
            if key not in names:
                raise ParameterError(choice_message(f"{self.name} parameter", key, names))
        missing = [n for n in names if n not in params]
        if missing:
            raise ParameterError(
                f"Model {self.name} needs {', '.join(names)}; missing: {', '.join(missing)}."
            )
        out = {}
        for p in self.parameters:
            try:
                value = float(params[p.name])
            except (TypeError, ValueError):
                raise ParameterError(
                    f"{self.name}: {p.name} = {params[p.name]!r} is not a number; give it in {p.unit}."
                ) from None
            if not (np.isfinite(value) and p.lower <= value <= p.upper):
                raise ParameterError(
                    f"{self.name}: {p.name} = {value:g} is outside its physical range "
                    f"[{p.lower:g}, {p.upper:g}] {p.unit}."
                )
            out[p.name] = value
        why = self.violation(out)
        if why:
            raise ParameterError(f"{self.name}: {why}")
        return out
