"""95 % confidence intervals for fitted parameters: profile likelihood and Wald.

Profile likelihood (the main method).  For parameter j, hold its internal
coordinate x_j at a value v, refit all the others, and follow the profile
RSS_prof(v) outward from the optimum until

    RSS_prof(v) / RSS_min = 1 + F(1, N - k; 0.95) / (N - k)

(:func:`rheofit.fitting.statistics.profile_threshold`).  The search works on the
signed root z(v) = sqrt(RSS_prof / RSS_min - 1), which is exactly linear in v
for a model linear in its parameters, so a secant step from the Wald end
usually lands within a few refits.  Bates & Watts (1988) Nonlinear Regression
Analysis and Its Applications, Wiley, ch. 6 (profile t); Venzon &
Moolgavkar (1988) Appl. Stat. 37, 87-94 (from memory).

An end is *open* (``value=None``) when the profile stays below the threshold
all the way to the parameter's own bound, or when it only crosses the
threshold because another parameter has been pushed to the edge of its
declared range (a range limit such as 1e9 Pa*s, not a physical limit such as
a zero yield stress): then the data, not the bounds, fail to close it.

Wald (fallback).  x_j +/- t(N - k; 0.975) * se_j in the internal
parametrisation, from the covariance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.fitting.problem import LogStressProblem

PROFILE = "profile likelihood (F threshold)"
WALD = "covariance (Wald)"

#: relative accuracy of z at an interval end; the end is then known to
#: about 0.1 % of the interval's half-width
_Z_RTOL = 1e-3
_MAX_REFITS = 30

#: share of the threshold increment (RSS_min * (threshold - 1)) that freeing
#: another parameter from its range limit may remove before the end counts
#: as set by that limit (0.1 would move the end by about 5 % of its distance)
LIMIT_SHARE = 0.1

#: how far a range limit is pushed out for that check: 6 decades for a
#: logged parameter (a linear one: max(1, |bound|))
RELAX_LOG = math.log(1e6)


@dataclass(frozen=True)
class End:
    """One end of an interval, in the internal coordinate.

    ``status`` is ``"closed"``, ``"open_bound"`` (the parameter's own bound is
    reached inside the threshold), ``"open_limit"`` (closed only by
    ``limited_by`` sitting at its range limit), ``"failed"`` (refits broke
    down) or ``"better"`` (a lower RSS than the optimum turned up at
    ``better``: the fit must be redone from there).
    """

    value: float | None
    status: str
    limited_by: str = ""
    better: np.ndarray | None = None


def first_step(problem: LogStressProblem, jac, rss_min: float, index: int,
               stderr: float | None, threshold: float) -> float:
    """A first distance to try from the optimum [internal units].

    The Wald half-width sqrt(F) * se when the covariance exists; otherwise
    the conditional half-width (others held fixed), which is never wider
    than the profile one, so the search only has to grow from it.
    """
    dof = problem.n_points - problem.n_params
    if stderr is not None and math.isfinite(stderr) and stderr > 0:
        return math.sqrt((threshold - 1.0) * dof) * stderr
    curvature = float(jac[:, index] @ jac[:, index])
    if curvature <= 0 or not math.isfinite(curvature):
        return math.inf
    return math.sqrt((threshold - 1.0) * rss_min / curvature)


def _at_bound(problem: LogStressProblem, x, i: int) -> tuple[float, int] | None:
    """(bound, outward sign) of the bound coordinate i sits on, or None."""
    for bound, sign in ((problem.lower[i], -1), (problem.upper[i], +1)):
        if abs(x[i] - bound) <= 1e-6 * max(1.0, abs(bound)):
            return bound, sign
    return None


def _relaxed_bounds(problem: LogStressProblem, i: int, sign: int):
    """Declared bounds with coordinate i's ``sign`` side pushed far out."""
    lower, upper = problem.lower.copy(), problem.upper.copy()
    bound = upper[i] if sign > 0 else lower[i]
    reach = RELAX_LOG if problem.parametrisation.logged[i] else max(1.0, abs(bound))
    if sign > 0:
        upper[i] = bound + reach
    else:
        lower[i] = bound - reach
    return lower, upper


def _pushed_to_range_limit(problem: LogStressProblem, x, index: int, rss: float,
                           rss_min: float, threshold: float) -> str:
    """Name of another parameter whose range limit holds this end closed, or ''.

    A parameter counts when it sits on a non-zero bound (a range limit, not
    a physical zero) and refitting with that limit pushed far out lowers the
    profile here by more than LIMIT_SHARE of the threshold increment.  A
    parameter that merely drifted onto a limit along a flat ridge does not
    count.
    """
    par = problem.parametrisation
    for i, name in enumerate(par.names):
        found = None if i == index else _at_bound(problem, x, i)
        if found is None:
            continue
        bound, sign = found
        if (math.exp(bound) if par.logged[i] else bound) == 0:
            continue
        _, relaxed = problem.refit_fixed(index, x[index], x, _relaxed_bounds(problem, i, sign))
        if relaxed < rss - LIMIT_SHARE * (threshold - 1.0) * rss_min:
            return name
    return ""


def _end_at(problem: LogStressProblem, x, index: int, rss_min: float, threshold: float) -> End:
    limited = _pushed_to_range_limit(problem, x, index, problem.rss(x), rss_min, threshold)
    if limited:
        return End(None, "open_limit", limited_by=limited)
    return End(float(x[index]), "closed")


def _next_outward(prev, cur, target: float) -> float:
    """Secant extrapolation of z(d) to the target, growing by 1.1x to 10x."""
    (d0, z0), (d1, z1) = prev, cur
    if z1 > z0:
        guess = d1 + (target - z1) * (d1 - d0) / (z1 - z0)
    else:
        guess = 10.0 * d1
    return float(np.clip(guess, 1.1 * d1, 10.0 * d1))


def _next_inside(prev, cur, inside, outside, target: float) -> float:
    """Secant on the two latest points, bisection if it leaves the bracket."""
    (d0, z0), (d1, z1) = prev, cur
    lo, hi = inside[0], outside[0]
    if z1 != z0:
        guess = d1 + (target - z1) * (d1 - d0) / (z1 - z0)
        if lo < guess < hi:
            return guess
    return 0.5 * (lo + hi)


def profile_end(problem: LogStressProblem, x_hat, rss_min: float, index: int,
                direction: int, step: float, threshold: float,
                better_below: float = -math.inf) -> End:
    """Find where the profile of coordinate ``index`` crosses the threshold.

    Walks from ``x_hat`` in ``direction`` (+1 or -1), first by ``step``.
    ``rss_min`` is the (floored) optimum RSS; a profile point with an RSS
    below ``better_below`` means the optimum was only local.
    """
    target = math.sqrt(threshold - 1.0)
    centre = float(x_hat[index])
    limit = problem.upper[index] if direction > 0 else problem.lower[index]
    room = abs(limit - centre)
    if room <= 1e-9 * max(1.0, abs(centre)):
        return End(None, "open_bound")
    inside, outside = (0.0, 0.0), None
    prev, x_warm = (0.0, 0.0), np.asarray(x_hat, dtype=float)
    d = min(step, room)
    for _ in range(_MAX_REFITS):
        value = limit if d >= room else centre + direction * d
        x, rss = problem.refit_fixed(index, value, x_warm)
        if not math.isfinite(rss):
            return End(None, "failed")
        if rss < better_below:
            return End(None, "better", better=x)
        z = math.sqrt(max(rss / rss_min - 1.0, 0.0))
        x_warm = x
        if abs(z - target) <= _Z_RTOL * target:
            return _end_at(problem, x, index, rss_min, threshold)
        cur = (d, z)
        if z > target:
            outside = (d, z, x)
        else:
            inside = cur
        if outside is None:
            if d >= room:
                return End(None, "open_bound")
            d = min(_next_outward(prev, cur, target), room)
        else:
            if outside[0] - inside[0] <= 1e-6 * outside[0]:
                return _end_at(problem, outside[2], index, rss_min, threshold)
            d = _next_inside(prev, cur, inside, outside, target)
        prev = cur
    if outside is not None:  # not converged: the outer point is conservative
        return _end_at(problem, outside[2], index, rss_min, threshold)
    return End(None, "failed")


def wald_end(problem: LogStressProblem, x_hat, index: int, direction: int,
             stderr: float | None, threshold: float) -> End:
    """x_j +/- t(N-k; 0.975) se_j; open where it passes the bound or se is unknown."""
    if stderr is None or not math.isfinite(stderr):
        return End(None, "failed")
    dof = problem.n_points - problem.n_params
    value = float(x_hat[index]) + direction * math.sqrt((threshold - 1.0) * dof) * stderr
    if not problem.lower[index] <= value <= problem.upper[index]:
        return End(None, "open_bound")
    return End(value, "closed")
