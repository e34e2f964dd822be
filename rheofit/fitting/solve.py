"""Fit viscosity models to a flow curve, with honest 95 % intervals.

:func:`fit` fits one declared model; :func:`fit_all` fits several and ranks
them by AICc.  Everything is generic over the declarations in
:data:`rheofit.models.MODELS`.

Method
------
* Residuals are relative, in log space: r_i = ln tau_model(gamma_dot_i) -
  ln tau_i, minimised by trust-region reflective least squares
  (scipy.optimize.least_squares) within the declared bounds;
  ``positive_scale`` parameters are fitted as their logarithms
  (:mod:`rheofit.fitting.problem`).
* Start from the declaration's ``guess()``; parameters that commonly trap
  the optimiser (``lam``, ``tau_y``, ``eta_inf``) get a few extra starts
  and the lowest RSS wins.
* 95 % intervals by profile likelihood with the F threshold
  (:mod:`rheofit.intervals`); an end the data cannot close is open (None)
  and the parameter is flagged as not resolved.
* Standard errors from the covariance s^2 (J^T J)^-1, mapped back from log
  with the delta method, se(p) = p * se(ln p).
* AICc and BIC from the Gaussian log-likelihood of the log residuals
  (:func:`rheofit.fitting.statistics.information_criteria`); a Wald-Wolfowitz runs
  test on the residual signs ordered by shear rate flags a systematic
  misfit.
* Enough points: a model with k parameters is fitted only with N >= k + 2
  points (AICc is undefined at N = k + 1); fewer than 5 per parameter flags
  ``few_points``; a ranking on fewer than 8 points says so
  (:mod:`rheofit.fitting.support`, where the rules are explained together).
  Every fit :func:`fit_all` ranks carries its Akaike weight and rank
  (``FitResult.support``).

>>> import numpy as np
>>> from rheofit.curve import FlowCurve
>>> rate = np.logspace(-1, 3, 20)
>>> curve = FlowCurve.from_arrays(rate, stress=3.0 * rate**0.5, name="demo")
>>> result = fit(curve, "power_law")
>>> round(result.values["K"], 6), round(result.values["n"], 6)
(3.0, 0.5)
"""

from __future__ import annotations

import math

import numpy as np

from rheofit.fitting import intervals
from rheofit.curve import Flag
from rheofit.errors import FitError, ParameterError, choice_message
from rheofit.fitting.problem import LogStressProblem
from rheofit.fitting.result import Covariance, FitResult, ParameterEstimate
from rheofit.fitting.statistics import (akaike_weights, floored_rss, information_criteria,
                                        profile_threshold, runs_test)
from rheofit.fitting.support import MIN_SPARE_POINTS, forced, ranking_caveat, supported, with_support
from rheofit.fluid import Fluid
from rheofit.models import MODELS, ViscosityModel, get_model

__all__ = ["fit", "fit_all", "fit_judged", "aicc_scores", "optimum_rss", "FitResult", "FitRanking",
           "ParameterEstimate", "INTERVAL_METHODS"]

#: interval_method choices: "auto" = profile likelihood, falling back to the
#: Wald interval for an end whose profile cannot be computed
INTERVAL_METHODS = ("auto", "profile", "wald")

#: extra starting points: symbol -> factors applied to its guess, one at a time
RESTART_FACTORS: dict[str, tuple[float, ...]] = {
    "lam": (0.1, 10.0),
    "tau_y": (0.05, 1.8),
    "eta_inf": (0.02,),
}

#: fewer points per parameter than this gets a "few_points" flag
#: (common practice, no source)
MIN_POINTS_PER_PARAMETER = 5

#: a runs test below this p-value flags a residual pattern
RUNS_TEST_ALPHA = 0.05

#: below this rms log residual the residual signs are rounding noise
_RMS_NOISE_FREE = 1e-9

#: plain words for an open end: (symbol, side) -> why the data leave it open
OPEN_END_REASONS: dict[tuple[str, str], str] = {
    ("eta0", "upper"): "the zero-shear plateau is never reached",
    ("eta_inf", "lower"): "the high-shear plateau is never approached",
    ("eta_inf", "upper"): "the high-shear plateau is never approached",
    ("lam", "upper"): "the onset of shear thinning (near 1/lam) lies below the lowest measured "
                      "shear rate",
    ("lam", "lower"): "the onset of shear thinning (near 1/lam) lies above the highest measured "
                      "shear rate",
    ("tau_y", "lower"): "the lowest measured stress is far above the yield stress, so the data "
                        "are also consistent with no yield stress at all",
}


# --- input checks -------------------------------------------------------------

def _label(curve) -> str:
    """The curve's name for messages (its source, or 'unnamed', without one)."""
    return curve.name or curve.source or "unnamed"


def _check_interval_method(method: str) -> None:
    if method not in INTERVAL_METHODS:
        raise ParameterError(choice_message("interval method", str(method), INTERVAL_METHODS))


def _checked_data(curve) -> tuple[np.ndarray, np.ndarray]:
    """Shear rate [1/s] and stress [Pa], after checking every value is > 0."""
    columns = (("shear rate", curve.shear_rate, "1/s"), ("stress", curve.stress, "Pa"),
               ("viscosity", curve.viscosity, "Pa*s"))
    for what, values, unit in columns:
        bad = np.nonzero(~(np.isfinite(values) & (values > 0)))[0]
        if bad.size:
            i = int(bad[0])
            raise FitError(
                f"Curve '{_label(curve)}': the {what} at point {i + 1} "
                f"(shear rate {curve.shear_rate[i]:g} 1/s) is {values[i]:g} {unit}; "
                f"fitting in log space needs every {what} to be a positive number. "
                "Remove or correct that point."
            )
    return np.asarray(curve.shear_rate, float), np.asarray(curve.stress, float)


def _check_enough_points(declaration: ViscosityModel, curve) -> None:
    k, n = len(declaration.parameters), len(curve.shear_rate)
    if n < k + MIN_SPARE_POINTS:
        raise FitError(
            f"The {declaration.name} model has {k} parameters and needs at least "
            f"{k + MIN_SPARE_POINTS} points (k+2: with fewer its AICc is undefined, so it cannot be "
            f"ranked), the curve '{_label(curve)}' has {n}. Measure more shear rates or choose a "
            f"model with fewer parameters."
        )


# --- optimisation -------------------------------------------------------------

def _starts(problem: LogStressProblem, guess: dict[str, float]) -> list[np.ndarray]:
    par = problem.parametrisation
    base = par.internal(guess)
    starts = [base]
    for i, name in enumerate(par.names):
        for factor in RESTART_FACTORS.get(name, ()):
            x = base.copy()
            x[i] = x[i] + math.log(factor) if par.logged[i] else x[i] * factor
            starts.append(par.clip(x))
    return starts


def _best_fit(problem: LogStressProblem, curve) -> tuple[np.ndarray, float]:
    """Lowest-RSS optimum over the starting points."""
    name = problem.declaration.name
    try:
        guess = problem.declaration.guess(problem.shear_rate, np.exp(problem.log_stress))
    except (ValueError, ArithmeticError, np.linalg.LinAlgError) as exc:
        raise FitError(f"No starting values for the {name} model on curve '{_label(curve)}': {exc}.")
    best, best_rss, messages = None, math.inf, []
    for x0 in _starts(problem, guess):
        try:
            x, rss, _ = problem.solve(x0)
        except (ValueError, ArithmeticError, np.linalg.LinAlgError) as exc:
            messages.append(str(exc))
            continue
        if rss < best_rss:
            best, best_rss = x, rss
    if best is None:
        raise FitError(f"The {name} model could not be fitted to curve '{_label(curve)}': "
                       f"{messages[0] if messages else 'the optimiser failed'}.")
    _check_model_stress(problem, best, curve)
    return best, best_rss


def _check_model_stress(problem: LogStressProblem, x, curve) -> None:
    values = problem.parametrisation.natural(x)
    with np.errstate(all="ignore"):
        model = problem.declaration.stress(problem.shear_rate, **values)
    if not np.all(np.isfinite(model) & (model > 0)):
        raise FitError(
            f"The {problem.declaration.name} model could not be fitted to curve '{_label(curve)}': "
            "at its best parameters it gives no positive, finite stress at some measured shear "
            "rates. Try another model."
        )


# --- intervals ------------------------------------------------------------------

def _stderrs(cov, k: int) -> list[float | None]:
    """Standard errors of the internal coordinates (None where unknown)."""
    if cov is None:
        return [None] * k
    return [math.sqrt(v) if v >= 0 and math.isfinite(v) else None for v in np.diag(cov)]


def _interval_ends(problem, x, rss, jac, cov, method):
    """((low End, high End) per parameter, steps, better point or None).

    A profile point counts as a better optimum only when it lowers the RSS
    by more than 1 % of the threshold increment; smaller gains are the
    optimiser's tolerance, not a different minimum.
    """
    rss_min = floored_rss(rss, problem.n_points)
    threshold = profile_threshold(problem.n_points, problem.n_params)
    better_below = rss - 0.01 * (threshold - 1.0) * rss_min
    ses = _stderrs(cov, problem.n_params)
    ends, steps = [], []
    for j in range(problem.n_params):
        step = intervals.first_step(problem, jac, rss_min, j, ses[j], threshold)
        steps.append(step)
        pair = []
        for direction in (-1, +1):
            end = _one_end(problem, x, (rss_min, better_below), j, direction, step, ses[j],
                           threshold, method)
            if end.status == "better":
                return None, steps, end.better
            pair.append(end)
        ends.append(tuple(pair))
    return ends, steps, None


def _one_end(problem, x, rss_levels, j, direction, step, se, threshold, method):
    if method == "wald":
        return intervals.wald_end(problem, x, j, direction, se, threshold)
    rss_min, better_below = rss_levels
    end = intervals.profile_end(problem, x, rss_min, j, direction, step, threshold, better_below)
    if end.status == "failed" and method == "auto":
        wald = intervals.wald_end(problem, x, j, direction, se, threshold)
        return intervals.End(wald.value, "wald_" + wald.status)
    return end


def _optimum_with_intervals(problem, curve, method):
    """Fit, then intervals; restart from any better point the profiles find."""
    x, rss = _best_fit(problem, curve)
    for _ in range(3):
        jac = problem.jacobian(x)
        cov = problem.covariance(jac, floored_rss(rss, problem.n_points))
        ends, steps, better = _interval_ends(problem, x, rss, jac, cov, method)
        if better is None:
            return x, rss, cov, ends, steps
        x, rss, _ = problem.solve(better)
    raise FitError(f"The {problem.declaration.name} fit to curve '{_label(curve)}' kept finding "
                   "lower minima while computing intervals; the optimum is not stable.")


# --- estimates and flags ------------------------------------------------------------

def _open_reason(name: str, side: str, meaning: str) -> str:
    default = f"the data do not bound its {side} end ({meaning})"
    return OPEN_END_REASONS.get((name, side), default)


def _held_side(problem, j, x, step) -> str | None:
    """"lower" or "upper" when parameter j sits on that bound at the optimum x, else None."""
    tol = 1e-3 * step if math.isfinite(step) and step > 0 else 1e-9
    for side, bound in (("lower", problem.lower[j]), ("upper", problem.upper[j])):
        if abs(x[j] - bound) <= tol:
            return side
    return None


def _at_bound_words(declaration, name: str, side: str) -> str:
    """'m is at its upper bound 2' (the bound with its unit)."""
    return f"{name} is at its {side} bound {declaration.parameter(name).bound_text(side)}"


def _held_by(end, held: dict[str, str]) -> str:
    """The parameter, held at a bound at the optimum, that alone closes this end ('' if none)."""
    if end.status.removeprefix("wald_") == "open_limit" and end.limited_by in held:
        return end.limited_by
    return ""


def _end_note(declaration, spec, side, end, held, method) -> list[str]:
    status = end.status.removeprefix("wald_")
    notes = []
    if end.status.startswith("wald_") and method != "wald":
        notes.append(f"the {side} end of the profile could not be computed; "
                     "the Wald interval is used there")
    if _held_by(end, held):
        other = end.limited_by
        notes.append(f"{side} 95 % bound open: {_at_bound_words(declaration, other, held[other])}, "
                     "and only that bound closes the profile here")
    elif status == "open_bound":
        own = held.get(spec.name) == side
        reason = (f"it is at its {side} bound {spec.bound_text(side)}" if own and
                  (spec.name, side) not in OPEN_END_REASONS else
                  _open_reason(spec.name, side, spec.meaning))
        notes.append(f"{side} 95 % bound open: {reason}")
    elif status == "open_limit":
        notes.append(f"{side} 95 % bound open: {_open_reason(spec.name, side, spec.meaning)} "
                     f"(the profile only closes where {end.limited_by} reaches the edge of "
                     "its allowed range)")
    elif status == "failed":
        notes.append(f"{side} 95 % bound unknown: the interval could not be computed")
    return notes


def _estimate(problem, j, x, se, pair, method, held) -> ParameterEstimate:
    par = problem.parametrisation
    spec = problem.declaration.parameters[j]
    logged = par.logged[j]
    value = math.exp(x[j]) if logged else float(x[j])
    stderr = None if se is None else (value * se if logged else se)
    ci = tuple(None if e.value is None else (math.exp(e.value) if logged else e.value)
               for e in pair)
    used_wald = method == "wald" or any(e.status.startswith("wald_") for e in pair)
    notes = []
    for side, end in zip(("lower", "upper"), pair):
        notes += _end_note(problem.declaration, spec, side, end, held, method)
    return ParameterEstimate(
        spec.name, spec.unit, value, stderr, ci,
        intervals.WALD if used_wald else intervals.PROFILE,
        all(v is not None for v in ci), "; ".join(notes),
    )


def _unresolved_flag(est: ParameterEstimate, problem, j, pair, held) -> Flag | None:
    """Why a parameter is not resolved; a bound that causes it is named first."""
    if est.resolved:
        return None
    declaration = problem.declaration
    spec = declaration.parameters[j]
    open_sides = [s for s, v in zip(("lower", "upper"), est.ci95) if v is None]
    which = "both 95 % bounds are" if len(open_sides) == 2 else f"the {open_sides[0]} 95 % bound is"
    data = {"parameter": spec.name, "open": open_sides, "value": est.value}
    holders = sorted({_held_by(pair[("lower", "upper").index(s)], held) for s in open_sides} - {""})
    if holders:
        bounds = " and ".join(_at_bound_words(declaration, h, held[h]) for h in holders)
        return Flag("unresolved",
                    f"{spec.name} is not resolved because {bounds}: its profile closes only "
                    f"against that bound, not on the data ({which} open).",
                    {**data, "cause": "bound", "held_by": holders})
    reasons = []
    for side in open_sides:
        own = held.get(spec.name) == side
        reasons.append(f"it is at its {side} bound {spec.bound_text(side)}"
                       + (f"; {_open_reason(spec.name, side, spec.meaning)}"
                          if (spec.name, side) in OPEN_END_REASONS else "")
                       if own else _open_reason(spec.name, side, spec.meaning))
    why = reasons[0] if len(set(reasons)) == 1 else "; ".join(reasons)
    return Flag("unresolved",
                f"{spec.name} is not resolved by the data: {why} ({which} open).", data)


def _bound_flag(problem, j, side: str | None) -> Flag | None:
    if side is None:
        return None
    spec = problem.declaration.parameters[j]
    natural = spec.lower if side == "lower" else spec.upper
    return Flag("at_bound",
                f"{_at_bound_words(problem.declaration, spec.name, side)}: the data push it there, "
                "so read it as a limit, not a measurement.",
                {"parameter": spec.name, "bound": float(natural), "side": side})


def _pattern_flag(problem, residuals, title) -> Flag | None:
    if math.sqrt(np.mean(residuals**2)) < _RMS_NOISE_FREE:
        return None
    test = runs_test(residuals[np.argsort(problem.shear_rate, kind="stable")])
    if test["p_value"] >= RUNS_TEST_ALPHA:
        return None
    return Flag("residual_pattern",
                f"The residuals run in long stretches of one sign ({test['runs']} runs where about "
                f"{test['expected']:.1f} are expected by chance; runs test p = "
                f"{test['p_value']:.2g}): the {title} model misses the shape of the curve.",
                {key: test[key] for key in ("runs", "expected", "p_value", "n_pos", "n_neg")})


def _few_points_flag(problem) -> Flag | None:
    n, k = problem.n_points, problem.n_params
    if n >= MIN_POINTS_PER_PARAMETER * k:
        return None
    return Flag("few_points",
                f"Only {n} points for {k} parameters (fewer than {MIN_POINTS_PER_PARAMETER} per "
                "parameter): the intervals are wide and the residual checks are weak.",
                {"n_points": n, "n_params": k})


# --- public ---------------------------------------------------------------------------

def fit(curve, model, *, interval_method: str = "auto") -> FitResult:
    """Fit one viscosity model to a flow curve in log space.

    Parameters
    ----------
    curve : rheofit.curve.FlowCurve
        Shear rate [1/s], stress [Pa] and viscosity [Pa*s], all > 0.
    model : str or ViscosityModel
        A name from :data:`rheofit.models.MODELS` or a declaration.
    interval_method : {"auto", "profile", "wald"}
        How 95 % intervals are computed: profile likelihood with the F
        threshold (``"profile"``), the same with a Wald fallback for any end
        whose profile fails (``"auto"``), or covariance only (``"wald"``).

    Returns
    -------
    FitResult

    Raises
    ------
    FitError
        Fewer points than parameters + 2, a non-positive or non-finite value,
        or a fit that cannot be carried out.
    ModelNameError, ParameterError
        Unknown model name or interval method.
    """
    declaration = get_model(model)
    _check_interval_method(interval_method)
    rate, stress = _checked_data(curve)
    _check_enough_points(declaration, curve)
    problem = LogStressProblem(declaration, rate, stress)
    x, rss, cov, ends, steps = _optimum_with_intervals(problem, curve, interval_method)
    return _assemble(problem, curve, x, rss, cov, ends, steps, interval_method)


def _assemble(problem, curve, x, rss, cov, ends, steps, method) -> FitResult:
    declaration, n, k = problem.declaration, problem.n_points, problem.n_params
    ses = _stderrs(cov, k)
    params = {}
    fit_flags = []
    sides = [_held_side(problem, j, x, steps[j]) for j in range(k)]
    held = {spec.name: side for spec, side in zip(declaration.parameters, sides) if side}
    for j, spec in enumerate(declaration.parameters):
        est = _estimate(problem, j, x, ses[j], ends[j], method, held)
        params[spec.name] = est
        fit_flags += [_bound_flag(problem, j, sides[j]),
                      _unresolved_flag(est, problem, j, ends[j], held)]
    residuals = problem.residual(x)
    fit_flags += [_pattern_flag(problem, residuals, declaration.title), _few_points_flag(problem)]
    flags = tuple(curve.flags) + tuple(f for f in fit_flags if f is not None)
    values = {name: p.value for name, p in params.items()}
    criteria = information_criteria(rss, n, k)
    spread = problem.log_stress - problem.log_stress.mean()
    rate_range = (float(problem.shear_rate.min()), float(problem.shear_rate.max()))
    return FitResult(
        model=declaration.name, declaration=declaration, params=params, values=values,
        fluid=Fluid(declaration, dict(values), rate_range, curve.name, flags),
        shear_rate_range=rate_range, n_points=n, n_params=k,
        aic=criteria["aic"], aicc=criteria["aicc"], bic=criteria["bic"],
        rss_log=float(rss), rms_log_residual=math.sqrt(rss / n),
        r_squared_log=1.0 - rss / float(spread @ spread) if spread.any() else math.nan,
        residuals=residuals, shear_rate=problem.shear_rate.copy(),
        covariance=Covariance(problem.parametrisation.names, problem.parametrisation.logged,
                              np.asarray(x, float).copy(), cov),
        flags=flags, name=curve.name, source=curve.source,
    )


class FitRanking(list):
    """Fit results sorted best first by AICc, with the models left out.

    ``skipped`` holds ``(model name, reason)`` for every model not fitted.
    """

    def __init__(self, results=(), skipped=()):
        super().__init__(results)
        self.skipped: tuple[tuple[str, str], ...] = tuple(skipped)

    @property
    def caveat(self) -> str:
        """What a ranking on few points, or of one model only, cannot say ("" when nothing)."""
        n = self[0].n_points if self else 0
        return ranking_caveat(n, [r.model for r in self], [name for name, _ in self.skipped])

    def akaike_weights(self) -> list[float]:
        """Akaike weights of the results, best first (see
        :func:`rheofit.fitting.statistics.akaike_weights`)."""
        return akaike_weights([r.aicc for r in self])

    def to_frame(self):
        """A pandas DataFrame, one row per fit, best first.

        Columns: ``model``, ``title``, ``n_params``, ``aicc``, ``delta_aicc``
        (to the best), ``akaike_weight``, ``aic``, ``bic``,
        ``rms_log_residual``, ``r_squared_log``, ``resolved`` (every interval
        closed) and ``flags`` (their codes, comma-separated).  The models
        not fitted are in :attr:`skipped`.
        """
        import pandas as pd

        best = min((r.aicc for r in self if math.isfinite(r.aicc)), default=math.nan)
        rows = [{"model": r.model, "title": r.declaration.title, "n_params": r.n_params, "aicc": r.aicc,
                 "delta_aicc": r.aicc - best, "akaike_weight": weight, "aic": r.aic, "bic": r.bic,
                 "rms_log_residual": r.rms_log_residual, "r_squared_log": r.r_squared_log,
                 "resolved": r.resolved, "flags": ", ".join(f.code for f in r.flags)}
                for r, weight in zip(self, self.akaike_weights())]
        return pd.DataFrame(rows, columns=["model", "title", "n_params", "aicc", "delta_aicc", "akaike_weight",
                                           "aic", "bic", "rms_log_residual", "r_squared_log", "resolved",
                                           "flags"])


def fit_all(curve, models=None, *, interval_method: str = "auto") -> FitRanking:
    """Fit several models and rank them by AICc, best first.

    ``models`` defaults to every model in :data:`rheofit.models.MODELS`.  A
    model with k parameters on fewer than k + 2 points (its AICc is
    undefined), or whose fit fails, is skipped and listed in ``.skipped``
    with the reason.  Each result carries its Akaike weight and rank
    (``support``); ``.caveat`` says what a thin ranking cannot tell.

    Raises FitError for bad data (non-positive values) or when no model at
    all could be fitted; ModelNameError for an unknown model name.
    """
    declarations = [get_model(m) for m in (MODELS.values() if models is None else models)]
    _check_interval_method(interval_method)
    _checked_data(curve)
    results, skipped = [], []
    for declaration in declarations:
        try:
            _check_enough_points(declaration, curve)
            results.append(fit(curve, declaration, interval_method=interval_method))
        except FitError as exc:
            skipped.append((declaration.name, str(exc)))
    if not results:
        reasons = " ".join(reason for _, reason in skipped)
        raise FitError(f"No model could be fitted to curve '{_label(curve)}'. {reasons}")
    return FitRanking(with_support(results, skipped), skipped)


# --- ranking without intervals ------------------------------------------------------------

def _optimum(curve, declaration: ViscosityModel) -> tuple[LogStressProblem, float]:
    """The problem and its RSS at the best of the starting points (no intervals)."""
    rate, stress = _checked_data(curve)
    _check_enough_points(declaration, curve)
    problem = LogStressProblem(declaration, rate, stress)
    return problem, _best_fit(problem, curve)[1]


def optimum_rss(curve, model) -> float:
    """RSS of the log residuals [-] at the best optimum of one model, without intervals.

    What :func:`fit` reaches before its profiles (which may still find a
    lower minimum and restart from it).  Raises FitError like :func:`fit`.
    """
    return _optimum(curve, get_model(model))[1]


def aicc_scores(curve, models=None) -> dict[str, float]:
    """AICc of every model that can be fitted, at its best optimum, without intervals.

    For choosing a model before paying for intervals: the scores are those
    of :func:`fit_all` except where a profile finds a lower minimum.
    ``models`` defaults to every model in :data:`rheofit.models.MODELS`;
    a model that cannot be fitted is left out.  Raises FitError for bad data.
    """
    declarations = [get_model(m) for m in (MODELS.values() if models is None else models)]
    _checked_data(curve)
    scores = {}
    for declaration in declarations:
        try:
            problem, rss = _optimum(curve, declaration)
        except FitError:
            continue
        scores[declaration.name] = information_criteria(rss, problem.n_points, problem.n_params)["aicc"]
    return scores


def fit_judged(curve, model, models=None, *, interval_method: str = "auto") -> FitResult:
    """One model chosen by the user, fitted with intervals and judged against the others.

    The others are ranked at their optima only (:func:`aicc_scores`, over
    ``models``, default every model in :data:`rheofit.models.MODELS`, with the
    chosen declaration in place of its namesake); the result carries its
    Akaike weight and rank (``support``) and a ``forced_model`` flag when the
    data reject it (:func:`rheofit.fitting.support.forced`).
    """
    declaration = get_model(model)
    pool = [get_model(m) for m in (MODELS.values() if models is None else models)]
    pool = [m for m in pool if m.name != declaration.name] + [declaration]
    result = fit(curve, declaration, interval_method=interval_method)
    scores = aicc_scores(curve, pool)
    missing = [m.name for m in pool if m.name not in scores]
    return forced(supported(result, scores, missing))
