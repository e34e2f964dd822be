"""Yield-stress fluids: the augmented Lagrangian method ALG2 on the cross-section.

With a yield stress tau_y the energy J(u) = int [Phi(|grad u|) - G u] dA,
Phi(g) = tau_y g + int_0^g (tau(s) - tau_y) ds, is not differentiable where
grad u = 0: the unyielded plug and the dead zones in the corners.  ALG2
(Fortin & Glowinski 1983, Augmented Lagrangian Methods, North-Holland, ch.
III and VII; Glowinski & Le Tallec 1989, ch. 3) splits q = grad u, with a
multiplier lambda (the shear-stress vector) and a penalty r [Pa*s]:

    1. u:      r K u = G m + D^T A (r q - lambda)                (one Poisson solve)
    2. q:      w = lambda + r grad u;  q = 0 if |w| <= tau_y, else
               q = s w/|w| with tau(s) + r s = |w|            (per triangle, exact)
    3. lambda: lambda <- lambda + r (grad u - q)

Step 2 is the exact minimiser of Phi(|q|) + r/2 |q|^2 - w . q; it uses only
the declared stress tau(s) and yield stress (the scalar root by
:meth:`FlowLaw.shear_rate`).  Steps 2 and 3 use the over-relaxed gradient
alpha grad u + (1 - alpha) q with alpha = 1.5 (Eckstein & Bertsekas 1992,
Math. Program. 55, 293-318).  The Poisson solve is by fast diagonalisation
(:class:`~rheofit.flow.rectangle.mesh.FastPoisson`), so an iteration costs a
few milliseconds; r is rebalanced every 20 iterations when the primal
residual |grad u - q| and the dual residual |q - q_previous| differ by more
than a factor 10 (Boyd et al. 2011, Found. Trends Mach. Learn. 3, 1-122,
sect. 3.4.1).  The iteration stops when both, relative to |grad u|, are
below 1e-5 (area-weighted L2 norms); a run that reaches the iteration limit
is returned marked as not converged.  Unyielded triangles are exactly those
with q = 0; no regularisation is involved.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from rheofit.flow.rectangle.mesh import QuarterMesh

TOLERANCE = 1e-5
MAX_ITERATIONS = 20000
RELAXATION = 1.5
#: iterations between checks of the residuals (and penalty updates)
_CHECK = 20


@dataclass
class PlasticState:
    """ALG2 iterate on one mesh: free nodal u [m/s], element q [1/s] and stress vector lambda [Pa]."""

    u: np.ndarray
    rate_y: np.ndarray
    rate_z: np.ndarray
    stress_y: np.ndarray
    stress_z: np.ndarray
    penalty: float
    iterations: int = 0
    converged: bool = True

    @property
    def shear_rate(self):
        """|q| on each triangle [1/s] (0 where unyielded)."""
        return np.hypot(self.rate_y, self.rate_z)

    @property
    def unyielded(self):
        """Triangles where the fluid does not deform (q = 0)."""
        return (self.rate_y == 0.0) & (self.rate_z == 0.0)


def initial_state(mesh: QuarterMesh, law, pressure_gradient: float) -> PlasticState:
    """A start: the Newtonian profile with the apparent viscosity at the mean wall stress."""
    shape = mesh.poisson.solve(mesh.load)
    viscosity = start_penalty(mesh, law, pressure_gradient)
    u = shape * pressure_gradient / viscosity
    gy, gz = mesh.gradient(u)
    g = np.hypot(gy, gz)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(g > 0, law.stress(g) / g, 0.0)
    return PlasticState(u, gy, gz, ratio * gy, ratio * gz, penalty=viscosity)


def viscous_scale(law, stress: float) -> float:
    """(tau(s) - tau_y)/s [Pa*s] at the shear rate where tau = tau_y + ``stress``: the ALG2 penalty scale."""
    rate = float(law.shear_rate(np.array([law.yield_stress + stress]))[0])
    return (law.stress(np.array([rate]))[0] - law.yield_stress) / rate


def scaled_state(state: PlasticState, factor: float, penalty: float) -> PlasticState:
    """A start for another pressure gradient: stresses scaled by ``factor``, velocities kept, penalty reset."""
    return replace(state, stress_y=state.stress_y * factor, stress_z=state.stress_z * factor,
                   penalty=penalty, iterations=0)


def start_penalty(mesh: QuarterMesh, law, pressure_gradient: float) -> float:
    """The first penalty r [Pa*s]: the viscous scale at the mean wall stress G A / P."""
    mean_wall = pressure_gradient * mesh.quarter_area / (mesh.y[-1] + mesh.z[-1])
    return viscous_scale(law, mean_wall)


def prolonged_state(fine: QuarterMesh, coarse: QuarterMesh, state: PlasticState) -> PlasticState:
    """A coarse-mesh state carried to the finer mesh (u interpolated, element fields inherited)."""
    parent = fine.element_parent(coarse)
    return PlasticState(fine.prolong(coarse, state.u), state.rate_y[parent], state.rate_z[parent],
                        state.stress_y[parent], state.stress_z[parent], state.penalty)


def solve_plastic(mesh: QuarterMesh, law, pressure_gradient: float, start: PlasticState | None = None,
                  tolerance: float = TOLERANCE) -> PlasticState:
    """Run ALG2 on ``mesh`` for G = ``pressure_gradient`` [Pa/m] until the residuals are below ``tolerance``."""
    state = initial_state(mesh, law, pressure_gradient) if start is None else start
    poisson = mesh.poisson
    u, qy, qz, ly, lz, r = state.u, state.rate_y, state.rate_z, state.stress_y, state.stress_z, state.penalty
    a, rate = mesh.area, np.hypot(qy, qz)
    force = pressure_gradient * mesh.load
    for iteration in range(1, MAX_ITERATIONS + 1):
        u = poisson.solve(force + mesh.divergence(r * qy - ly, r * qz - lz)) / r
        gy, gz = mesh.gradient(u)
        gy_r, gz_r = RELAXATION * gy + (1 - RELAXATION) * qy, RELAXATION * gz + (1 - RELAXATION) * qz
        wy, wz = ly + r * gy_r, lz + r * gz_r
        w = np.hypot(wy, wz)
        rate = law.shear_rate(w, penalty=r, start=rate)
        with np.errstate(divide="ignore", invalid="ignore"):
            factor = np.where(rate > 0, rate / w, 0.0)
        qy_old, qz_old = qy, qz
        qy, qz = factor * wy, factor * wz
        ly, lz = ly + r * (gy_r - qy), lz + r * (gz_r - qz)
        if iteration % _CHECK == 0:
            scale = max(float(np.sqrt(a @ (gy * gy + gz * gz))), 1e-300)  # 0: at rest
            primal = np.sqrt(a @ ((gy - qy) ** 2 + (gz - qz) ** 2)) / scale
            dual = np.sqrt(a @ ((qy - qy_old) ** 2 + (qz - qz_old) ** 2)) / scale
            if primal < tolerance and dual < tolerance:
                break
            if primal > 10 * dual:
                r *= 2.0
            elif dual > 10 * primal:
                r *= 0.5
    else:
        return PlasticState(u, qy, qz, ly, lz, r, iteration, converged=False)
    return PlasticState(u, qy, qz, ly, lz, r, iteration)
