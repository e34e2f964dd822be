"""Carrying a fit's parameter uncertainty into viscosity curves and flow predictions.

Method (propagation of distributions by Monte Carlo)
----------------------------------------------------
1. Draws.  The fitted parameters are drawn in the fit's internal
   parametrisation (logarithms of positive-scale parameters, see
   :mod:`rheofit.fitting.problem`) from a multivariate Student t distribution
   centred on the estimate, with scale matrix the covariance
   s^2 (J^T J)^-1 of the log-space least squares and N - k degrees of
   freedom (the residual variance is estimated from the same N points):

       x = x_hat + z * sqrt(nu / w),  z ~ N(0, C),  w ~ chi^2(nu),  nu = N - k.

   For a model linear in its parameters this is exactly the distribution
   behind the Student t confidence interval.  Draws outside the declared
   bounds are drawn again (a truncated distribution).  JCGM 101:2008
   (GUM Supplement 1), sec. 6.4.9 (t distribution for an estimate with an
   unknown variance) and JCGM 102:2011 (GUM Supplement 2), sec. 6.5.3
   (multivariate t) (section numbers from memory).
2. Unresolved parameters (an open 95 % profile end, ParameterEstimate
   ``resolved`` False) are not trusted to the covariance: they are held at
   their estimate in the draws (the others are drawn from their conditional
   distribution, the inverse of the matching block of J^T J) and swept
   separately along their profile likelihood, from the estimate out to the
   closed 95 % end or, on an open side, to the declared range limit, each
   point refitting the other parameters.  Only points inside the profile
   threshold (the data cannot reject them) are kept.  Bates & Watts (1988)
   Nonlinear Regression Analysis and Its Applications, ch. 6 (profile
   traces) (from memory).
3. Each draw and each profile point is carried through the flow engine (one
   vectorised solve over the operating points per draw).  The interval is
   the 2.5th to 97.5th percentile of the draws, widened by how far the
   profile points move the prediction y (>= 0) from its central value:

       low  = P2.5  * min(1, min_r y_r / y_hat)
       high = P97.5 * max(1, max_r y_r / y_hat)

   (by the difference y_r - y_hat where y_hat = 0, e.g. no flow).

   So an unresolved parameter that does not matter at the operating point
   (an ``eta0`` whose plateau lies below the operating shear rate) leaves
   the interval alone, and one that does widens it.  When the prediction is
   still moving where the sweep reaches a declared range limit (not a
   physical zero), the end rests on that limit, not on the data: the result
   carries an ``interval_unreliable`` flag.

Public helpers: :func:`parameter_draws`, :func:`viscosity_band` (drawn as
:class:`rheofit.fitting.band.ViscosityBand`); the flow engine carries the
draws in :mod:`rheofit.flow.intervals`.

Units: shear rate [1/s], viscosity [Pa*s], pressure [Pa], flow rate [m^3/s].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.errors import ParameterError, RheofitError
from rheofit.fitting.problem import LogStressProblem, Parametrisation
from rheofit.fitting.statistics import floored_rss, profile_threshold
from rheofit.fluid import Fluid

__all__ = [
    "ParameterDraws", "parameter_draws", "viscosity_band", "interval_from", "unreliable_paths",
    "LEVEL", "DEFAULT_SAMPLES", "DEFAULT_SEED",
]

#: confidence level of every interval a prediction carries
LEVEL = 0.95
#: Monte Carlo draws per interval (the 2.5th percentile then rests on 10 draws)
DEFAULT_SAMPLES = 400
#: draws for a viscosity band (cheap: no flow solve)
BAND_SAMPLES = 2000
#: fixed seed: the same fit gives the same interval every time
DEFAULT_SEED = 0
#: fewest draws accepted (fewer give no meaningful 2.5th percentile)
MIN_SAMPLES = 40

#: profile points along an unresolved parameter: these fractions of the way
#: from the estimate to the closed 95 % end or the declared range limit
RIDGE_FRACTIONS = 2.0 ** -np.arange(7.0, -1.0, -1.0)
#: a prediction that still changes by more than this share of its central
#: value over the last profile step rests on the range limit, not the data
STILL_MOVING = 0.01
#: a share of failed draws above this makes the interval unreliable
FAILED_SHARE = 0.005
#: redraws of out-of-bounds draws before the rest are clipped to the bounds
_REDRAWS = 50


# --- parameter draws ------------------------------------------------------------------

@dataclass(frozen=True)
class RidgePath:
    """Profile points of one unresolved parameter on one side, estimate outward.

    ``rows`` index :attr:`ParameterDraws.ridge`; ``at_limit`` is True when the
    last point sits on a declared range limit that is not a physical zero.
    """

    parameter: str
    side: str
    open: bool
    rows: tuple[int, ...]
    at_limit: bool
    limit: float | None = None


@dataclass(frozen=True, eq=False)
class ParameterDraws:
    """Parameter vectors that carry one fit's uncertainty (internal parametrisation).

    Attributes
    ----------
    fit : FitResult
    center : (k,) array, the estimate; draws : (S, k) Monte Carlo draws;
    ridge : (P, k) profile points of unresolved parameters; paths : the
    RidgePaths into ``ridge``; swept : names swept along their profile;
    dof : degrees of freedom of the t distribution; method : plain words;
    flags : anything that makes an interval unreliable before any solve.
    """

    fit: object
    center: np.ndarray
    draws: np.ndarray
    ridge: np.ndarray
    paths: tuple[RidgePath, ...]
    swept: tuple[str, ...]
    dof: int
    method: str
    flags: tuple[Flag, ...] = ()

    @property
    def samples(self) -> int:
        """Number of Monte Carlo draws S."""
        return int(self.draws.shape[0])

    def values(self, x) -> dict[str, np.ndarray]:
        """Parameter values (SI) of internal vectors x, shape (..., k)."""
        return self.fit.covariance.natural(x)

    def fluids(self, x) -> list[Fluid]:
        """One Fluid per row of x (values are inside the declared bounds)."""
        declaration = self.fit.declaration
        values = self.values(np.atleast_2d(x))
        names = list(values)
        return [Fluid(declaration, {n: float(values[n][i]) for n in names})
                for i in range(np.atleast_2d(x).shape[0])]


def is_fit(obj) -> bool:
    """True for a fit result (it carries a covariance), False for a plain fluid."""
    return hasattr(obj, "covariance") and hasattr(obj, "params") and hasattr(obj, "declaration")


def require_fit(obj, what: str) -> None:
    if not is_fit(obj):
        raise ParameterError(
            f"{what} needs a fit result (from rheofit.fit or rheofit.fit_all), got "
            f"{type(obj).__name__}; a fluid with given parameters carries no uncertainty."
        )


def check_samples(samples) -> int:
    """The number of draws as an int; ParameterError unless a whole number >= MIN_SAMPLES."""
    if isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < MIN_SAMPLES:
        raise ParameterError(
            f"samples = {samples!r} must be a whole number of at least {MIN_SAMPLES} "
            f"(default {DEFAULT_SAMPLES})."
        )
    return int(samples)


def check_level(level) -> float:
    try:
        value = float(level)
    except (TypeError, ValueError):
        value = math.nan
    if not 0.0 < value < 1.0:
        raise ParameterError(f"level = {level!r} must lie strictly between 0 and 1, e.g. 0.95.")
    return value


def rebuild_problem(fit) -> LogStressProblem | None:
    """The fit's least-squares problem, rebuilt from its shear rates and residuals.

    tau_data = tau_model(x_hat) * exp(-r) since r = ln tau_model - ln tau_data.
    None when the result carries no data (an old saved fit).
    """
    rate = np.asarray(getattr(fit, "shear_rate", ()), dtype=float)
    residuals = np.asarray(getattr(fit, "residuals", ()), dtype=float)
    if rate.size <= fit.n_params or rate.size != residuals.size:
        return None
    if not (np.all(np.isfinite(rate) & (rate > 0)) and np.all(np.isfinite(residuals))):
        return None
    values = fit.covariance.natural(fit.covariance.center)
    with np.errstate(all="ignore"):
        stress = fit.declaration.stress(rate, **{k: float(v) for k, v in values.items()}) * np.exp(-residuals)
    if not np.all(np.isfinite(stress) & (stress > 0)):
        return None
    return LogStressProblem(fit.declaration, rate, stress)


def _conditional_covariance(fit, problem, free: np.ndarray) -> np.ndarray | None:
    """Covariance of the free coordinates with the others held at the estimate."""
    if not free.any():
        return np.zeros((0, 0))
    matrix = fit.covariance.matrix
    if free.all() and matrix is not None and np.all(np.isfinite(matrix)):
        return np.asarray(matrix, dtype=float)
    if problem is not None:
        jac = problem.jacobian(fit.covariance.center)
        return problem.covariance(jac[:, free], floored_rss(fit.rss_log, problem.n_points))
    if matrix is None or not np.all(np.isfinite(matrix)):
        return None
    try:
        precision = np.linalg.inv(matrix)
        return np.linalg.inv(precision[np.ix_(free, free)])
    except np.linalg.LinAlgError:
        return None


def _t_draws(center, cov, free, bounds, dof, samples, rng) -> np.ndarray:
    """Multivariate t draws of the free coordinates, redrawn inside the bounds."""
    lower, upper = bounds
    x = np.tile(center, (samples, 1))
    if not free.any():
        return x
    values, vectors = np.linalg.eigh(0.5 * (cov + cov.T))
    root = vectors * np.sqrt(np.clip(values, 0.0, None))
    pending = np.arange(samples)
    for _ in range(_REDRAWS):
        z = rng.standard_normal((pending.size, int(free.sum()))) @ root.T
        scale = np.sqrt(dof / rng.chisquare(dof, pending.size))
        x[np.ix_(pending, np.nonzero(free)[0])] = center[free] + z * scale[:, None]
        outside = np.any((x[pending] < lower) | (x[pending] > upper), axis=1)
        pending = pending[outside]
        if pending.size == 0:
            break
    return np.clip(x, lower, upper)


def _internal_end(value, logged: bool, bound: float) -> float:
    """A natural interval end in internal units (the bound for an open end)."""
    if value is None:
        return bound
    if logged:
        return math.log(value) if value > 0 else bound
    return float(value)


def _walk(problem, center, j, target, rss_limit) -> list[np.ndarray]:
    """Profile points of coordinate j from the estimate towards ``target``."""
    points, warm = [], center
    for fraction in RIDGE_FRACTIONS:
        x, rss = problem.refit_fixed(j, center[j] + fraction * (target - center[j]), warm)
        if not (math.isfinite(rss) and rss <= rss_limit):
            break
        points.append(x)
        warm = x
    return points


def _ridge(fit, problem, swept) -> tuple[np.ndarray, tuple[RidgePath, ...]]:
    """Profile points of every swept parameter, both sides."""
    k = len(fit.covariance.names)
    if problem is None or not swept:
        return np.zeros((0, k)), ()
    par = Parametrisation.of(fit.declaration)
    center = np.asarray(fit.covariance.center, dtype=float)
    rss_min = floored_rss(fit.rss_log, problem.n_points)
    threshold = profile_threshold(problem.n_points, problem.n_params)
    # the closed ends sit on the threshold to ~0.1 % of its increment
    rss_limit = rss_min * (1.0 + 1.01 * (threshold - 1.0))
    rows, paths = [], []
    for j, name in enumerate(par.names):
        if name not in swept:
            continue
        spec = fit.declaration.parameters[j]
        for side, end, bound, natural in (("lower", fit.params[name].ci95[0], par.lower[j], spec.lower),
                                          ("upper", fit.params[name].ci95[1], par.upper[j], spec.upper)):
            target = _internal_end(end, par.logged[j], bound)
            if not math.isfinite(target) or abs(target - center[j]) <= 1e-12 * max(1.0, abs(center[j])):
                continue
            points = _walk(problem, center, j, target, rss_limit)
            if not points:
                continue
            reached = abs(points[-1][j] - target) <= 1e-9 * max(1.0, abs(target))
            at_limit = bool(end is None and reached and natural != 0)
            index = tuple(range(len(rows), len(rows) + len(points)))
            rows += points
            paths.append(RidgePath(name, side, end is None, index, at_limit,
                                   float(natural) if at_limit else None))
    return (np.array(rows) if rows else np.zeros((0, k))), tuple(paths)


def _method_text(samples, dof, swept, unresolved, covariance_missing) -> str:
    text = (f"Monte Carlo: {samples} draws of the fitted parameters from a multivariate t "
            f"distribution ({dof} degrees of freedom) in the fit's internal parametrisation "
            "(logarithms of positive-scale parameters), truncated to the declared bounds; "
            "2.5th to 97.5th percentile")
    if covariance_missing:
        text += ("; the covariance is not available, so every parameter was swept over its "
                 "profile-likelihood interval instead")
    elif unresolved:
        text += (f"; unresolved {', '.join(unresolved)} held at the estimate in the draws and "
                 "swept over the profile-likelihood range (open ends out to the declared limits)")
    return text


def parameter_draws(fit, samples: int = DEFAULT_SAMPLES, seed: int | None = DEFAULT_SEED) -> ParameterDraws:
    """Draws and profile points that carry a fit's parameter uncertainty (see module docstring).

    Parameters
    ----------
    fit : FitResult
    samples : int
        Monte Carlo draws (at least :data:`MIN_SAMPLES`).
    seed : int or None
        Seed of the random generator; the default makes results repeatable.

    Raises ParameterError when ``fit`` is not a fit result or ``samples`` is too small.
    """
    require_fit(fit, "An uncertainty estimate")
    samples = check_samples(samples)
    names = tuple(fit.covariance.names)
    center = np.asarray(fit.covariance.center, dtype=float)
    par = Parametrisation.of(fit.declaration)
    problem = rebuild_problem(fit)
    unresolved = tuple(n for n in names if not fit.params[n].resolved)
    free = np.array([n not in unresolved for n in names])
    dof = max(int(fit.n_points) - len(names), 1)
    cov = _conditional_covariance(fit, problem, free)
    missing = cov is None
    if missing:  # not separately identifiable: sweep every parameter instead
        free = np.zeros(len(names), dtype=bool)
        cov = np.zeros((0, 0))
    swept = tuple(n for n, f in zip(names, free) if not f)
    rng = np.random.default_rng(seed)
    draws = _t_draws(center, cov, free, (np.array(par.lower), np.array(par.upper)), dof, samples, rng)
    ridge, paths = _ridge(fit, problem, swept)
    flags = ()
    if swept and problem is None:
        flags = (Flag("interval_unreliable",
                      f"The fit carries no data to sweep {', '.join(swept)} over its profile "
                      "likelihood, so the interval holds it fixed and is too narrow.",
                      {"parameters": list(swept)}),)
    method = _method_text(samples, dof, swept, unresolved, missing)
    return ParameterDraws(fit, center, draws, ridge, paths, swept, dof, method, flags)


# --- intervals from evaluated draws ----------------------------------------------------

def interval_from(central, draws, ridge, level: float = LEVEL):
    """(low, high) from Monte Carlo values (S, M) widened by profile values (P, M).

    Every quantity here is >= 0, so a profile point widens an end by its
    ratio to the central value (the end keeps its sign); where the central
    value is 0 (no flow) by its difference.
    """
    tail = 50.0 * (1.0 - level)
    low, high = np.percentile(draws, [tail, 100.0 - tail], axis=0)
    if ridge.shape[0]:
        positive = central > 0
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(positive, ridge / np.where(positive, central, 1.0), np.nan)
            shift = ridge - central[None, :]
        low = np.where(positive, low * np.minimum(1.0, np.nanmin(ratio, axis=0)),
                       low + np.minimum(0.0, np.nanmin(shift, axis=0)))
        high = np.where(positive, high * np.maximum(1.0, np.nanmax(ratio, axis=0)),
                        high + np.maximum(0.0, np.nanmax(shift, axis=0)))
    return low, high


def unreliable_paths(draws: ParameterDraws, central, ridge_values, what: str) -> tuple[Flag, ...]:
    """Flags for sweeps that reach a range limit with the prediction still moving."""
    flags = []
    scale = np.maximum(np.abs(central), 1e-300)
    for path in draws.paths:
        if not path.at_limit:
            continue
        last = ridge_values[path.rows[-1]]
        before = central if len(path.rows) == 1 else ridge_values[path.rows[-2]]
        with np.errstate(invalid="ignore"):
            moving = ~(np.abs(last - before) <= STILL_MOVING * scale)
        if not moving.any():
            continue
        spec = draws.fit.declaration.parameter(path.parameter)
        where = "" if moving.size == 1 else f" (at {int(moving.sum())} of {moving.size} points)"
        flags.append(Flag(
            "interval_unreliable",
            f"The 95 % interval of the {what} is not set by the data: {path.parameter} is not "
            f"bounded on its {path.side} side, and out at its declared limit ({path.limit:g} "
            f"{spec.unit}) it still moves the {what}{where}; read that end as 'unknown'.",
            {"parameter": path.parameter, "side": path.side, "quantity": what,
             "points": int(moving.sum())},
        ))
    return tuple(flags)


# --- viscosity -------------------------------------------------------------------------

def _viscosities(draws: ParameterDraws, rows, rate) -> np.ndarray:
    values = draws.values(np.atleast_2d(rows))
    params = {k: v[:, None] for k, v in values.items()}
    with np.errstate(all="ignore"):
        return draws.fit.declaration.viscosity(rate[None, :], **params)


def viscosity_band(fit, shear_rate, level: float = LEVEL, *, samples: int = BAND_SAMPLES,
                   seed: int | None = DEFAULT_SEED, draws: ParameterDraws | None = None
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Confidence band (low, high) [Pa*s] of the fitted viscosity curve at ``shear_rate`` [1/s].

    Percentiles (1 - level)/2 and (1 + level)/2 of eta(gamma_dot; x) over the
    parameter draws, widened along unresolved parameters (module docstring).
    Arrays shaped like ``shear_rate``.  ``draws`` reuses draws already made
    for ``fit`` (``samples`` and ``seed`` are then not used).

    Raises ParameterError for a fluid without a fit, a level outside (0, 1),
    or a shear rate that is not a positive, finite number.
    """
    require_fit(fit, "viscosity_band")
    level = check_level(level)
    rate = np.asarray(shear_rate, dtype=float)
    flat = rate.ravel()
    bad = ~(np.isfinite(flat) & (flat > 0))
    if bad.any():
        raise ParameterError(
            f"shear_rate = {float(flat[bad][0]):g} is not a positive, finite number; give shear rates in 1/s."
        )
    draws = draws if draws is not None else parameter_draws(fit, samples, seed)
    central = fit.viscosity(flat)
    low, high = interval_from(central, _viscosities(draws, draws.draws, flat),
                              _viscosities(draws, draws.ridge, flat) if draws.ridge.shape[0]
                              else np.zeros((0, flat.size)), level)
    return low.reshape(rate.shape), high.reshape(rate.shape)
