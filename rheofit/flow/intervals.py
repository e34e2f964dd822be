"""95 % intervals of flow predictions: parameter draws carried through the flow engine.

The draws and the rule that turns evaluated draws into an interval are those
of :mod:`rheofit.fitting.draws` (its docstring gives the method and its
sources); this module solves the flow for every draw, all draws and
operating points in one vectorised solve (:func:`rheofit.flow.engine.solve_sets`).  Used by
:func:`rheofit.flow.predict` and :func:`rheofit.flow.curves.operating_curve`.

Units: pressure [Pa], flow rate [m^3/s], wall shear stress [Pa], wall shear rate [1/s].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.fitting.draws import (
    DEFAULT_SAMPLES, DEFAULT_SEED, FAILED_SHARE, LEVEL, ParameterDraws, check_level, interval_from,
    parameter_draws, require_fit, unreliable_paths,
)
from rheofit.flow import engine
from rheofit.flow.geometry import check_geometry

__all__ = ["FlowIntervals", "flow_intervals", "operating_band"]

_QUANTITIES = ("pressure_drop", "flow_rate", "wall_shear_stress", "wall_shear_rate")


# --- flow ----------------------------------------------------------------------------

@dataclass(frozen=True)
class FlowIntervals:
    """95 % intervals of a flow prediction (1-D arrays over operating points, SI).

    ``given`` is "flow_rate" or "pressure_drop"; ``intervals`` maps
    pressure_drop / flow_rate (the solved one), wall_shear_stress and
    wall_shear_rate to (low, high) arrays.  ``method`` names the method,
    ``samples`` the number of Monte Carlo draws.
    """

    given: str
    intervals: dict
    method: str
    samples: int
    flags: tuple[Flag, ...]


def _solve(fluid, geometry, given, values, method):
    solver = engine.solve_flow_rate if given == "flow_rate" else engine.solve_pressure_drop
    return solver(fluid, geometry, values, method)


def _evaluate(draws: ParameterDraws, rows, geometry, given, values, method):
    """Solved quantities for every parameter row: {name: (R, M)} and a failed mask.

    All rows in one vectorised solve (:func:`rheofit.flow.engine.solve_sets`).
    A draw whose flow curve cannot carry the wall stress or the flow rate at
    some point, or that falls again at high shear, has no laminar solution
    there: it comes back NaN and is marked failed, not fatal.
    """
    rows = np.atleast_2d(rows)
    out = {name: np.full((rows.shape[0], values.size), np.nan) for name in _QUANTITIES}
    if rows.shape[0] == 0:
        return out, np.zeros(0, dtype=bool)
    state = engine.solve_sets(draws.fit.declaration, draws.values(rows), geometry, given, values, method)
    solved = np.stack([getattr(state, name) for name in _QUANTITIES])
    with np.errstate(invalid="ignore"):
        failed = ~np.all(np.isfinite(solved) & (solved >= 0), axis=(0, 2))
    for name in _QUANTITIES:
        out[name][~failed] = getattr(state, name)[~failed]
    return out, failed


def _failed_flag(failed, samples) -> tuple[Flag, ...]:
    count = int(failed.sum())
    if count <= FAILED_SHARE * samples:
        return ()
    return (Flag(
        "interval_unreliable",
        f"{count} of {samples} parameter draws gave no laminar solution at this operating point "
        "(their flow curve cannot carry the wall shear stress); the interval leaves them out and "
        "understates the uncertainty.",
        {"failed_draws": count, "samples": samples},
    ),)


def flow_intervals(fit, geometry, flow_rate=None, pressure_drop=None, *,
                   samples: int = DEFAULT_SAMPLES, seed: int | None = DEFAULT_SEED,
                   method: str = "auto", level: float = LEVEL, draws: ParameterDraws | None = None
                   ) -> FlowIntervals:
    """Intervals of the solved quantity and the wall shear stress and rate.

    Give ``flow_rate`` [m^3/s] or ``pressure_drop`` [Pa] (1-D float arrays,
    already checked by the caller).  The central values are solved again
    from the estimate; the draws are one vectorised solve over all draws and
    points (and the profile points another).
    """
    require_fit(fit, "A prediction interval")
    level = check_level(level)
    given = "flow_rate" if flow_rate is not None else "pressure_drop"
    solved = "pressure_drop" if given == "flow_rate" else "flow_rate"
    values = engine.operating_values(flow_rate if flow_rate is not None else pressure_drop,
                               given.replace("_", " "))
    draws = draws if draws is not None else parameter_draws(fit, samples, seed)
    central = _solve(fit.fluid, geometry, given, values, method)
    mc, failed = _evaluate(draws, draws.draws, geometry, given, values, method)
    ridge, ridge_failed = _evaluate(draws, draws.ridge, geometry, given, values, method)
    ok = ~failed
    intervals, flags = {}, list(draws.flags) + list(_failed_flag(failed, draws.samples))
    for name in (solved, "wall_shear_stress", "wall_shear_rate"):
        centre = getattr(central, name)
        if ok.any():
            intervals[name] = interval_from(centre, mc[name][ok], ridge[name][~ridge_failed], level)
        else:
            intervals[name] = (np.full(values.shape, np.nan), np.full(values.shape, np.nan))
    flags += unreliable_paths(draws, getattr(central, solved), ridge[solved], solved.replace("_", " "))
    return FlowIntervals(given, intervals, draws.method, draws.samples, tuple(flags))


def operating_band(fit, geometry, flow_rate, *, level: float = LEVEL, samples: int = DEFAULT_SAMPLES,
                   seed: int | None = DEFAULT_SEED) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) of the pressure drop [Pa] over an array of flow rates [m^3/s].

    The confidence band of the operating curve dP(Q) of a fitted fluid in a
    Tube or Slit, by the method of this module; arrays shaped like
    ``flow_rate``.  Raises ParameterError for a fluid without a fit and
    GeometryError for negative or non-finite flow rates.
    """
    require_fit(fit, "operating_band")
    geometry = check_geometry(geometry)
    shape = np.shape(flow_rate)
    result = flow_intervals(fit, geometry, flow_rate=flow_rate, samples=samples, seed=seed, level=level)
    low, high = result.intervals["pressure_drop"]
    return low.reshape(shape), high.reshape(shape)


