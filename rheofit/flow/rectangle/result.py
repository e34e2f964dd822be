"""The result of one rectangular-channel solve: a frozen record of numbers and fields (SI)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True, eq=False)
class RectangleFlow:
    """Fully developed laminar flow of one fluid in a depth x width rectangle at one operating point.

    The section is -depth/2 <= y <= depth/2, -width/2 <= z <= width/2;
    fields are given on the quarter y >= 0, z >= 0 (the rest by symmetry).

    Attributes
    ----------
    model, params : the fluid (declaration name, SI parameter values).
    depth, width : the section [m].
    pressure_gradient : G = dP/L [Pa/m].
    flow_rate : Q [m^3/s].
    computed : "flow_rate" (G was given) or "pressure_gradient" (Q was given).
    relative_error : estimated discretisation error of the computed quantity [-]
        (see ``method``); 0 for an exact series or a fluid at rest.
    flowing : False at or below the threshold of a yield-stress fluid.
    threshold_pressure_gradient : G below which the fluid does not flow [Pa/m] (0 without a yield stress).
    mean_velocity, max_velocity : Q/A and the largest velocity (the centre, or the plug) [m/s].
    mean_wall_shear_stress : G A / P [Pa], exact (force balance).
    max_wall_shear_stress : largest wall shear stress [Pa]; ``max_wall_shear_stress_at`` its
        (y, z) [m], ``max_wall_shear_stress_error`` its estimated relative discretisation error [-].
    wall_position : arc length [m] from the middle of the wall y = depth/2, through the corner,
        to the middle of the wall z = width/2 (a quarter of the perimeter).
    wall_shear_stress, wall_shear_rate : along ``wall_position`` [Pa], [1/s] (rate 0 in dead zones).
    wall_shear_rate_range : (min, max) of ``wall_shear_rate`` [1/s].
    shear_rate_range : (low, high) local shear rates carrying 98 % of the viscous dissipation [1/s].
    max_shear_rate : largest local shear rate [1/s].
    unyielded_fraction, plug_fraction, dead_fraction : shares of the section's area [-].
    grid_y, grid_z : node coordinates of the quarter [m]; ``velocity`` (len(grid_y), len(grid_z)) [m/s].
    unyielded_cells : per grid cell, the unyielded share (0, 0.5 or 1) [-].
    level_values : the computed quantity on the fine, medium and coarse meshes (SI).
    observed_order : convergence order used in the Richardson extrapolation [-].
    cells : (depth, width) cells of the finest quarter mesh.
    iterations : solver iterations on each mesh, fine first.
    converged : False when an iterative solve stopped at its iteration limit.
    method : how the numbers were obtained, in words.
    """

    model: str
    params: dict
    depth: float
    width: float
    pressure_gradient: float
    flow_rate: float
    computed: str
    relative_error: float
    flowing: bool
    threshold_pressure_gradient: float
    mean_velocity: float
    max_velocity: float
    mean_wall_shear_stress: float
    max_wall_shear_stress: float
    max_wall_shear_stress_at: tuple
    max_wall_shear_stress_error: float
    wall_position: np.ndarray
    wall_shear_stress: np.ndarray
    wall_shear_rate: np.ndarray
    wall_shear_rate_range: tuple
    shear_rate_range: tuple
    max_shear_rate: float
    unyielded_fraction: float
    plug_fraction: float
    dead_fraction: float
    grid_y: np.ndarray
    grid_z: np.ndarray
    velocity: np.ndarray
    unyielded_cells: np.ndarray
    level_values: tuple
    observed_order: float
    cells: tuple
    iterations: tuple
    converged: bool
    method: str

    @property
    def area(self) -> float:
        """Cross-section depth * width [m^2]."""
        return self.depth * self.width

    @property
    def perimeter(self) -> float:
        """Wetted perimeter 2 (depth + width) [m]."""
        return 2.0 * (self.depth + self.width)

    @property
    def hydraulic_diameter(self) -> float:
        """4 A / P [m]."""
        return 4.0 * self.area / self.perimeter

    def to_dict(self) -> dict:
        """Plain JSON-able numbers (the velocity field left out)."""
        skip = {"grid_y", "grid_z", "velocity", "unyielded_cells"}
        out = {}
        for name in self.__dataclass_fields__:
            if name in skip:
                continue
            value = getattr(self, name)
            if isinstance(value, np.ndarray):
                value = value.tolist()
            elif isinstance(value, tuple):
                value = [float(v) if isinstance(v, (float, np.floating)) else v for v in value]
            elif isinstance(value, np.floating):
                value = float(value)
            out[name] = value
        return out
