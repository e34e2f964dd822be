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
#: above this many points Z_max/Re is interpolated from this many exact evaluations
_TABLE_POINTS = 48
_COARSE, _FINE = 32, 9


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


def _max_product(rheology, half_size, tau_w, g, plug):
    """max of u |du/dr| over the sheared layer [m^2/s^2], per point.

    A grid of 31 positions, then five finer grids of 9 around the best one,
    then the vertex of the parabola through the best three.
    """
    step = (1.0 - plug) / _COARSE
    x = plug[:, None] + step[:, None] * np.arange(1, _COARSE)[None, :]
    rows = np.arange(x.shape[0])
    for _ in range(6):
        u, s = engine.profile_parts(rheology, half_size, tau_w, g, x)
        y = u * s
        best = x[rows, np.argmax(y, axis=1)]
        x = np.clip(best[:, None] + step[:, None] * np.linspace(-1, 1, _FINE)[None, :], plug[:, None], 1.0)
        step = step * 2.0 / (_FINE - 1)
    k = np.clip(np.argmax(y, axis=1), 1, y.shape[1] - 2)
    y0, y1, y2 = y[rows, k - 1], y[rows, k], y[rows, k + 1]
    curvature = y2 - 2.0 * y1 + y0
    with np.errstate(divide="ignore", invalid="ignore"):
        vertex = np.where(curvature < 0, y1 - (y2 - y0) ** 2 / (8.0 * curvature), y1)
    return np.maximum(vertex, y.max(axis=1))


def _stability_ratio(rheology, geometry, tau_w, g, q):
    """Z_max / Re [-] for flowing points (exact evaluation)."""
    plug = np.minimum(rheology.yield_stress / tau_w, 1.0)
    product = _max_product(rheology, geometry.half_size, tau_w, g, plug)
    v = q / geometry.area
    return geometry.half_size * product / (v * geometry.hydraulic_diameter * geometry.apparent_wall_shear_rate(q))


def _state_at(rheology, geometry, g):
    tau_w = rheology.stress(g)
    q = geometry.flow_scale * engine.flow_integral(rheology, g, tau_w, geometry.stress_power)
    return tau_w, q


def critical_reynolds(fluid, geometry, wall_shear_stress, wall_shear_rate, flow_rate):
    """Critical generalised Reynolds number per operating point [-]; NaN where nothing flows.

    Re_crit = Z_c Re / Z_max (Ryan & Johnson 1959; Hanks 1963), with the
    profile of each point.  Beyond 48 points, Z_max/Re is interpolated
    (cubic spline of ln(Z_max/Re) over ln gd_w) from 48 exact evaluations over the range.
    """
    rheology = engine.Rheology(fluid)
    tau_w = np.asarray(wall_shear_stress, float)
    g = np.asarray(wall_shear_rate, float)
    q = np.asarray(flow_rate, float)
    out = np.full(g.shape, np.nan)
    flowing = (g > 0) & (q > 0)
    if not flowing.any():
        return out
    gf = g[flowing]
    lo, hi = float(gf.min()), float(gf.max())
    if gf.size <= _TABLE_POINTS or hi / lo < 1.0 + 1e-9:
        ratio = _stability_ratio(rheology, geometry, tau_w[flowing], gf, q[flowing])
    else:
        from scipy.interpolate import CubicSpline

        nodes = np.geomspace(lo, hi, _TABLE_POINTS)
        tn, qn = _state_at(rheology, geometry, nodes)
        table = _stability_ratio(rheology, geometry, tn, nodes, qn)
        ratio = np.exp(CubicSpline(np.log(nodes), np.log(table))(np.log(gf)))
    out[flowing] = stability_threshold(geometry) / ratio
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
