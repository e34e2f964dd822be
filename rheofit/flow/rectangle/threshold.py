"""The no-flow threshold of a yield-stress fluid in a rectangular duct.

A fluid with yield stress tau_y stays at rest in a duct of cross-section
Omega as long as the pressure gradient G = dP/L satisfies

    G <= G_c = tau_y h(Omega),   h(Omega) = min over subsets D of perimeter(D) / area(D),

the Cheeger constant of the section (Mosolov & Miasnikov 1965, J. Appl.
Math. Mech. 29, 545-577; 1967, 31, 609-613; the link to Cheeger sets as in
Frigaard, Iglesias, Mercier, Poeschl & Scherzer 2017, SIAM J. Appl. Math.
77, 638-658).  For a convex section the Cheeger set is the union of all
discs of radius 1/h inside it, and 1/h is the radius r at which the inner
parallel set has area pi r^2 (Kawohl & Lachand-Robert 2006, Pacific J.
Math. 225, 103-118; Leonardi, Neumayer & Saracco 2017, Calc. Var. PDE 56,
art. 164).  For a D x W rectangle, (D - 2r)(W - 2r) = pi r^2 gives

    h = (4 - pi) / (D + W - sqrt((D - W)^2 + pi D W))
      = (D + W + sqrt((D - W)^2 + pi D W)) / (D W),

e.g. h = (4 - pi)/(2 - sqrt(pi)) = 2 + sqrt(pi) = 3.7725 for the unit square, and h -> 2/D
(the slit's G_c = 2 tau_y / D) when W/D grows.

>>> round(threshold_pressure_gradient(1.0, 1.0, 1.0), 4)
3.7725
"""

from __future__ import annotations

import math


def cheeger_constant(depth: float, width: float) -> float:
    """h of a depth x width rectangle [1/m] (see module docstring)."""
    return (depth + width + math.sqrt((depth - width) ** 2 + math.pi * depth * width)) / (depth * width)


def threshold_pressure_gradient(yield_stress: float, depth: float, width: float) -> float:
    """G_c = tau_y h [Pa/m]: at or below it a fluid of yield stress ``yield_stress`` [Pa] does not flow."""
    return yield_stress * cheeger_constant(depth, width)
