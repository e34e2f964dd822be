"""Fluids without a yield stress: Newton's method on the convex energy of the cross-section.

Fully developed flow div(eta(|grad u|) grad u) = -G with u = 0 on the walls
is the minimum of the convex energy (the flow curve tau(s) rising)

    J(u) = int [ Phi(|grad u|) - G u ] dA,   Phi(g) = int_0^g tau(s) ds

(Glowinski 1984, Numerical Methods for Nonlinear Variational Problems,
ch. IV).  Its gradient on the P1 space is

    R_i(u) = sum_e A_e (tau(g_e)/g_e) grad u_e . grad phi_i - G int phi_i dA,

which needs only the stress, never eta at zero shear (an element with
g_e = 0 carries no flux), and its Hessian is

    H = sum_e A_e grad phi^T [ eta I + (tau' - eta) n n^T ] grad phi,   n = grad u_e / g_e.

Newton steps H d = -R are damped by an exact line search on the convex
function t -> J(u + t d), whose derivative d . R(u + t d) is monotone
(Illinois regula falsi), so each accepted step lowers J.  Where g_e is tiny
(the centre) the Hessian uses eta and tau' at g_e >= 1e-8 max g; this
changes the search direction only, never the equations solved.  The
iteration stops when the Newton decrement d . H d is below
(1e-10)^2 G int u dA, which bounds the relative error of Q by about 1e-10.
The start is the Newtonian profile scaled by the exact minimiser of J
along it.  dQ/dG = m . H^-1 m (H du/dG = m) comes from the last factorised
Hessian, and du/dG = H^-1 m gives the start at a nearby G (a tangent
predictor, Allgower & Georg 1990, Numerical Continuation Methods, ch. 2).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse.linalg as spla

from rheofit.errors import GeometryError
from rheofit.flow.rectangle.mesh import QuarterMesh

#: Newton-decrement tolerance (relative, on Q)
TOLERANCE = 1e-10
MAX_ITERATIONS = 80
#: Hessian floors: shear rate (relative to the largest) and coefficients (relative to the mean)
_RATE_FLOOR, _COEFFICIENT_FLOOR = 1e-8, 1e-10


@dataclass
class ViscousState:
    """A solved quarter section: free nodal velocities u [m/s] and what came with them."""

    u: np.ndarray
    stress_y: np.ndarray       # element stress vector tau n [Pa]
    stress_z: np.ndarray
    shear_rate: np.ndarray     # |grad u| on each triangle [1/s]
    iterations: int
    flow_rate_slope: float     # d(int u dA over the quarter)/dG [m^4/(Pa*s)]
    velocity_slope: np.ndarray  # du/dG = H^-1 m [m^2/(Pa*s)], the tangent to the next operating point


def _element_flux(law, gy, gz):
    g = np.hypot(gy, gz)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(g > 0, law.stress(g) / g, 0.0)
    return g, ratio


def residual(mesh: QuarterMesh, law, pressure_gradient: float, u):
    """(R(u), element data) for the energy gradient R on the free nodes."""
    gy, gz = mesh.gradient(u)
    g, ratio = _element_flux(law, gy, gz)
    r = mesh.divergence(ratio * gy, ratio * gz) - pressure_gradient * mesh.load
    return r, (gy, gz, g, ratio)


def _hessian(mesh, law, gy, gz, g):
    floor = _RATE_FLOOR * max(float(g.max()), 1e-300)
    gf = np.maximum(g, floor)
    eta = law.stress(gf) / gf
    slope = law.slope(gf)
    small = _COEFFICIENT_FLOOR * float(mesh.area @ eta / mesh.area.sum())
    eta, slope = np.maximum(eta, small), np.maximum(slope, small)
    with np.errstate(invalid="ignore", divide="ignore"):
        ny = np.where(g > 0, gy / gf, 1.0)
        nz = np.where(g > 0, gz / gf, 0.0)
    extra = slope - eta
    h = mesh.assemble(eta + extra * ny * ny, extra * ny * nz, eta + extra * nz * nz)
    return spla.splu(h.tocsc(), permc_spec="MMD_AT_PLUS_A")


def _scaled_start(mesh, law, pressure_gradient, shape):
    """c * shape with c minimising J along ``shape`` (a monotone 1-D root in ln c)."""
    gy, gz = mesh.gradient(shape)
    g = np.hypot(gy, gz)
    weight = mesh.area * g
    target = pressure_gradient * float(mesh.load @ shape)
    x = _log_scale_guess(mesh, law, pressure_gradient, shape)
    lo, hi = -np.inf, np.inf
    for _ in range(200):
        c = np.exp(x)
        force = float(weight @ law.stress(c * g))
        f = np.log(force) - np.log(target) if force > 0 else -np.inf
        if abs(f) < 1e-13:
            break
        lo, hi = (x, hi) if f < 0 else (lo, x)
        df = float(weight @ (law.slope(c * g) * c * g)) / force if force > 0 else 0.0
        step = x - f / df if df > 0 and np.isfinite(f) else np.nan
        if not (lo < step < hi):
            step = 0.5 * (lo + hi) if np.isfinite(lo) and np.isfinite(hi) else (x + 2.0 if f < 0 else x - 2.0)
        x = step
    return np.exp(x) * shape


def _log_scale_guess(mesh, law, pressure_gradient, shape):
    """ln c for c * shape: the Newtonian scaling at the mean wall stress's apparent viscosity."""
    perimeter = mesh.y[-1] + mesh.z[-1]
    mean_wall_stress = pressure_gradient * mesh.quarter_area / perimeter
    rate = float(law.shear_rate(np.array([mean_wall_stress]))[0])
    gy, gz = mesh.gradient(shape)
    typical = float(mesh.area @ np.hypot(gy, gz)) / mesh.area.sum()
    return np.log(max(rate, 1e-300) / max(typical, 1e-300))


def _line_search(mesh, law, pressure_gradient, u, step, slope0):
    """Step length t in (0, 1] along ``step`` with J(u + t step) < J(u) (exact search on J')."""
    trial = u + step
    r1, data = residual(mesh, law, pressure_gradient, trial)
    slope1 = float(step @ r1)
    if slope1 <= 0.25 * abs(slope0):
        return 1.0, trial, r1, data
    lo, hi, f_lo, f_hi = 0.0, 1.0, slope0, slope1
    t = 1.0
    for _ in range(60):
        t = hi - f_hi * (hi - lo) / (f_hi - f_lo)
        trial = u + t * step
        r1, data = residual(mesh, law, pressure_gradient, trial)
        f = float(step @ r1)
        if abs(f) <= 0.25 * abs(slope0):
            break
        if f > 0:
            hi, f_hi, f_lo = t, f, 0.5 * f_lo
        else:
            lo, f_lo, f_hi = t, f, 0.5 * f_hi
    return t, trial, r1, data


def solve_viscous(mesh: QuarterMesh, law, pressure_gradient: float, start=None) -> ViscousState:
    """Minimise J on ``mesh`` for G = ``pressure_gradient`` [Pa/m]; ``start`` optional free u [m/s]."""
    shape = mesh.poisson.solve(mesh.load) if start is None else np.asarray(start, dtype=float)
    u = _scaled_start(mesh, law, pressure_gradient, shape)
    r, (gy, gz, g, ratio) = residual(mesh, law, pressure_gradient, u)
    lu = None
    for iteration in range(1, MAX_ITERATIONS + 1):
        lu = _hessian(mesh, law, gy, gz, g)
        step = -lu.solve(r)
        decrement = -float(step @ r)
        if decrement <= TOLERANCE**2 * pressure_gradient * abs(mesh.integral(u)):
            u = u + step
            gy, gz = mesh.gradient(u)
            g, ratio = _element_flux(law, gy, gz)
            break
        _, u, r, (gy, gz, g, ratio) = _line_search(mesh, law, pressure_gradient, u, step, -decrement)
    else:
        raise GeometryError(
            f"The rectangular-channel solver did not converge in {MAX_ITERATIONS} Newton steps "
            f"for model {law.declaration.name} with {law.params}; check the parameter values."
        )
    tangent = lu.solve(mesh.load)
    return ViscousState(u, ratio * gy, ratio * gz, g, iteration, float(mesh.load @ tangent), tangent)
