"""Fully developed laminar flow of any declared model in a rectangular duct.

    div( eta(|grad u|) grad u ) = -G,   u = 0 on the walls,   Q = int u dA,

on -a <= y <= a (depth 2a), -b <= z <= b (width 2b), G = dP/L.  The model
enters only through its declaration (stress, yield stress); no model is
named here.

Method.  P1 finite elements on three nested graded meshes of the quarter
section (:mod:`~rheofit.flow.rectangle.mesh`); Newton's method on the
convex energy for fluids without a yield stress
(:mod:`~rheofit.flow.rectangle.viscous`), the augmented Lagrangian ALG2 for
yield-stress fluids (:mod:`~rheofit.flow.rectangle.plastic`), which does
not flow at all at or below G_c = tau_y h (the Cheeger constant h of the
rectangle; :mod:`~rheofit.flow.rectangle.threshold`).  Given Q, G is the
monotone root of Q_h(G) = Q on each mesh (Newton on ln G with the exact
slope dQ/dG = m . H^-1 m; a bracketed secant for ALG2).

Discretisation error (Richardson 1911, Phil. Trans. R. Soc. A 210, 307-357;
Roache 1998, Verification and Validation in Computational Science, ch. 5).
With values v1, v2, v3 of the computed quantity (Q, or G when Q is given)
on the fine, medium and coarse meshes (spacing h, 2h, 4h):

* without a yield stress the P1 error is O(h^2) (observed, and checked in
  the tests); the value is R(h) = v1 + (v1 - v2)/3 and its error estimate
  |R(h) - R(2h)|, the error of the coarser extrapolation, which bounds that
  of R(h);
* with a yield stress the yield surfaces make the order irregular; the
  observed order p = log2((v2 - v3)/(v1 - v2)), kept within [1, 2] (1 when
  the differences change sign), gives R = v1 + (v1 - v2)/(2^p - 1) and the
  estimate |v1 - v2|/(2^p - 1), the estimated error of the fine mesh alone.

The Newtonian case takes Q from White's exact series (the model's
"rectangle_flow_rate" closed form) and the fields from the 2-D solve.

Operating points are solved in the order given, each mesh warm-started
from its solution at the previous point (or from the coarser mesh).

Many parameter sets (e.g. draws for a 95 % interval): :meth:`RectangleSolver.draws`
solves each on one coarser mesh of the hierarchy, warm-started from the
previous set, and multiplies by the nominal ratio R / v_level, i.e. it
assumes the relative discretisation error varies little between the draws
(the benchmark shows by how much).

Units: lengths [m], G [Pa/m], Q [m^3/s], stress [Pa], velocity [m/s].
"""

from __future__ import annotations

import math

import numpy as np

from rheofit.errors import GeometryError, ParameterError, choice_message
from rheofit.flow.rectangle import fields
from rheofit.flow.rectangle.law import FlowLaw
from rheofit.flow.rectangle.mesh import mesh_hierarchy
from rheofit.flow.rectangle.plastic import prolonged_state, scaled_state, solve_plastic, start_penalty
from rheofit.flow.rectangle.result import RectangleFlow
from rheofit.flow.rectangle.threshold import threshold_pressure_gradient
from rheofit.flow.rectangle.viscous import solve_viscous

#: cells across the short half-size of the finest mesh (see benchmarks/rectangle_speed.py)
DEFAULT_CELLS = 48
DEFAULT_CELLS_YIELD_STRESS = 64
LEVELS = 3
#: the hook a declaration may carry for an exact rectangular-duct flow rate
SERIES_KEY = "rectangle_flow_rate"
#: ways the solver may compute the flow rate
METHODS = ("auto", "generic")
#: root tolerances on ln Q: Newton (no yield stress), secant on ALG2 results
_ROOT_TOL, _ROOT_TOL_YIELD = 1e-11, 1e-4
#: a warm start from the previous operating point is used within this factor of G
_WARM_RANGE = math.e


def _length(name: str, value) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        number = float("nan")
    if not (math.isfinite(number) and number > 0.0):
        raise GeometryError(
            f"The rectangular channel's {name} = {value!r} is not a positive, finite length; "
            f"give it in metres, e.g. {name}=100e-6."
        )
    return number


def _operating(values, name: str, unit: str) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
    bad = ~(np.isfinite(arr) & (arr >= 0.0))
    if bad.any():
        raise GeometryError(
            f"{name} = {float(arr[bad][0]):g} is not a non-negative, finite number; give it in {unit}."
        )
    return arr


def richardson(values, fixed_order: bool):
    """(extrapolated value, relative error estimate, order) from fine, medium, coarse values."""
    v1, v2, v3 = values
    d21, d32 = v1 - v2, v2 - v3
    if fixed_order:
        value = v1 + d21 / 3.0
        error = abs(value - (v2 + d32 / 3.0))
        order = 2.0
    else:
        ratio = d32 / d21 if d21 != 0 else 4.0
        order = float(np.clip(math.log2(ratio), 1.0, 2.0)) if ratio > 0 else 1.0
        value = v1 + d21 / (2.0**order - 1.0)
        error = abs(d21) / (2.0**order - 1.0)
    return value, (error / abs(value) if value != 0 else 1.0), order


class RectangleSolver:
    """One fluid in one rectangular section: meshes, warm starts and the solves.

    Parameters
    ----------
    declaration : rheofit.models.ViscosityModel
        The model declaration (from :data:`rheofit.models.MODELS`).
    params : mapping
        Its parameter values (SI).
    depth, width : float
        The section [m] (either may be the larger).
    cells : int, optional
        Cells across the short half-size of the finest mesh (default 48, or
        64 for a yield-stress fluid).
    method : {"auto", "generic"}
        "auto" takes Q from the model's exact series where it declares one;
        "generic" always from the 2-D solve.
    """

    def __init__(self, declaration, params, depth, width, cells: int | None = None, method: str = "auto"):
        if method not in METHODS:
            raise ParameterError(choice_message("method", str(method), METHODS))
        self.declaration = declaration
        self.depth, self.width = _length("depth", depth), _length("width", width)
        self.law = FlowLaw(declaration, params)
        self.yield_stress = self.law.has_yield_stress
        if cells is None:
            cells = DEFAULT_CELLS_YIELD_STRESS if self.yield_stress else DEFAULT_CELLS
        if int(cells) < 4:
            raise GeometryError(f"cells = {cells!r} is too coarse; use 4 or more (default {DEFAULT_CELLS}).")
        self.meshes = mesh_hierarchy(0.5 * self.depth, 0.5 * self.width, int(cells), LEVELS)
        self.threshold = threshold_pressure_gradient(self.law.yield_stress, self.depth, self.width)
        self._series = declaration.extras.get(SERIES_KEY) if method == "auto" else None
        self._states: list = [None] * LEVELS
        self._gradients: list = [None] * LEVELS
        self._log_slope = 1.5  # d ln Q / d ln G, learnt by the secant roots

    # --- one mesh -------------------------------------------------------------

    def _start(self, level: int, pressure_gradient: float):
        """A warm start on mesh ``level``: its own last solution if at a nearby G, else the coarser mesh's."""
        previous, g_previous = self._states[level], self._gradients[level]
        near = previous is not None and abs(math.log(pressure_gradient / g_previous)) < math.log(_WARM_RANGE)
        coarser = level + 1
        if not near and coarser < LEVELS and self._states[coarser] is not None:
            fine, coarse = self.meshes[level], self.meshes[coarser]
            if self.yield_stress:
                return prolonged_state(fine, coarse, self._states[coarser])
            return fine.prolong(coarse, self._states[coarser].u)
        if previous is None:
            return None
        if not self.yield_stress:  # the tangent predictor u + (G - G_previous) du/dG
            return previous.u + (pressure_gradient - g_previous) * previous.velocity_slope
        penalty = start_penalty(self.meshes[level], self.law, pressure_gradient)
        return scaled_state(previous, pressure_gradient / g_previous, penalty)

    def _solve_level(self, level: int, pressure_gradient: float, law=None):
        """(Q on this mesh [m^3/s], state) at G [Pa/m], warm-started."""
        law = self.law if law is None else law
        mesh = self.meshes[level]
        start = self._start(level, pressure_gradient)
        if self.yield_stress:
            state = solve_plastic(mesh, law, pressure_gradient, start)
        else:
            state = solve_viscous(mesh, law, pressure_gradient, start)
        self._states[level], self._gradients[level] = state, pressure_gradient
        return 4.0 * mesh.integral(state.u), state

    def _root_level(self, level: int, flow_rate: float, guess: float, law=None):
        """(G on this mesh with Q_h(G) = ``flow_rate``, state, iterations)."""
        if self.yield_stress:
            return self._secant_root(level, flow_rate, guess, law)
        x, total = math.log(guess), 0
        for _ in range(60):
            q, state = self._solve_level(level, math.exp(x), law)
            total += state.iterations
            f = math.log(q / flow_rate)
            if abs(f) < _ROOT_TOL:
                break
            slope = math.exp(x) * 4.0 * state.flow_rate_slope / q
            x -= float(np.clip(f / slope, -3.0, 3.0))
        return math.exp(x), state, total

    def _secant_root(self, level: int, flow_rate: float, guess: float, law=None):
        threshold = self.threshold if law is None else threshold_pressure_gradient(
            law.yield_stress, self.depth, self.width)
        lo, hi = math.log(threshold), math.inf
        x = max(math.log(guess), lo + 0.05)
        previous, slope, total, state = None, self._log_slope, 0, None
        for _ in range(60):
            q, state = self._solve_level(level, math.exp(x), law)
            total += state.iterations
            f = math.log(q / flow_rate) if q > 0 else -math.inf
            if abs(f) < _ROOT_TOL_YIELD:
                break
            lo, hi = (max(lo, x), hi) if f < 0 else (lo, min(hi, x))
            if previous is not None and math.isfinite(f) and math.isfinite(previous[1]) and x != previous[0]:
                secant = (f - previous[1]) / (x - previous[0])
                slope = secant if secant > 0 else slope
                self._log_slope = slope
            previous = (x, f)
            step = x - f / slope if math.isfinite(f) else math.nan
            if not (lo < step < hi):
                step = 0.5 * (lo + hi) if math.isfinite(hi) else x + 1.0
            if hi - lo < 1e-6:
                break
            x = step
        return math.exp(x), state, total

    # --- operating points -----------------------------------------------------

    def at_pressure_gradient(self, pressure_gradient: float) -> RectangleFlow:
        """The flow at G = ``pressure_gradient`` [Pa/m]."""
        g = float(_operating(pressure_gradient, "pressure gradient", "Pa/m")[0])
        if g == 0.0 or (self.yield_stress and g <= self.threshold):
            return self._at_rest(g, 0.0, "flow_rate")
        solved = [self._solve_level(level, g) for level in reversed(range(LEVELS))][::-1]
        values = tuple(q for q, _ in solved)
        states = [s for _, s in solved]
        if self._series is not None:
            q = float(self._series(g, 0.5 * self.depth, 0.5 * self.width, **self.law.params))
            return self._result(g, q, "flow_rate", 0.0, 2.0, values, states, [g] * LEVELS, series=True)
        q, error, order = richardson(values, fixed_order=not self.yield_stress)
        return self._result(g, q, "flow_rate", error, order, values, states, [g] * LEVELS)

    def at_flow_rate(self, flow_rate: float) -> RectangleFlow:
        """The flow carrying Q = ``flow_rate`` [m^3/s]: G found on each mesh."""
        q = float(_operating(flow_rate, "flow rate", "m^3/s")[0])
        if q == 0.0:
            return self._at_rest(0.0, 0.0, "pressure_gradient")
        guess = self._first_guess(q)
        gradients, states, counts = [None] * LEVELS, [None] * LEVELS, [0] * LEVELS
        for level in reversed(range(LEVELS)):
            gradients[level], states[level], counts[level] = self._root_level(level, q, guess)
            guess = gradients[level]
        values = tuple(gradients)
        if self._series is not None:
            g = self._series_root(q, gradients[0])
            return self._result(g, q, "pressure_gradient", 0.0, 2.0, values, states, gradients,
                                series=True, iterations=counts)
        g, error, order = richardson(values, fixed_order=not self.yield_stress)
        return self._result(g, q, "pressure_gradient", error, order, values, states, gradients,
                            iterations=counts)

    def _first_guess(self, flow_rate: float) -> float:
        """G from the apparent (Newtonian) mean wall shear rate Q A / (P C), C = Q mu / G of the coarse mesh."""
        previous, g_previous = self._states[-1], self._gradients[-1]
        if previous is not None:
            q_previous = 4.0 * self.meshes[-1].integral(previous.u)
            if q_previous > 0:
                return g_previous * (flow_rate / q_previous) ** 0.5
        mesh = self.meshes[-1]
        conductance = 4.0 * mesh.integral(mesh.poisson.solve(mesh.load))  # Q mu / G [m^4]
        ratio = self.area / self.perimeter
        rate = flow_rate * ratio / conductance
        g = float(self.law.stress(np.array([rate]))[0]) / ratio
        return max(g, 1.05 * self.threshold)

    def _series_root(self, flow_rate: float, guess: float) -> float:
        """G with the series flow rate equal to ``flow_rate`` (Newton on ln G, slope by secant)."""
        a, b, params = 0.5 * self.depth, 0.5 * self.width, self.law.params
        x = math.log(guess)
        for _ in range(50):
            f = math.log(float(self._series(math.exp(x), a, b, **params)) / flow_rate)
            f_up = math.log(float(self._series(math.exp(x + 1e-3), a, b, **params)) / flow_rate)
            x_new = x - f * 1e-3 / (f_up - f)
            if abs(x_new - x) < 1e-14:
                return math.exp(x_new)
            x = x_new
        return math.exp(x)

    # --- parameter sets -------------------------------------------------------

    def draws(self, param_sets, nominal: RectangleFlow, level: int = 1) -> np.ndarray:
        """The computed quantity of ``nominal`` for each parameter set, on one coarser mesh.

        Each set is solved on mesh ``level`` (1: half the cells of the
        finest, 2: a quarter) at the nominal operating point, warm-started
        from the previous set, and scaled by the nominal ratio
        value / level_values[level] (see module docstring).
        """
        value = nominal.pressure_gradient if nominal.computed == "pressure_gradient" else nominal.flow_rate
        ratio = value / nominal.level_values[level] if nominal.flowing else 1.0
        out = np.empty(len(param_sets))
        for i, params in enumerate(param_sets):
            law = FlowLaw(self.declaration, params)
            out[i] = ratio * self._draw_value(law, nominal, level)
        return out

    def _draw_value(self, law, nominal: RectangleFlow, level: int) -> float:
        threshold = threshold_pressure_gradient(law.yield_stress, self.depth, self.width)
        if nominal.computed == "flow_rate":
            g = nominal.pressure_gradient
            if g <= threshold:
                return 0.0
            return self._solve_level(level, g, law)[0]
        if nominal.flow_rate == 0.0:
            return 0.0
        guess = nominal.level_values[level] if nominal.flowing else self._first_guess(nominal.flow_rate)
        return self._root_level(level, nominal.flow_rate, max(guess, 1.05 * threshold), law)[0]

    # --- results --------------------------------------------------------------

    @property
    def area(self) -> float:
        return self.depth * self.width

    @property
    def perimeter(self) -> float:
        return 2.0 * (self.depth + self.width)

    def _method(self, series: bool) -> str:
        fine = self.meshes[0].cells
        solver = ("augmented Lagrangian ALG2 (no regularisation)" if self.yield_stress
                  else "Newton's method on the convex energy")
        error = ("Richardson extrapolation over three nested meshes, observed order in [1, 2]"
                 if self.yield_stress else "Richardson extrapolation (order 2) over three nested meshes")
        text = (f"P1 finite elements on a graded {fine[0]} x {fine[1]} quarter mesh, {solver}; "
                f"{error}")
        if series:
            text += "; flow rate from White's exact Newtonian series (Viscous Fluid Flow, eq. 3-48)"
        return text

    def _at_rest(self, g: float, q: float, computed: str) -> RectangleFlow:
        mesh = self.meshes[0]
        arc = mesh.wall_nodes()[1]
        nan = np.full(arc.size, np.nan)
        unyielded = 1.0 if self.yield_stress else 0.0
        return RectangleFlow(
            self.declaration.name, dict(self.law.params), self.depth, self.width, g, q, computed, 0.0,
            False, self.threshold, 0.0, 0.0, g * self.area / self.perimeter, math.nan, (math.nan, math.nan),
            0.0, arc, nan, np.zeros(arc.size), (0.0, 0.0), (0.0, 0.0), 0.0, unyielded, 0.0, unyielded,
            mesh.y.copy(), mesh.z.copy(), np.zeros((mesh.y.size, mesh.z.size)),
            np.full(mesh.cells, unyielded), (0.0,) * LEVELS, 2.0, mesh.cells, (0,) * LEVELS, True,
            self._method(False) + "; at rest: " + (
                f"G <= G_c = tau_y h = {self.threshold:.6g} Pa/m (Mosolov & Miasnikov 1965)"
                if self.yield_stress and g > 0 else "no driving pressure gradient"),
        )

    def _wall(self, level: int, state, g: float):
        mesh = self.meshes[level]
        arc, stress, nodes = fields.wall_shear_stress(mesh, state.stress_y, state.stress_z, g)
        return arc, stress, nodes

    def _result(self, g, q, computed, error, order, values, states, gradients, series=False,
                iterations=None) -> RectangleFlow:
        mesh, state = self.meshes[0], states[0]
        u_full = mesh.full_field(state.u)
        arc, tau_w, nodes = self._wall(0, state, gradients[0])
        _, tau_medium, _ = self._wall(1, states[1], gradients[1])
        k = int(np.argmax(tau_w))
        top = float(tau_w[k])
        top_error = abs(top - float(np.max(tau_medium))) / (2.0**order - 1.0) / top
        y_grid, z_grid = np.divmod(nodes[k], mesh.z.size)
        wall_rate = self.law.shear_rate(np.maximum(tau_w, 0.0))
        rate = state.shear_rate
        stress = np.hypot(state.stress_y, state.stress_z)
        unyielded = state.unyielded if self.yield_stress else np.zeros(rate.shape, bool)
        plug, dead = fields.unyielded_split(mesh, u_full, unyielded)
        counts = iterations if iterations is not None else [s.iterations for s in states]
        converged = all(getattr(s, "converged", True) for s in states)
        return RectangleFlow(
            self.declaration.name, dict(self.law.params), self.depth, self.width, float(g), float(q),
            computed, float(error) if converged else math.inf, True, self.threshold,
            float(q) / self.area, float(u_full.max()), float(g) * self.area / self.perimeter,
            top, (float(mesh.y[y_grid]), float(mesh.z[z_grid])), float(top_error),
            arc, tau_w, wall_rate, (float(wall_rate.min()), float(wall_rate.max())),
            fields.dissipation_range(rate, stress, mesh.area), float(rate.max()),
            plug + dead, plug, dead, mesh.y.copy(), mesh.z.copy(), u_full,
            fields.cell_fraction(mesh, unyielded), tuple(float(v) for v in values), float(order),
            mesh.cells, tuple(int(c) for c in counts), converged, self._method(series),
        )


def solve_rectangle(declaration, params, depth, width, pressure_gradient=None, flow_rate=None,
                    cells: int | None = None, method: str = "auto"):
    """Fully developed flow of a declared model in a depth x width rectangular duct.

    Parameters
    ----------
    declaration : rheofit.models.ViscosityModel
        The model (e.g. ``rheofit.models.MODELS["power_law"]``).
    params : mapping
        Its parameters (SI).
    depth, width : float
        The section [m].
    pressure_gradient : float or array, optional
        G = dP/L [Pa/m]; give this or ``flow_rate``.
    flow_rate : float or array, optional
        Q [m^3/s].
    cells : int, optional
        Cells across the short half-size of the finest mesh.
    method : {"auto", "generic"}
        See :class:`RectangleSolver`.

    Returns
    -------
    RectangleFlow, or a tuple of them for an array of operating points
    (solved in the order given, each warm-started from the one before).

    >>> from rheofit.models import MODELS
    >>> flow = solve_rectangle(MODELS["newtonian"], {"mu": 1e-3}, 100e-6, 500e-6, pressure_gradient=1e5)
    >>> f"{flow.flow_rate:.5e}"
    '3.64146e-09'
    """
    if (pressure_gradient is None) == (flow_rate is None):
        raise GeometryError("Give exactly one of pressure_gradient [Pa/m] or flow_rate [m^3/s].")
    solver = RectangleSolver(declaration, params, depth, width, cells, method)
    given = pressure_gradient if flow_rate is None else flow_rate
    if flow_rate is None:
        points = _operating(pressure_gradient, "pressure gradient", "Pa/m")
        results = tuple(solver.at_pressure_gradient(g) for g in points)
    else:
        points = _operating(flow_rate, "flow rate", "m^3/s")
        results = tuple(solver.at_flow_rate(q) for q in points)
    return results[0] if np.ndim(given) == 0 else results
