"""Generic laminar flow engine (Rabinowitsch-Mooney) for any declared model.

Laminar, isothermal, fully developed flow without wall slip in a tube or a
wide slit.  The flow rate follows from the inverse flow curve gd(tau)
(Rabinowitsch 1929; Mooney 1931):

    tube:  Q = pi R^3 / tau_w^3 * int_0^tau_w tau^2 gd(tau) dtau
    slit:  Q = 2 W h^2 / tau_w^2 * int_0^tau_w tau gd(tau) dtau

Substituting tau = tau(s) over the shear rate s and integrating by parts
(the boundary term vanishes, also at a yield stress where gd = 0) removes
the inverse and every derivative:

    Q = flow_scale * int_0^gd_w (1 - (tau(s)/tau_w)^k) ds

with flow_scale = pi R^3/3, k = 3 (tube) or W h^2, k = 2 (slit), and gd_w
the wall shear rate, tau(gd_w) = tau_w.  The velocity profile
u(r) = (R/tau_w) int_{tau_w r/R}^{tau_w} gd(tau) dtau becomes, the same way,

    u(r) = (R/tau_w) * [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ]

with tau_r = tau_w r/R and s_r the local shear rate (0 inside a plug).

Numerics (vectorised over operating points): the integrals are taken in
v = ln(s/gd_w) on [-36, 0] with fixed 8-point Gauss-Legendre panels, fine
near the wall and wider towards the centre (the integrands are smooth in v
for every model, which removes the s^(kn) end-point singularity of a power
law); the part below gd_w e^-36 (< 3e-16 of the total) is added as a
one-point tail.  The only roots are scalar per point: gd_w with
tau(gd_w) = tau_w, or, when Q is given, gd_w with Q(gd_w) = Q; both by a
bracketed Newton iteration on ln gd over all points at once, started from a
monotone table of ln tau over ln gd.

Units: stress [Pa], shear rate [1/s], lengths [m], flow rate [m^3/s],
pressure [Pa], velocity [m/s].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from rheofit.errors import GeometryError, ParameterError, choice_message
from rheofit.fluid import Fluid, as_fluid
from rheofit.flow.geometry import check_geometry

# --- quadrature in v = ln(s / gd_w) -------------------------------------------

#: the integrals run over v in [-LOG_SPAN, 0]; e^-36 = 2.3e-16
LOG_SPAN = 36.0
_GAUSS_ORDER = 8
#: rows of operating points per vectorised block (keeps temporaries ~ 10 MB)
_BLOCK = 4096

#: ways the engine may compute the flow rate
METHODS = ("auto", "generic")


def _graded_rule(span: float = LOG_SPAN) -> tuple[np.ndarray, np.ndarray]:
    """Composite Gauss-Legendre nodes and weights on [-span, 0], ascending.

    Panels 0.5 wide on [-6, 0], 1 wide on [-14, -6], 2 wide below: the
    integrands carry the weight e^v, so the far panels matter little.
    """
    breaks = np.unique(np.concatenate([
        np.arange(0.0, -6.0, -0.5), np.arange(-6.0, -14.0, -1.0),
        np.arange(-14.0, -span, -2.0), [-span],
    ]))
    x, w = np.polynomial.legendre.leggauss(_GAUSS_ORDER)
    left, right = breaks[:-1, None], breaks[1:, None]
    nodes = 0.5 * (left + right) + 0.5 * (right - left) * x[None, :]
    weights = 0.5 * (right - left) * w[None, :]
    return nodes.ravel(), weights.ravel()


_V, _W = _graded_rule()
_E = np.exp(_V)
_EW = _E * _W
_TAIL = float(np.exp(-LOG_SPAN))


# --- the flow curve of one fluid and its inverse ------------------------------

#: a flow curve whose ln tau comes this close to its top before the table ends levels off
#: (Cross with eta_inf = 0 and m = 1): beyond that point the flow integral's deficit
#: 1 - (tau/tau_w)^k keeps few digits (a relative 2e-16 / (k _PLATEAU ln(1/_PLATEAU)), 5e-8
#: here) and the slope d ln tau / d ln s is lost in rounding, so the engine does not search
#: beyond it.  Chosen by measurement: of 350 flow rates at 0.5-0.999 of the maximum this
#: gives, over 25 such Cross fluids in a tube and a slit, none is refused at 1e-10, 6 at 1e-11.
_PLATEAU = 1e-10


class Rheology:
    """tau(s) of one fluid with its parameters bound, and its inverse s(tau)."""

    #: ln(shear rate) grid of the start-up table [ln(1/s)]
    _TABLE = np.arange(-744.0, 709.0, 0.5)  # about 1e-323 to 1e308

    def __init__(self, fluid: Fluid):
        self.fluid = fluid
        self._function = fluid.declaration.stress_function
        self._params = dict(fluid.values)
        self.yield_stress = float(fluid.yield_stress)
        self._x, self._lt = self._table()

    def stress(self, shear_rate):
        """Shear stress tau(s) [Pa] at shear rate s [1/s]."""
        with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
            return self._function(shear_rate, **self._params)

    def log_slope(self, shear_rate):
        """Local power-law index d ln tau / d ln s [-] by a central difference.

        The step in ln s is 6e-6 normally and grows near a yield stress, where
        tau - tau_y is a small part of tau: (eps tau / (tau - tau_y))^(1/3)
        balances rounding against truncation (at most 0.5).
        """
        with np.errstate(divide="ignore", invalid="ignore"):
            tau = self.stress(shear_rate)
            excess = np.maximum(tau - self.yield_stress, 1e-300)
            step = np.clip(np.cbrt(2.2e-16 * tau / excess), 6e-6, 0.5)
            up, down = self.stress(shear_rate * np.exp(step)), self.stress(shear_rate * np.exp(-step))
            return np.log(up / down) / (2.0 * step)

    def _table(self):
        """The rising branch of ln tau over ln s, as (ln s, ln tau) arrays."""
        with np.errstate(divide="ignore", invalid="ignore"):
            lt = np.log(self.stress(np.exp(self._TABLE)))
        finite = np.isfinite(lt)
        if not finite.any():
            raise ParameterError(
                f"Model {self.fluid.model} with {self._params} gives no finite stress at any "
                "shear rate; check the parameter values."
            )
        start = int(np.argmax(finite))
        with np.errstate(invalid="ignore"):
            ok = finite[start:] & (np.diff(lt[start:], prepend=lt[start]) >= -1e-12)
        stop = start + (int(np.argmin(ok)) if not ok.all() else ok.size)
        # the curve falls (or turns negative) beyond the table rather than overflowing
        self._falls = stop < lt.size and not lt[stop] == np.inf
        if stop - start < 2:
            raise ParameterError(
                f"The flow curve of model {self.fluid.model} with {self._params} does not rise "
                "with shear rate; the flow engine needs a stress that increases with shear rate."
            )
        return self._TABLE[start:stop], lt[start:stop]

    @property
    def levels_off(self) -> bool:
        """True when ln tau comes within _PLATEAU of its top before the table ends (a plateau)."""
        return bool(np.count_nonzero(self._lt[-1] - self._lt <= _PLATEAU) > 1)

    @property
    def rising_limit(self) -> float:
        """ln of the shear rate [ln(1/s)] where the flow curve stops rising (inf if it never does).

        For a curve that levels off (e.g. Cross with eta_inf = 0 and m = 1:
        tau -> eta0/lam), where its ln tau first comes within _PLATEAU of the
        plateau: beyond, the flow integral loses its digits to cancellation.
        """
        if self.levels_off:
            return float(self._x[np.argmax(self._lt[-1] - self._lt <= _PLATEAU)])
        return float(self._x[-1]) if self._falls else np.inf

    def check_stress(self, stress) -> None:
        """Raise GeometryError when a stress lies above the rising flow curve."""
        top = self._lt[-1]
        with np.errstate(divide="ignore"):
            too_high = np.log(stress) > top
        if np.any(too_high):
            worst = float(np.max(stress[too_high]))
            reach = "it stops rising at" if self._falls else "levelling off up to"
            raise GeometryError(
                f"A wall shear stress of {worst:.4g} Pa is beyond this fluid's flow curve "
                f"({self.fluid.model}: at most {np.exp(top):.4g} Pa, {reach} a shear rate "
                f"of {np.exp(self._x[-1]):.3g} 1/s), so no laminar flow rate exists; "
                "lower the pressure drop or check the model parameters."
            )

    def shear_rate(self, stress):
        """Inverse flow curve s(tau) [1/s]; 0 at or below the yield stress.

        Bracketed Newton iteration on ln s, started from the table.
        """
        stress = np.asarray(stress, dtype=float)
        out = np.zeros(stress.shape)
        moving = stress > max(self.yield_stress, 0.0)
        if not moving.any():
            return out
        self.check_stress(stress[moving])
        target = np.log(stress[moving])
        i = np.searchsorted(self._lt, target, side="left")
        low_end = i == 0
        i = np.clip(i, 1, self._lt.size - 1)
        lo, hi = self._x[i - 1], self._x[i]
        span = self._lt[i] - self._lt[i - 1]
        with np.errstate(divide="ignore", invalid="ignore"):
            frac = np.where(span > 0, (target - self._lt[i - 1]) / span, 0.5)
        x0 = lo + np.clip(frac, 0.0, 1.0) * (hi - lo)

        def residual(x, idx):
            with np.errstate(all="ignore"):
                s = np.exp(x)
                return np.log(self.stress(s)) - target[idx], self.log_slope(s)

        x = _safeguarded_newton(residual, x0, lo.copy(), hi.copy())
        x = np.where(low_end, np.minimum(x, self._x[0]), x)
        out[moving] = np.exp(x)
        return out


def _safeguarded_newton(residual, x, lo, hi, tol=1e-10, maxiter=100):
    """Solve residual(x) = 0 (increasing in x) for many x at once.

    ``residual(x, idx)`` returns (F, dF/dx) for the points ``idx``; ``lo`` and
    ``hi`` bracket the roots (``hi`` may be +inf).  A Newton step that leaves
    the bracket is replaced by bisection, or by a step of +4 when unbounded.
    """
    x = np.array(x, dtype=float)
    active = np.arange(x.size)
    for _ in range(maxiter):
        if active.size == 0:
            break
        xa = x[active]
        f, df = residual(xa, active)
        f = np.where(np.isnan(f), -np.inf, f)  # e.g. log of a flow rate that rounded to <= 0: too low
        lo[active] = np.where(f < 0, xa, lo[active])
        hi[active] = np.where(f > 0, xa, hi[active])
        l, h = lo[active], hi[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = np.where(f == 0, xa, xa - f / df)
        # a Newton step this small leaves an error far below it (quadratic convergence)
        done = np.abs(newton - xa) <= tol
        accept = done | ((newton >= l) & (newton <= h) & np.isfinite(newton))
        fallback = np.where(np.isfinite(h), 0.5 * (l + h), np.maximum(xa, l) + 4.0)
        x[active] = np.where(accept, np.clip(newton, l, h), fallback)
        done |= h - l <= 1e-15 * np.maximum(1.0, np.abs(xa))
        active = active[~done]
    return x


# --- the two integrals --------------------------------------------------------

def _blocks(n: int):
    for start in range(0, n, _BLOCK):
        yield slice(start, min(start + _BLOCK, n))


def flow_integral(rheology: Rheology, wall_shear_rate, wall_shear_stress, power: int):
    """q_k = int_0^gd_w (1 - (tau(s)/tau_w)^k) ds [1/s], so that Q = flow_scale * q_k.

    Vectorised over points; composite Gauss-Legendre in v = ln(s/gd_w).
    """
    g = np.asarray(wall_shear_rate, dtype=float)
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    out = np.empty(g.shape)
    for b in _blocks(g.size):
        s = g[b, None] * _E[None, :]
        f = 1.0 - (rheology.stress(s) / tau_w[b, None]) ** power
        out[b] = g[b] * (f @ _EW + _TAIL * f[:, 0])
    return out


def stress_deficit_integral(rheology: Rheology, lower, wall_shear_rate, wall_shear_stress):
    """J = int_{s_r}^{gd_w} (tau_w - tau(s)) ds [Pa/s] for lower limits s_r >= 0.

    The panels of the rule are scaled onto [ln(s_r/gd_w), 0] (never wider
    than [-36, 0]; below gd_w e^-36 a one-point tail is added).
    """
    g = np.asarray(wall_shear_rate, dtype=float)
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    lower = np.asarray(lower, dtype=float)
    out = np.empty(g.shape)
    for b in _blocks(g.size):
        with np.errstate(divide="ignore"):
            a = np.log(lower[b] / g[b])
        scale = -np.maximum(a, -LOG_SPAN) / LOG_SPAN
        e = np.exp(_V[None, :] * scale[:, None])
        s = g[b, None] * e
        deficit = tau_w[b, None] - rheology.stress(s)
        body = np.sum(deficit * e * _W[None, :], axis=1) * scale
        tail = np.where(a < -LOG_SPAN, _TAIL * deficit[:, 0], 0.0)
        out[b] = g[b] * (body + tail)
    return out


# --- operating points ---------------------------------------------------------

@dataclass(frozen=True)
class FlowState:
    """Solved operating points (1-D arrays, SI).

    Attributes: pressure_drop [Pa], flow_rate [m^3/s], wall_shear_stress [Pa],
    wall_shear_rate [1/s], max_velocity [m/s] (on the centre line, the plug
    velocity for a yield-stress fluid), plug_fraction [-] (plug radius / R or
    plug half-thickness / h), flowing (bool; False when tau_w <= tau_y or
    the point is at rest).
    """

    pressure_drop: np.ndarray
    flow_rate: np.ndarray
    wall_shear_stress: np.ndarray
    wall_shear_rate: np.ndarray
    max_velocity: np.ndarray
    plug_fraction: np.ndarray
    flowing: np.ndarray


def _method(method: str) -> str:
    if method not in METHODS:
        raise ParameterError(choice_message("method", str(method), METHODS))
    return method


def _closed_form(fluid: Fluid, geometry, method: str):
    """The model's closed-form flow rate q(tau_w) for this geometry, or None."""
    function = fluid.declaration.extras.get(geometry.closed_form_key)
    if method == "generic" or function is None:
        return None
    params = dict(fluid.values)
    scale = geometry.flow_scale
    return lambda tau_w: geometry.closed_form_flow_rate(function, tau_w, params) / scale


def _q(rheology, geometry, closed, g, tau_w):
    if closed is not None:
        return closed(tau_w)
    return flow_integral(rheology, g, tau_w, geometry.stress_power)


def operating_values(values, name: str) -> np.ndarray:
    """Operating points as a 1-D float array; non-negative and finite."""
    arr = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
    bad = ~(np.isfinite(arr) & (arr >= 0.0))
    if bad.any():
        raise GeometryError(
            f"{name} = {float(arr[bad][0]):g} is not a non-negative, finite number; "
            f"give {name} in SI units ({_SI[name]}), zero or above."
        )
    return arr


_SI = {"pressure drop": "Pa", "flow rate": "m^3/s", "wall shear stress": "Pa"}


def _finish(rheology, geometry, dp, q, tau_w, g, flowing) -> FlowState:
    tau_y = rheology.yield_stress
    plug = np.zeros(dp.shape)
    with np.errstate(divide="ignore", invalid="ignore"):
        plug[flowing] = tau_y / tau_w[flowing]
    plug[~flowing] = 1.0 if tau_y > 0 else 0.0
    umax = np.zeros(dp.shape)
    if flowing.any():
        deficit = stress_deficit_integral(rheology, np.zeros(int(flowing.sum())), g[flowing], tau_w[flowing])
        umax[flowing] = geometry.half_size * (deficit / tau_w[flowing])
    return FlowState(dp, q, tau_w, g, umax, plug, flowing)


def solve_pressure_drop(fluid, geometry, pressure_drop, method: str = "auto") -> FlowState:
    """Operating points from pressure drops dP [Pa] (1-D arrays out).

    A yield-stress fluid with tau_w <= tau_y does not flow: Q = 0 and
    ``flowing`` False (a result, not an error).
    """
    fluid, geometry, method = as_fluid(fluid), check_geometry(geometry), _method(method)
    rheology = Rheology(fluid)
    dp = operating_values(pressure_drop, "pressure drop")
    tau_w = geometry.wall_shear_stress(dp)
    g = rheology.shear_rate(tau_w)
    flowing = g > 0
    q = np.zeros(dp.shape)
    if flowing.any():
        closed = _closed_form(fluid, geometry, method)
        q[flowing] = geometry.flow_scale * _q(rheology, geometry, closed, g[flowing], tau_w[flowing])
    return _finish(rheology, geometry, dp, q, tau_w, g, flowing)


def solve_flow_rate(fluid, geometry, flow_rate, method: str = "auto") -> FlowState:
    """Operating points from flow rates Q [m^3/s] (1-D arrays out).

    Solves Q(gd_w) = Q for the wall shear rate by Newton's method on ln gd_w,
    with the exact slope d ln q_k / d ln gd_w = k (gd_w - q_k) / q_k * n_w
    (n_w = d ln tau / d ln s at the wall; from differentiating the integral).
    Since q_k < gd_w, ln(q) bounds ln(gd_w) from below.  For a yield-stress
    fluid the pressure drop returned is the one needed, above the threshold.
    Q = 0 gives dP = 0 (fluid at rest).
    """
    fluid, geometry, method = as_fluid(fluid), check_geometry(geometry), _method(method)
    rheology = Rheology(fluid)
    q = operating_values(flow_rate, "flow rate")
    k = geometry.stress_power
    flowing = q > 0
    g = np.zeros(q.shape)
    if flowing.any():
        closed = _closed_form(fluid, geometry, method)
        target = q[flowing] / geometry.flow_scale
        log_target = np.log(target)

        def residual(x, idx):
            with np.errstate(all="ignore"):  # far-out trial points may overflow; the bracket copes
                s = np.exp(x)
                tau_w = rheology.stress(s)
                qk = _q(rheology, geometry, closed, s, tau_w)
                slope = k * (s - qk) / qk * rheology.log_slope(s)
                return np.log(qk) - log_target[idx], slope

        x0 = np.log(target * (k + 1.0) / k)  # the Newtonian wall shear rate
        top = rheology.rising_limit
        lo, hi = log_target.copy(), np.full(target.shape, top)
        x0 = np.minimum(x0, top)
        g[flowing] = np.exp(_safeguarded_newton(residual, x0, lo, hi))
        if np.isfinite(top):
            _check_reached(rheology, geometry, closed, g[flowing], target)
    tau_w = np.zeros(q.shape)
    tau_w[flowing] = rheology.stress(g[flowing])
    dp = geometry.pressure_drop(tau_w)
    return _finish(rheology, geometry, dp, q, tau_w, g, flowing)


def _check_reached(rheology, geometry, closed, g, target) -> None:
    """Raise GeometryError when a flow rate lies beyond the rising part of the flow curve."""
    with np.errstate(all="ignore"):
        reached = _q(rheology, geometry, closed, g, rheology.stress(g))
    short = ~(np.abs(np.log(reached / target)) < 1e-6)
    if np.any(short):
        top = np.array([np.exp(rheology.rising_limit)])
        stress = rheology.stress(top)
        most = float(_q(rheology, geometry, closed, top, stress)[0])
        # towards a plateau Q may keep growing (like ln gd_w for Cross with m = 1): past the point
        # where the stress is within _PLATEAU of it a solution may exist but cannot be computed
        shape, solution = ("stops rising at", "exists")
        if rheology.levels_off:
            shape = (f"levels off at a shear stress of {float(stress[0]):.4g} Pa and is within "
                     f"a relative {_PLATEAU:g} of it beyond")
            solution = "can be computed"
        raise GeometryError(
            f"A flow rate of {float(np.max(target[short])) * geometry.flow_scale:.4g} m^3/s is beyond "
            f"this fluid's flow curve ({rheology.fluid.model} {shape} a shear rate of "
            f"{float(top[0]):.3g} 1/s, carrying at most {most * geometry.flow_scale:.4g} m^3/s here), "
            f"so no laminar solution {solution}; lower the flow rate or check the model parameters."
        )


# --- thin public wrappers -----------------------------------------------------

def _shaped(values, like):
    arr = np.asarray(like)
    return float(values[0]) if arr.ndim == 0 else values.reshape(arr.shape)


def flow_rate(fluid, geometry, pressure_drop, method: str = "auto"):
    """Flow rate Q [m^3/s] from the pressure drop dP [Pa] (scalar or array).

    >>> from rheofit.fluid import fluid
    >>> from rheofit.flow.geometry import Tube
    >>> water = fluid("newtonian", mu=1e-3)
    >>> round(flow_rate(water, Tube(1e-3, 1.0), 1000.0), 12)   # pi R^4 dP / (8 mu L)
    2.4544e-08
    """
    return _shaped(solve_pressure_drop(fluid, geometry, pressure_drop, method).flow_rate, pressure_drop)


def pressure_drop(fluid, geometry, flow_rate, method: str = "auto"):
    """Pressure drop dP [Pa] needed for the flow rate Q [m^3/s] (scalar or array)."""
    return _shaped(solve_flow_rate(fluid, geometry, flow_rate, method).pressure_drop, flow_rate)


def wall_shear_rate(fluid, wall_shear_stress):
    """Wall shear rate gd_w [1/s] with tau(gd_w) = tau_w [Pa]; 0 at or below a yield stress."""
    stress = np.asarray(wall_shear_stress, dtype=float)
    flat = operating_values(stress, "wall shear stress")
    return _shaped(Rheology(as_fluid(fluid)).shear_rate(flat), stress)


def velocity_profile(fluid, geometry, wall_shear_stress, position):
    """Velocity u [m/s] at distances ``position`` [m] from the centre line.

    u(r) = (R/tau_w) [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ],
    tau_r = tau_w r / R (slit: h for R); zero everywhere when tau_w <= tau_y.
    ``wall_shear_stress`` is one value [Pa]; ``position`` any array within
    [0, R] (slit: [0, h]).
    """
    fluid, geometry = as_fluid(fluid), check_geometry(geometry)
    tau_w = float(operating_values(wall_shear_stress, "wall shear stress")[0])
    r = np.asarray(position, dtype=float)
    half = geometry.half_size
    if np.any(~np.isfinite(r)) or np.any(r < 0) or np.any(r > half * (1 + 1e-12)):
        raise GeometryError(
            f"Profile positions must lie between 0 (centre line) and {half:.4g} m (the wall); "
            f"got values from {np.nanmin(r):.4g} to {np.nanmax(r):.4g} m."
        )
    rheology = Rheology(fluid)
    fraction = np.minimum(r.ravel() / half, 1.0)
    u = profile_at_fractions(rheology, geometry, np.array([tau_w]), fraction[None, :])
    return u.reshape(r.shape) if r.ndim else float(u[0, 0])


def profile_at_fractions(rheology: Rheology, geometry, wall_shear_stress, fraction):
    """Velocities u [m/s] at r/R = ``fraction`` (shape (M, P)) for M wall stresses [Pa]."""
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    fraction = np.asarray(fraction, dtype=float)
    g = rheology.shear_rate(tau_w)
    u = np.zeros(fraction.shape)
    rows = g > 0
    if rows.any():
        u[rows] = profile_parts(rheology, geometry.half_size, tau_w[rows], g[rows], fraction[rows])[0]
    return u


def profile_parts(rheology: Rheology, half_size: float, wall_shear_stress, wall_shear_rate, fraction):
    """(u [m/s], local shear rate [1/s]) at r/R = ``fraction`` (M, P) for M flowing points.

    u = (R/tau_w) [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ], tau_r = tau_w r/R.
    """
    frac = np.asarray(fraction, dtype=float)
    tw = np.broadcast_to(np.asarray(wall_shear_stress, float)[:, None], frac.shape).ravel()
    gw = np.broadcast_to(np.asarray(wall_shear_rate, float)[:, None], frac.shape).ravel()
    tau_r = tw * frac.ravel()
    s_r = np.minimum(rheology.shear_rate(tau_r), gw)
    deficit = stress_deficit_integral(rheology, s_r, gw, tw)
    u = half_size * ((deficit + s_r * (tw - tau_r)) / tw)
    return u.reshape(frac.shape), s_r.reshape(frac.shape)
