"""What a solved cross-section shows: wall shear stress along the walls, shear-rate ranges, unyielded zones.

Wall shear stress.  The traction on the wall is read from the residual of
the discrete equilibrium at the wall nodes (the "consistent" or reaction
flux; Carey, Chow & Seager 1985, Comput. Methods Appl. Mech. Eng. 50,
107-120):

    tau_w,k = -( sum_e A_e sigma_e . grad phi_k - G int phi_k dA ) / int_wall phi_k ds,

with sigma_e the shear-stress vector on triangle e (tau(g) n, or the
augmented Lagrangian multiplier for a yield-stress fluid).  It is exact
in the mean: sum_k tau_w,k int phi_k ds = G a b, the force balance of the
quarter section, so the perimeter mean is G A / P.

Shear-rate range.  The local shear rates that carry 98 % of the viscous
dissipation int tau g dA (= G Q, the power per unit length; from the 1st to
the 99th percentile of g weighted by A_e tau_e g_e): the part of the flow
curve that sets the pressure drop, for the extrapolation check.

Unyielded zones: triangles with zero strain rate; those moving at more than
half the maximum velocity are the plug, the rest dead zones at the walls.
"""

from __future__ import annotations

import numpy as np

from rheofit.flow.rectangle.mesh import QuarterMesh

#: dissipation quantiles of the reported shear-rate range
RANGE_QUANTILES = (0.01, 0.99)


def wall_shear_stress(mesh: QuarterMesh, stress_y, stress_z, pressure_gradient: float):
    """(arc [m], tau_w [Pa], wall nodes) along the walls, from the middle of y = a to the middle of z = b."""
    nodes, arc = mesh.wall_nodes()
    flux = mesh.area[:, None] * (stress_y[:, None] * mesh.coef_y + stress_z[:, None] * mesh.coef_z)
    reaction = np.bincount(mesh.triangles.ravel(), flux.ravel(), mesh.full_load.size)
    reaction -= pressure_gradient * mesh.full_load
    return arc, -reaction[nodes] / _wall_lengths(arc), nodes


def _wall_lengths(arc):
    """int_wall phi_k ds [m] of each wall node, from the arc positions (lumped, 1-D)."""
    h = np.diff(arc)
    length = np.zeros(arc.size)
    length[:-1] += 0.5 * h
    length[1:] += 0.5 * h
    return length


def dissipation_range(shear_rate, stress_magnitude, area):
    """(low, high) shear rate [1/s] carrying the central 98 % of the dissipation."""
    weight = area * stress_magnitude * shear_rate
    total = weight.sum()
    if not total > 0:
        return (0.0, 0.0)
    order = np.argsort(shear_rate)
    cumulative = np.cumsum(weight[order]) / total
    low, high = (shear_rate[order][min(np.searchsorted(cumulative, q), order.size - 1)] for q in RANGE_QUANTILES)
    return (float(low), float(high))


def unyielded_split(mesh: QuarterMesh, u_full, unyielded):
    """(plug fraction, dead fraction) of the section's area [-]."""
    if not unyielded.any():
        return 0.0, 0.0
    mean_u = u_full.ravel()[mesh.triangles].mean(axis=1)
    plug = unyielded & (mean_u > 0.5 * u_full.max())
    total = mesh.area.sum()
    return float(mesh.area[plug].sum() / total), float(mesh.area[unyielded & ~plug].sum() / total)


def cell_fraction(mesh: QuarterMesh, mask):
    """Per grid cell (ny, nz): the fraction (0, 0.5, 1) of its two triangles in ``mask``."""
    ny, nz = mesh.cells
    half = mask.reshape(2, ny * nz).mean(axis=0)
    return half.reshape(ny, nz)
