"""Flow regime: generalised Reynolds number and the laminar check.

Reynolds number (Metzner & Reed 1955, AIChE J. 1, 434-440): with the
apparent wall shear rate gd_app (tube 8V/D, slit 6V/H) and the effective
viscosity eta_eff = tau_w / gd_app,

    Re = rho V D_h / eta_eff = rho V D_h gd_app / tau_w,

which in a tube equals Re_MR = rho V^(2-n') D^n' / (K' 8^(n'-1)) with the
local n' = d ln tau_w / d ln(8V/D) and K' = tau_w / (8V/D)^n'.  The slit uses
its hydraulic diameter D_h = 2WH/(W+H) and 6V/H; both reduce to rho V D_h / mu
for a Newtonian fluid.

Laminar check (Ryan & Johnson 1959, AIChE J. 5, 433-435): the stability
parameter Z(r) = rho R u(r) |du/dr| / tau_w reaches Z_max = 808 at the
transition (a Newtonian fluid then has Re = 2100).  For a power law this
gives Re_crit = 6464 n (2+n)^((2+n)/(1+n)) / (1+3n)^2; Hanks (1963, AIChE J.
9, 306-309) applied the same criterion to Bingham plastics.  Here Z_max is
evaluated on the predicted profile of each operating point for any model,
so Re_crit = Re * 808 / Z_max (Z scales with rho at a fixed profile shape);
for a yield-stress fluid the value shown is Hanks' single one for the fluid,
Re at the point where Z_max reaches 808 (:func:`transition_reynolds`).
For a slit the same parameter (h for R) is used with the threshold set so
that a Newtonian fluid gives Re_crit = 2100 on the hydraulic diameter: an
approximation, as the criterion was established for pipes.
"""

from __future__ import annotations

import math

import numpy as np

from rheofit.flow import engine

#: Z_max at the laminar-turbulent transition in a pipe (Ryan & Johnson 1959)
RYAN_JOHNSON_Z = 808.0
#: Newtonian critical Reynolds number the slit threshold is calibrated to (common practice, no source)
NEWTONIAN_CRITICAL_REYNOLDS = 2100.0
#: search grids of the profile's maximum (coarse, then finer ones)
_COARSE, _FINE = 32, 9
#: up to this many points Z_max/Re is evaluated exactly; beyond, interpolated on a
#: lattice in ln gd_w of this step
_EXACT_POINTS = 48
_STEP = 0.125


def reynolds_number(geometry, density, flow_rate, wall_shear_stress):
    """Generalised Reynolds number Re = rho V D_h gd_app / tau_w [-] (Metzner & Reed 1955).

    density [kg/m^3], flow_rate [m^3/s], wall_shear_stress [Pa]; 0 where Q = 0.
    """
    q = np.asarray(flow_rate, dtype=float)
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    v = q / geometry.area
    with np.errstate(divide="ignore", invalid="ignore"):
        re = density * v * geometry.hydraulic_diameter * geometry.apparent_wall_shear_rate(q) / tau_w
    return np.where(q > 0, re, 0.0)


def flow_behaviour_index(geometry, flow_rate, wall_shear_rate):
    """Local n' = d ln tau_w / d ln gd_app [-] (Metzner & Reed 1955).

    From q_k = Q / flow_scale and d ln q_k / d ln gd_w = k (gd_w - q_k) / q_k * n_w
    (see :mod:`rheofit.flow.engine`): n' = q_k / (k (gd_w - q_k)).  Tube: the
    Rabinowitsch-Mooney n'; 1 for a Newtonian fluid, n for a power law.
    NaN where there is no flow.
    """
    g = np.asarray(wall_shear_rate, dtype=float)
    qk = np.asarray(flow_rate, dtype=float) / geometry.flow_scale
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(g > 0, qk / (geometry.stress_power * (g - qk)), np.nan)


def stability_threshold(geometry) -> float:
    """Z at the transition: 808 in a tube; in a slit 2100 h / (sqrt(3) D_h) (Newtonian calibration).

    The slit value is 2100 times Z_max/Re of plane Poiseuille flow, which is
    1.5 h max(eta (1 - eta^2)) / D_h = h / (sqrt(3) D_h).
    """
    return _THRESHOLDS[geometry.kind](geometry)


_THRESHOLDS = {
    "tube": lambda geometry: RYAN_JOHNSON_Z,
    "slit": lambda geometry: NEWTONIAN_CRITICAL_REYNOLDS * geometry.half_gap
    / (math.sqrt(3.0) * geometry.hydraulic_diameter),
}


_CRITERION_TEXT = {
    "tube": "{source}: stability parameter Z_max < 808",
    "slit": "{source}: stability parameter on the slit profile, threshold set to Re = 2100 on the "
            "hydraulic diameter for a Newtonian fluid (approximation)",
}


def criterion(fluid, geometry) -> str:
    """Name of the laminar criterion used for this fluid and geometry."""
    source = (
        "Hanks (1963) for yield-stress fluids, one critical Reynolds number for the fluid (where Z_max "
        "first reaches the threshold)" if fluid.yield_stress > 0
        else "Ryan & Johnson (1959)"
    )
    return _CRITERION_TEXT[geometry.kind].format(source=source)


def _max_product(rheology, tau_w, g):
    """max of (u/R) s over the sheared layer [1/s^2], per point (R: the half size).

    Searched over the local shear rate s = t gd_w, t in [0, 1] (the profile
    by its shear rate, :func:`rheofit.flow.engine.profile_by_shear_rate`: no
    inverse of the flow curve): a grid of 31 values of t, then five finer
    grids of 9 around the best one, then the vertex of the parabola through
    the best three.  In t the product is smooth for every model (a power law
    gives t (1 - t^(1+n)) up to a factor).
    """
    step = np.full(g.shape, 1.0 / _COARSE)
    t = step[:, None] * np.arange(1, _COARSE)[None, :]
    rows = np.arange(t.shape[0])
    for _ in range(6):
        y = engine.profile_by_shear_rate(rheology, tau_w, g, t * g[:, None]) * t
        best = t[rows, np.argmax(y, axis=1)]
        t = np.clip(best[:, None] + step[:, None] * np.linspace(-1, 1, _FINE)[None, :], 0.0, 1.0)
        step = step * 2.0 / (_FINE - 1)
    k = np.clip(np.argmax(y, axis=1), 1, y.shape[1] - 2)
    y0, y1, y2 = y[rows, k - 1], y[rows, k], y[rows, k + 1]
    curvature = y2 - 2.0 * y1 + y0
    with np.errstate(divide="ignore", invalid="ignore"):
        vertex = np.where(curvature < 0, y1 - (y2 - y0) ** 2 / (8.0 * curvature), y1)
    return np.maximum(vertex, y.max(axis=1)) * g


def _shape(rheology, power, g, tau_w=None):
    """ln(P / q_k^2) [-] at wall shear rates g [1/s] (exact evaluation; tau_w [Pa] if known).

    P = max (u/R) s of the profile and q_k = Q / flow_scale: with V = R q_k / k
    and gd_app = (k + 1) q_k / k, Z_max / Re = R^2 P / (V D_h gd_app) holds
    the geometry only through R, D_h and k, and P / q_k^2 is flat wherever the
    flow curve is a power law (then P and q_k^2 both go as gd_w^2).
    """
    tau_w = rheology.stress(g) if tau_w is None else tau_w
    qk = engine.flow_integral(rheology, g, tau_w, power)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(_max_product(rheology, tau_w, g) / qk**2)


class _ShapeTable:
    """ln(P / q_k^2) of one fluid and one k: exact values by wall shear rate, computed once.

    Up to _EXACT_POINTS points are evaluated exactly; more are interpolated
    from the lattice ln gd_w = j * _STEP (4-point Lagrange in ln gd_w), whose
    nodes are exact values too.  Both kinds are kept, so no wall shear rate
    is evaluated twice for the same fluid.
    """

    #: values kept per fluid and k before the store starts again
    _KEEP = 20_000

    def __init__(self):
        self.values: dict[float, float] = {}

    def _exact(self, rheology, power, g, tau_w=None):
        """Exact values at g [1/s] (known ones looked up, the others evaluated and kept)."""
        missing = np.array([x for x in np.unique(g).tolist() if x not in self.values])
        if missing.size:
            if len(self.values) + missing.size > self._KEEP:
                self.values.clear()
            known = None if tau_w is None else dict(zip(g.tolist(), tau_w.tolist()))
            stress = None if known is None else np.array([known[x] for x in missing.tolist()])
            self.values.update(zip(missing.tolist(), _shape(rheology, power, missing, stress).tolist()))
        return np.array([self.values[x] for x in g.tolist()])

    def at(self, rheology, power, tau_w, g):
        """ln(P / q_k^2) at wall shear stresses tau_w [Pa] and rates g [1/s]."""
        if np.unique(g).size <= _EXACT_POINTS:
            return self._exact(rheology, power, g, tau_w)
        x = np.log(g) / _STEP
        i = np.floor(x)
        stencil = i[:, None] + np.arange(-1.0, 3.0)[None, :]
        nodes = np.exp(stencil * _STEP)
        y = self._exact(rheology, power, nodes.ravel()).reshape(nodes.shape)
        t = x - i
        weights = np.stack([-t * (t - 1) * (t - 2) / 6, (t + 1) * (t - 1) * (t - 2) / 2,
                            -(t + 1) * t * (t - 2) / 2, (t + 1) * t * (t - 1) / 6], axis=1)
        out = np.sum(weights * y, axis=1)
        # stencils that reach beyond the rising flow curve (or overflow): the point itself
        bad = ~(np.all(np.isfinite(y), axis=1) & (np.log(nodes[:, -1]) < rheology.rising_limit))
        if bad.any():
            out[bad] = self._exact(rheology, power, g[bad], tau_w[bad])
        return out


#: the stability shape of recently used fluids, one lattice table per fluid and k
SHAPES = engine.FluidMemo()


def _stability_ratio(fluid, rheology, geometry, tau_w, g, q):
    """Z_max / Re [-] for flowing points, from the fluid's table (see :class:`_ShapeTable`)."""
    power = geometry.stress_power
    shape = SHAPES.get(fluid, power, _ShapeTable).at(rheology, power, tau_w, g)
    qk = q / geometry.flow_scale
    v = q / geometry.area
    return geometry.half_size**2 * np.exp(shape) * qk**2 / (
        v * geometry.hydraulic_diameter * geometry.apparent_wall_shear_rate(q))


def critical_reynolds(fluid, geometry, wall_shear_stress, wall_shear_rate, flow_rate):
    """Critical generalised Reynolds number per operating point [-]; NaN where nothing flows.

    Re_crit = Z_c Re / Z_max (Ryan & Johnson 1959; Hanks 1963), with the
    profile of each point.  Z_max / Re depends on the fluid, the geometry's
    kind (k) and its size only through R^2 / (V D_h gd_app), so its profile
    part ln(P / q_k^2) is computed once per fluid and k for each wall shear
    rate and kept (:data:`SHAPES`).  Up to 48 points are evaluated exactly;
    beyond, the values are interpolated (4-point Lagrange in ln gd_w) from a
    lattice of exact values with step 1/8 (before: a cubic spline through
    48 exact values over the points' range).
    """
    rheology = engine.rheology_of(fluid)
    tau_w = np.asarray(wall_shear_stress, float)
    g = np.asarray(wall_shear_rate, float)
    q = np.asarray(flow_rate, float)
    out = np.full(g.shape, np.nan)
    flowing = (g > 0) & (q > 0)
    if not flowing.any():
        return out
    out[flowing] = stability_threshold(geometry) / _stability_ratio(
        fluid, rheology, geometry, tau_w[flowing], g[flowing], q[flowing])
    return out


def transition_reynolds(fluid, geometry, density: float) -> float:
    """Critical generalised Reynolds number of a yield-stress fluid: ONE value per fluid [-].

    Hanks (1963, AIChE J. 9, 306-309) applied the Ryan-Johnson criterion to a
    yield-stress fluid and found ONE critical point: the wall shear stress
    tau_w* at which the stability parameter Z_max first reaches its critical
    value.  The critical Reynolds number is Re(tau_w*); below it the flow is
    laminar, above it not.  For a Bingham plastic in a pipe this is Hanks'
    published relation (with the Hedstrom number He = rho D^2 tau_y / mu_p^2
    and phi = tau_y / tau_w)::

        phi_c / (1 - phi_c)^3 = He / 16800,
        Re_B,c = He (1 - 4/3 phi_c + 1/3 phi_c^4) / (8 phi_c)    (Re_B = rho V D / mu_p)

    and, on the Metzner-Reed Reynolds number used here (Re = Re_B (1 - 4/3 phi
    + 1/3 phi^4) for a Bingham plastic, from the Buckingham-Reiner equation),
    Re_c = Re_B,c (1 - 4/3 phi_c + 1/3 phi_c^4).  Here tau_w* is found for any
    model, where Re / Re_crit(tau_w) = Z_max / Z_c crosses 1 (Re_crit(tau_w) of
    :func:`critical_reynolds`; Z_max / Re does not depend on the density, Re
    does, so Re_c depends on the fluid, the channel and the density, not on
    the operating point).  Ryan & Johnson's Z_c = 808 gives 16794 where Hanks
    wrote 16800 (8 x 2100): 0.04 % apart.

    Before, the value shown for a yield-stress fluid was Re * Z_c / Z_max of
    each operating point's own profile, which changes with the operating
    point although the laminar/not-laminar verdict was the same.

    NaN when no transition is found up to 1e6 times the yield stress.
    """
    from scipy.optimize import brentq

    tau_y = float(fluid.yield_stress)
    x = np.linspace(-12.0, np.log(1e6), 41)  # tau_w = tau_y (1 + e^x)
    gap = _log_reynolds_over_critical(fluid, geometry, density, tau_y * (1.0 + np.exp(x)))
    change = np.nonzero(np.isfinite(gap[:-1]) & np.isfinite(gap[1:]) & (gap[:-1] < 0) & (gap[1:] >= 0))[0]
    if not change.size:
        return math.nan
    i = int(change[0])

    def gap_at(xi):
        return float(_log_reynolds_over_critical(fluid, geometry, density, np.array([tau_y * (1.0 + math.exp(xi))]))[0])

    root = brentq(gap_at, x[i], x[i + 1], xtol=1e-10, rtol=1e-12)
    stress = np.array([tau_y * (1.0 + math.exp(root))])
    state = engine.solve_pressure_drop(fluid, geometry, geometry.pressure_drop(stress))
    return float(reynolds_number(geometry, density, state.flow_rate, state.wall_shear_stress)[0])


def _log_reynolds_over_critical(fluid, geometry, density, wall_shear_stress):
    """ln(Re / Re_crit) = ln(Z_max / Z_c) at wall shear stresses [Pa] (NaN where it cannot be solved)."""
    try:
        state = engine.solve_pressure_drop(fluid, geometry, geometry.pressure_drop(wall_shear_stress))
    except (ValueError, ArithmeticError):
        return np.full(np.shape(wall_shear_stress), np.nan)
    re = reynolds_number(geometry, density, state.flow_rate, state.wall_shear_stress)
    crit = critical_reynolds(fluid, geometry, state.wall_shear_stress, state.wall_shear_rate, state.flow_rate)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(re / crit)


def laminar_limit(fluid, geometry, density, wall_shear_stress, wall_shear_rate, flow_rate):
    """The critical Reynolds number to compare each operating point with [-]; NaN where nothing flows.

    A yield-stress fluid has one value (:func:`transition_reynolds`, Hanks
    1963); any other fluid the value of its profile at each point
    (:func:`critical_reynolds`, Ryan & Johnson 1959: the local flow index
    sets it).
    """
    per_point = critical_reynolds(fluid, geometry, wall_shear_stress, wall_shear_rate, flow_rate)
    if not fluid.yield_stress > 0:
        return per_point
    return np.where(np.isfinite(per_point), transition_reynolds(fluid, geometry, density), np.nan)
