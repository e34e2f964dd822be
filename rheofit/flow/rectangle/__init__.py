"""Rectangular channels: a 2-D solve of the cross-section for every declared model.

- :mod:`~rheofit.flow.rectangle.solve`: :func:`solve_rectangle`, :class:`RectangleSolver` (the method)
- :mod:`~rheofit.flow.rectangle.result`: :class:`RectangleFlow`, the outputs of one solve
- :mod:`~rheofit.flow.rectangle.mesh`: graded quarter mesh, P1 operators, fast Poisson solver
- :mod:`~rheofit.flow.rectangle.viscous`: Newton's method (no yield stress)
- :mod:`~rheofit.flow.rectangle.plastic`: augmented Lagrangian ALG2 (yield stress)
- :mod:`~rheofit.flow.rectangle.threshold`: the no-flow threshold (Cheeger constant)
- :mod:`~rheofit.flow.rectangle.fields`: wall shear stress, shear-rate ranges, unyielded zones
- :mod:`~rheofit.flow.rectangle.law`: a declaration with its parameters bound
"""

from rheofit.flow.rectangle.result import RectangleFlow
from rheofit.flow.rectangle.solve import RectangleSolver, solve_rectangle
from rheofit.flow.rectangle.threshold import cheeger_constant, threshold_pressure_gradient

__all__ = ["RectangleFlow", "RectangleSolver", "solve_rectangle", "cheeger_constant",
           "threshold_pressure_gradient"]
