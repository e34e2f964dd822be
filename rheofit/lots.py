"""Lots side by side: one model, parameters with intervals, the operating point and a same-curve test.

:func:`compare` fits one model to every lot (the best by summed AICc over
the lots unless one is given; the models are ranked at their optima, and
95 % intervals are computed for the chosen model only), predicts each lot at one operating point in a
Tube or Slit (with 95 % intervals, :mod:`rheofit.flow.intervals`), and judges
each lot against a reference lot by two criteria:

* operating point: ``deviation`` = (y_lot - y_ref) / y_ref of the pressure
  drop (flow rate given) or the flow rate (pressure drop given);
* curve: ``max_viscosity_deviation``, the SIGNED relative deviation
  (eta_lot - eta_ref) / eta_ref of the fitted viscosity with the largest
  magnitude over the shear-rate range every lot covers
  (``shared_range``), at ``max_viscosity_deviation_at`` [1/s].

A lot is within tolerance when both magnitudes are at most ``tolerance``;
the ``verdict`` says which criterion failed, and names the case where the
operating point matches but the curve does not.

Same-curve test: the extra-sum-of-squares F test of one parameter set for
the pooled data (a global fit) against one set per lot, in the log-residual
space of the fits (r = ln tau_model - ln tau_data):

    F = ((RSS_shared - RSS_sep) / (df_shared - df_sep)) / (RSS_sep / df_sep)

with RSS_sep and df_sep = sum(N_i - k) summed over the lots and
df_shared = sum(N_i) - k; p = P(F(df_shared - df_sep, df_sep) > F).
Motulsky, H. & Christopoulos, A. (2004) Fitting Models to Biological Data
Using Linear and Nonlinear Regression, Oxford University Press, ch. 22
(comparing fits of one model to several data sets) (from memory); Bates,
D.M. & Watts, D.G. (1988) Nonlinear Regression Analysis and Its
Applications, Wiley, sec. 3.10 (extra sum of squares) (section from memory).
A small p-value says the lots are not one curve within their noise; whether
the difference matters is the tolerance's call.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from rheofit.curve import Flag, FlowCurve
from rheofit.errors import FitError, GeometryError, ParameterError, choice_message
from rheofit.markup import join, table, tag
from rheofit.output import json_safe
from rheofit.units import parse_tolerance

__all__ = ["compare", "Comparison", "same_curve_test", "shared_range", "lot_labels"]

#: shear rates on which the curves are compared, log-spaced over the shared range
GRID_POINTS = 200
#: a shared range narrower than this ratio (high / low) is flagged
NARROW_SHARED_RATIO = 10.0
#: a lot where another model beats the common one by more than this AICc is flagged
#: (Burnham & Anderson 2002, sec. 2.6: a difference above 10 means essentially no support;
#: from memory)
MISFIT_AICC = 10.0
#: flags of the fits and predictions that a comparison passes on, per lot
LOT_FLAGS = ("forced_model", "sole_model", "thin_ranking", "unresolved", "residual_pattern", "at_bound",
             "few_points", "extrapolation", "not_laminar", "no_flow", "interval_unreliable")
#: the evidence columns of the table, shown beside every verdict
EVIDENCE_COLUMNS = ("rms_log_residual", "runs_p_value", "akaike_weight", "extrapolation", "unresolved",
                    "forced_model")

_QUANTITY = {"flow_rate": "pressure_drop", "pressure_drop": "flow_rate"}
_WORDS = {"pressure_drop": "pressure drop", "flow_rate": "flow rate"}
_UNITS = {"pressure_drop": "Pa", "flow_rate": "m^3/s"}


# --- the result ---------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Comparison:
    """Lots compared against a reference lot (see the module docstring).

    Attributes
    ----------
    curves, fits, predictions : tuples in input order (``predictions`` is
        empty without a geometry and operating point)
    lots : unique lot labels (curve names)
    model : the one model fitted to every lot; ``model_choice`` says how it
        was chosen and ``aicc_totals`` holds the summed AICc per model when
        it was chosen here
    table : pandas DataFrame, one row per lot (module docstring; columns
        ``lot``, each parameter with ``_low``/``_high``, the solved quantity
        with its interval, ``wall_shear_rate``, ``deviation``,
        ``max_viscosity_deviation``, ``max_viscosity_deviation_at``,
        ``within_tolerance``, ``failed`` and ``verdict``; and the evidence
        of each lot's fit: ``rms_log_residual``, ``runs_p_value``,
        ``akaike_weight`` (among the models fitted to that lot),
        ``extrapolation`` (the factor by which the wall shear rate lies
        outside the lot's measured range; 1 inside), ``unresolved``
        (parameter names) and ``forced_model`` (the data reject the given
        model for that lot))
    p_value : of the same-curve F test (nan when it could not be made);
        ``same_curve`` holds F, its degrees of freedom and the RSS values
    reference : index of the reference lot
    shared_range : (low, high) shear rate every lot covers [1/s]
    tolerance : relative tolerance [-]
    geometry, operating_point : the channel and {"flow_rate": Q [m^3/s]} or
        {"pressure_drop": dP [Pa]} ({} without one)
    flags : tuple of Flag
    """

    curves: tuple
    fits: tuple
    predictions: tuple
    lots: tuple[str, ...]
    model: str
    model_choice: str
    aicc_totals: dict
    table: object
    p_value: float
    same_curve: dict
    reference: int
    shared_range: tuple[float, float]
    tolerance: float
    geometry: object
    operating_point: dict
    flags: tuple[Flag, ...] = field(default=())

    @property
    def warning(self) -> str | None:
        """One line to show BEFORE the numbers: the lots whose data reject the given model."""
        rejected = [self.lots[i] for i, f in enumerate(self.fits) if f.flags_with("forced_model")]
        if not rejected:
            return None
        return (f"The data of {', '.join(repr(n) for n in rejected)} reject the given {self.model} model "
                "(Akaike weight below 0.01 among the models fitted to the lot, or a residual pattern); "
                "its numbers there are not supported by the measurements.")

    def evidence(self, i: int, show=None) -> str:
        """The evidence behind lot ``i``'s verdict in one line: the answer with its 95 % interval
        and where its wall shear rate lies (with an operating point), the fit's misfit, runs test,
        Akaike weight and unresolved parameters.  ``show(value, kind)`` formats the values (SI by
        default)."""
        from rheofit.fitting.evidence import Evidence

        parts = []
        if self.predictions:
            from rheofit.flow.headline import answer, reach, si

            p = self.predictions[i]
            parts += [part for part in (answer(p, show or si), reach(p)) if part]
        return "; ".join(parts + [Evidence.of(self.fits[i]).line()])

    @property
    def solved(self) -> str | None:
        """'pressure_drop' or 'flow_rate' (the quantity compared), None without an operating point."""
        return _QUANTITY[next(iter(self.operating_point))] if self.operating_point else None

    def to_dict(self) -> dict:
        """A JSON-able dict (no nan/inf: those become null)."""
        from rheofit.flow.predict import SAFETY_CAUTION

        return {
            "kind": "rheofit-comparison",
            "version": 1,
            "model": self.model,
            "model_choice": self.model_choice,
            "aicc_totals": json_safe(self.aicc_totals),
            "lots": list(self.lots),
            "reference": self.reference,
            "reference_lot": self.lots[self.reference],
            "tolerance": self.tolerance,
            "shared_range": json_safe(list(self.shared_range)),
            "geometry": None if self.geometry is None else self.geometry.to_dict(),
            "operating_point": json_safe(self.operating_point),
            "p_value": json_safe(self.p_value),
            "same_curve_test": json_safe(self.same_curve),
            "table": json_safe(self.table.to_dict(orient="records")),
            "flags": [json_safe(flag.to_dict()) for flag in self.flags],
            "fits": [fit.to_dict() for fit in self.fits],
            "predictions": [p.to_dict() for p in self.predictions],
            "caution": SAFETY_CAUTION,
        }

    def __str__(self) -> str:
        return self.text()

    def text(self) -> str:
        """Readable report: set-up, the test, one block per lot, flags, caution."""
        from rheofit.flow.predict import SAFETY_CAUTION

        lines = ([f"WARNING: {self.warning}"] if self.warning else []) + _heading_lines(self) + [""]
        for i, row in enumerate(self.table.to_dict(orient="records")):
            lines += _lot_lines(self, i, row)
        if self.flags:
            lines.append("Flags:")
            lines += [f"  - [{flag.code}] {flag.message}" for flag in self.flags]
        lines.append(SAFETY_CAUTION)
        return "\n".join(lines)

    def __repr__(self) -> str:
        return (f"Comparison(model={self.model!r}, lots={list(self.lots)!r}, "
                f"reference={self.reference}, p_value={self.p_value:.3g}, "
                f"within={[bool(v) for v in self.table['within_tolerance']]})")

    def _repr_html_(self) -> str:
        """A compact HTML table for notebooks (every user string escaped)."""
        return _html(self)

    def to_frame(self):
        """The table (one row per lot, columns as in :attr:`table`) as a new pandas DataFrame."""
        return self.table.copy()


def _html_row(c: Comparison, i: int, row: dict) -> list[str]:
    fit = c.fits[i]
    cells = [row["lot"] + (" (reference)" if i == c.reference else "")]
    cells += [f"{fit.params[n].value:.4g} {fit.params[n].interval_text()}"
              for n in fit.declaration.parameter_names]
    if c.solved:
        q = c.solved
        cells += [f"{row[q]:.4g} ({row[q + '_low']:.4g} to {row[q + '_high']:.4g})", _pct(row["deviation"])]
    return cells + [_pct(row["max_viscosity_deviation"]), row["verdict"], c.evidence(i)]


def _html(c: Comparison) -> str:
    """The heading, one row per lot, the flags and the caution."""
    from rheofit.flow.predict import SAFETY_CAUTION

    head = (f"Lots compared with the {c.model} model ({c.model_choice}); reference lot "
            f"{c.lots[c.reference]}; tolerance {100 * c.tolerance:g} %")
    units = [f"{spec.name} [{spec.unit}]" for spec in c.fits[0].declaration.parameters]
    headers = ["lot", *units]
    if c.solved:
        headers += [f"{_WORDS[c.solved]} [{_UNITS[c.solved]}] (95 %)", "deviation"]
    headers += ["largest viscosity deviation", "verdict", "evidence"]
    rows = [_html_row(c, i, row) for i, row in enumerate(c.table.to_dict(orient="records"))]
    test = (f"same-curve test: p = {c.p_value:.3g}" if math.isfinite(c.p_value)
            else "same-curve test: not available")
    parts = [tag("p", tag("strong", "Warning: " + c.warning))] if c.warning else []
    parts += [tag("p", tag("strong", head)), table(headers, rows, caption=test)]
    if c.flags:
        parts.append(table(["flag", "message"], [[f.code, f.message] for f in c.flags]))
    parts.append(tag("p", SAFETY_CAUTION))
    return join(*parts)


def _pct(x: float, sign: bool = True) -> str:
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{100 * x:+.1f} %" if sign else f"{100 * abs(x):.1f} %"


def _heading_lines(c: Comparison) -> list[str]:
    lines = [f"Lot comparison: {len(c.lots)} lots, {c.model} model ({c.model_choice})",
             f"  reference lot: '{c.lots[c.reference]}'; tolerance {100 * c.tolerance:g} %",
             f"  shared shear-rate range: {c.shared_range[0]:.4g} to {c.shared_range[1]:.4g} 1/s"]
    if c.operating_point:
        (given, value), = c.operating_point.items()
        lines.append(f"  operating point: {_WORDS[given]} {value:.4g} {_UNITS[given]} in a "
                     f"{c.geometry.describe()}")
    t = c.same_curve
    if math.isfinite(c.p_value):
        lines.append(f"  same-curve test (extra sum of squares F test): F = {t['f_statistic']:.4g} on "
                     f"({t['df_numerator']}, {t['df_denominator']}) degrees of freedom, "
                     f"p = {c.p_value:.3g}")
    else:
        lines.append(f"  same-curve test: not available ({t.get('note', '')})")
    return lines


def _lot_lines(c: Comparison, i: int, row: dict) -> list[str]:
    role = " (reference)" if i == c.reference else ""
    lines = [f"{row['lot']}{role}"]
    params = []
    for spec in c.fits[i].declaration.parameters:
        est = c.fits[i].params[spec.name]
        params.append(f"{spec.name} = {est.value:.4g} {est.interval_text()} {spec.unit}")
    lines.append("  " + "; ".join(params))
    if c.solved:
        q = c.solved
        lines.append(f"  {_WORDS[q]} {row[q]:.4g} {_UNITS[q]} (95 %: {row[q + '_low']:.4g} to "
                     f"{row[q + '_high']:.4g}); deviation {_pct(row['deviation'])}")
    lines.append(f"  largest viscosity deviation over the shared range: "
                 f"{_pct(row['max_viscosity_deviation'])} at {row['max_viscosity_deviation_at']:.3g} 1/s")
    lines.append(f"  verdict: {row['verdict']}")
    lines.append(f"  evidence: {c.evidence(i)}")
    return lines


# --- input checks ---------------------------------------------------------------------------

def _check_curves(curves) -> list[FlowCurve]:
    if isinstance(curves, FlowCurve):
        curves = [curves]
    try:
        curves = list(curves)
    except TypeError:
        raise ParameterError(
            f"curves must be a list of flow curves (rheofit.read_flow_curves), got {type(curves).__name__}."
        ) from None
    for i, curve in enumerate(curves):
        if not isinstance(curve, FlowCurve):
            raise ParameterError(
                f"Item {i + 1} of curves is a {type(curve).__name__}, not a flow curve; read the "
                "lots with rheofit.read_flow_curve(s) or build them with FlowCurve.from_arrays."
            )
    if len(curves) < 2:
        raise ParameterError(f"A comparison needs at least two lots; got {len(curves)}.")
    return curves


def lot_labels(curves) -> tuple[str, ...]:
    """Curve names, made unique ('name (2)'); 'lot i' for an unnamed curve."""
    labels, seen = [], {}
    for i, curve in enumerate(curves):
        base = curve.name or f"lot {i + 1}"
        seen[base] = seen.get(base, 0) + 1
        labels.append(base if seen[base] == 1 else f"{base} ({seen[base]})")
    return tuple(labels)


def _check_reference(reference, labels) -> int:
    if isinstance(reference, str) and reference in labels:
        return labels.index(reference)
    if isinstance(reference, (int, np.integer)) and not isinstance(reference, bool) \
            and 0 <= reference < len(labels):
        return int(reference)
    if isinstance(reference, str):
        raise ParameterError(choice_message("lot", reference, labels))
    raise ParameterError(
        f"reference = {reference!r} is not a lot: give an index from 0 to {len(labels) - 1} "
        f"or a lot name ({', '.join(labels)})."
    )


def _operating(geometry, flow_rate, pressure_drop) -> tuple[object, dict]:
    """(checked geometry or None, {given: SI value} or {})."""
    if geometry is None:
        if flow_rate is not None or pressure_drop is not None:
            raise GeometryError(
                "An operating point needs a channel: give geometry=Tube(...) or Slit(...) with "
                "flow_rate or pressure_drop, or neither to compare the curves only."
            )
        return None, {}
    from rheofit.flow.geometry import check_geometry
    from rheofit.flow.predict import require_one_operating_point, operating_input

    geometry = check_geometry(geometry)
    require_one_operating_point(flow_rate, pressure_drop)
    given = "flow_rate" if flow_rate is not None else "pressure_drop"
    raw = flow_rate if flow_rate is not None else pressure_drop
    values = operating_input(raw, "flow_rate" if given == "flow_rate" else "pressure")
    if values.size != 1:
        raise GeometryError(
            f"A comparison is made at one operating point; got {values.size} values of "
            f"{_WORDS[given]}. Give a single number (or text such as '10 uL/min')."
        )
    return geometry, {given: float(values.ravel()[0])}


# --- pieces ------------------------------------------------------------------------------

def shared_range(curves, labels=None) -> tuple[float, float]:
    """(low, high) shear rate [1/s] that every curve covers.

    Raises FitError naming two lots that do not overlap.
    """
    labels = labels or lot_labels(curves)
    lows = [float(np.min(c.shear_rate)) for c in curves]
    highs = [float(np.max(c.shear_rate)) for c in curves]
    low, high = max(lows), min(highs)
    if not low < high:
        a, b = int(np.argmax(lows)), int(np.argmin(highs))
        raise FitError(
            f"Lots '{labels[a]}' ({lows[a]:.3g} to {highs[a]:.3g} 1/s) and '{labels[b]}' "
            f"({lows[b]:.3g} to {highs[b]:.3g} 1/s) share no shear-rate range, so their curves "
            "cannot be compared; measure the lots over overlapping shear rates."
        )
    return low, high


def _lot_scores(curves, labels, progress, rankings=None, models=None) -> list[dict]:
    """Per lot {model: AICc at its optimum}: from the rankings when given, else ranked without
    intervals (:func:`rheofit.fitting.aicc_scores` over ``models``, default every model)."""
    from rheofit.fitting import aicc_scores

    scores = []
    for i, curve in enumerate(curves):
        progress(f"ranking every model on '{labels[i]}'")
        scores.append({r.model: r.aicc for r in rankings[i]} if rankings else aicc_scores(curve, models))
    return scores


def _choose_model(curves, labels, progress, rankings=None):
    """(name, {model: summed AICc}, per-lot {model: AICc}): the best model by AICc summed over lots.

    The models are ranked at their optima alone; intervals are computed
    afterwards for the chosen model only.
    """
    scores = _lot_scores(curves, labels, progress, rankings)
    totals = {}
    for name in scores[0]:
        values = [lot.get(name, math.inf) for lot in scores]
        if all(math.isfinite(v) for v in values):
            totals[name] = float(sum(values))
    if not totals:
        raise FitError("No model could be fitted to every lot, so the lots cannot be compared "
                       "with one model; check the flow curves or give a model.")
    return min(totals, key=totals.get), totals, scores


def _fits(curves, labels, model, progress, rankings=None):
    """(fits with intervals, model name, how it was chosen, summed AICc, per-lot AICc or None).

    ``rankings`` (fit_all per lot, optional) replaces the ranking and the fits.  Every fit
    carries its Akaike weight among the models ranked on its lot; a model given by name is
    judged there too, and flagged ``forced_model`` where the lot's data reject it (the
    per-lot AICc returned is then None: the flag says it).
    """
    from rheofit.fitting import fit
    from rheofit.fitting.support import forced, supported
    from rheofit.models import MODELS, get_model

    totals, choice = {}, "given"
    if model is None:
        model, totals, scores = _choose_model(curves, labels, progress, rankings)
        choice = "best by AICc summed over the lots"
    declaration = get_model(model)
    if choice == "given":
        tried = [m for m in MODELS.values() if m.name != declaration.name] + [declaration]
        scores = _lot_scores(curves, labels, progress, rankings, tried)
    fits = []
    for i, curve in enumerate(curves):
        progress(f"fitting {declaration.name} to '{labels[i]}'")
        done = [r for r in rankings[i] if r.model == declaration.name] if rankings else []
        result = done[0] if done else fit(curve, declaration)
        if result.support is None:
            result = supported(result, scores[i])
        fits.append(forced(result) if choice == "given" else result)
    return fits, declaration.name, choice, totals, None if choice == "given" else scores


def same_curve_test(curves, fits) -> dict:
    """Extra-sum-of-squares F test: one parameter set for all curves against one per curve.

    ``fits`` are the separate fits (one model).  The shared fit is the best of
    a global fit of the pooled data and refits started from each lot's
    estimate.  Returns f_statistic, df_numerator, df_denominator, rss_shared,
    rss_separate, p_value and the method (module docstring for the equation
    and sources); p_value is nan, with a ``note``, when the test cannot be made.
    """
    from scipy.special import fdtrc  # the F survival function (scipy.stats.f.sf calls it)

    from rheofit.fitting import optimum_rss

    model = fits[0].declaration
    k = len(model.parameters)
    n_total = sum(len(c) for c in curves)
    rss_sep = float(sum(f.rss_log for f in fits))
    df_sep = int(sum(len(c) - k for c in curves))
    df_shared = n_total - k
    out = {"method": "extra sum of squares F test (log residuals), shared vs separate parameters",
           "rss_separate": rss_sep, "df_denominator": df_sep,
           "df_numerator": df_shared - df_sep, "f_statistic": math.nan, "p_value": math.nan,
           "rss_shared": math.nan}
    pooled = FlowCurve.from_arrays(np.concatenate([c.shear_rate for c in curves]),
                                   stress=np.concatenate([c.stress for c in curves]), name="pooled lots")
    try:
        rss_pooled = optimum_rss(pooled, model)  # only the minimum counts here, not intervals
    except FitError as exc:
        out["note"] = f"the pooled data could not be fitted: {exc}"
        return out
    rss_shared = min([rss_pooled] + _restarted_rss(pooled, model, fits))
    out["rss_shared"] = rss_shared
    if df_sep <= 0 or rss_sep <= 0:
        out["note"] = "the separate fits leave no residual degrees of freedom"
        return out
    gain = max(rss_shared - rss_sep, 0.0)  # a shared set can never fit better than separate ones
    f_stat = (gain / out["df_numerator"]) / (rss_sep / df_sep)
    out["f_statistic"] = f_stat
    out["p_value"] = float(fdtrc(out["df_numerator"], df_sep, f_stat))
    return out


def _restarted_rss(pooled, model, fits) -> list[float]:
    """RSS of the pooled problem refitted from each lot's estimate (guards a local optimum)."""
    from rheofit.fitting.problem import LogStressProblem

    problem = LogStressProblem(model, pooled.shear_rate, pooled.stress)
    found = []
    for f in fits:
        try:
            found.append(problem.solve(f.covariance.center)[1])
        except (ValueError, ArithmeticError, np.linalg.LinAlgError):
            continue
    return [r for r in found if math.isfinite(r)]


def _viscosity_deviation(fits, reference, shared) -> list[tuple[float, float]]:
    """(signed largest relative deviation, at shear rate [1/s]) per lot over the shared range."""
    grid = np.geomspace(shared[0], shared[1], GRID_POINTS)
    eta_ref = fits[reference].viscosity(grid)
    out = []
    for f in fits:
        rel = f.viscosity(grid) / eta_ref - 1.0
        i = int(np.argmax(np.abs(rel)))
        out.append((float(rel[i]), float(grid[i])))
    return out


def _relative(value: float, ref: float) -> float:
    if ref > 0:
        return value / ref - 1.0
    return 0.0 if value == ref else math.inf


# --- verdicts ---------------------------------------------------------------------------------

def _verdict(solved, deviation, curve_dev, at, tolerance, gamma_w, shared) -> tuple[str, str]:
    """(failed criterion, verdict text) of one lot."""
    point_ok = solved is None or abs(deviation) <= tolerance
    curve_ok = abs(curve_dev) <= tolerance
    word = _WORDS.get(solved, "")
    curve_text = f"the viscosity by up to {_pct(curve_dev)} over the shared range (at {at:.3g} 1/s)"
    if point_ok and curve_ok:
        point = f"{word} {_pct(deviation)} at the operating point, " if solved else ""
        return "", (f"within tolerance: {point}viscosity within {_pct(curve_dev, sign=False)} "
                    "over the shared range")
    if solved is None:
        return "curve", f"outside tolerance: {curve_text.replace('the viscosity by', 'the viscosity differs by', 1)}"
    if point_ok:
        return "curve", (f"same {word} at this operating point ({_pct(deviation)}), but the curve "
                         f"differs by up to {_pct(curve_dev)} elsewhere in the shared range "
                         f"(at {at:.3g} 1/s)")
    if curve_ok:
        inside = shared[0] <= gamma_w <= shared[1]
        where = ("the flow also samples shear rates below the shared range, from 0 to the wall"
                 if inside else f"the wall shear rate ({gamma_w:.3g} 1/s) lies outside the shared range")
        return "operating point", (f"outside tolerance at the operating point: {word} differs by "
                                   f"{_pct(deviation)}, although the viscosity stays within "
                                   f"{_pct(curve_dev, sign=False)} over the shared range ({where})")
    return "operating point and curve", (f"outside tolerance: {word} differs by {_pct(deviation)} at "
                                         f"the operating point and {curve_text}")


# --- table and flags ------------------------------------------------------------------------------

def _table(labels, fits, predictions, solved, reference, shared, tolerance):
    import pandas as pd

    deviations = _viscosity_deviation(fits, reference, shared)
    rows = []
    for i, (label, f) in enumerate(zip(labels, fits)):
        row = {"lot": label}
        for name, est in f.params.items():
            low, high = est.ci95
            row[name] = est.value
            row[f"{name}_low"] = math.nan if low is None else low
            row[f"{name}_high"] = math.nan if high is None else high
        deviation, gamma_w = math.nan, math.nan
        if solved:
            p = predictions[i]
            value = float(getattr(p, solved))
            ci = getattr(p, f"{solved}_ci95") or (math.nan, math.nan)
            row.update({solved: value, f"{solved}_low": float(ci[0]), f"{solved}_high": float(ci[1])})
            gamma_w = float(p.wall_shear_rate)
            row["wall_shear_rate"] = gamma_w
            deviation = _relative(value, float(getattr(predictions[reference], solved)))
            row["deviation"] = deviation
        curve_dev, at = deviations[i]
        row["max_viscosity_deviation"] = curve_dev
        row["max_viscosity_deviation_at"] = at
        failed, verdict = _verdict(solved, deviation, curve_dev, at, tolerance, gamma_w, shared)
        row.update(_evidence_cells(f, predictions[i] if solved else None))
        row["within_tolerance"] = failed == ""
        row["failed"] = failed
        row["verdict"] = "reference lot" if i == reference else verdict
        rows.append(row)
    return pd.DataFrame(rows)


def _evidence_cells(fit, prediction) -> dict:
    """The evidence columns of one lot (see :data:`EVIDENCE_COLUMNS`)."""
    from rheofit.fitting.evidence import Evidence

    evidence = Evidence.of(fit)
    extrapolation = math.nan
    if prediction is not None:
        from rheofit.flow.headline import extrapolation_factor

        extrapolation = extrapolation_factor(prediction)
    weight = math.nan if fit.support is None else fit.support.akaike_weight
    return {"rms_log_residual": fit.rms_log_residual,
            "runs_p_value": math.nan if evidence.runs_p_value is None else evidence.runs_p_value,
            "akaike_weight": weight, "extrapolation": extrapolation,
            "unresolved": ", ".join(evidence.unresolved), "forced_model": bool(fit.flags_with("forced_model"))}


def _lot_flags(labels, curves, fits, predictions) -> list[Flag]:
    """Per lot: every flag of its import (a unit read as SI, dropped rows, ...) and the LOT_FLAGS
    of its fit and prediction."""
    flags, seen = [], set()
    for i, label in enumerate(labels):
        sources = [fits[i].flags] + ([predictions[i].flags] if predictions else [])
        found = [*curves[i].flags, *(f for group in sources for f in group if f.code in LOT_FLAGS)]
        for flag in found:
            if (i, flag.code, flag.message) in seen:
                continue
            seen.add((i, flag.code, flag.message))
            flags.append(Flag(flag.code, f"Lot '{label}': {flag.message}", {**flag.data, "lot": label}))
    return flags


def _comparison_flags(labels, fits, predictions, shared, scores, model, geometry) -> list[Flag]:
    flags = list(geometry.flags) if geometry is not None else []
    if shared[1] / shared[0] < NARROW_SHARED_RATIO:
        flags.append(Flag("narrow_shared_range",
                          f"The lots share only {shared[0]:.3g} to {shared[1]:.3g} 1/s (less than a "
                          "decade), so the curve criterion covers little of what was measured.",
                          {"shared_range": list(shared)}))
    outside = [labels[i] for i, p in enumerate(predictions)
               if not shared[0] <= float(p.wall_shear_rate) <= shared[1]]
    if outside:
        flags.append(Flag("operating_point_outside_shared_range",
                          f"The wall shear rate of {', '.join(repr(n) for n in outside)} lies outside "
                          f"the shared range ({shared[0]:.3g} to {shared[1]:.3g} 1/s): the curve "
                          "criterion does not cover the operating point there.",
                          {"lots": outside, "shared_range": list(shared)}))
    for label, lot in zip(labels, scores or ()):
        best = min(lot, key=lot.get)
        delta = lot[model] - lot[best]
        if delta > MISFIT_AICC:
            flags.append(Flag("model_misfits_lot",
                              f"Lot '{label}': the common {model} model fits it much worse than "
                              f"{best} (AICc higher by {delta:.1f}).",
                              {"lot": label, "best": best, "delta_aicc": delta}))
    return flags


# --- public ------------------------------------------------------------------------------------

def compare(curves, geometry=None, flow_rate=None, pressure_drop=None, tolerance=0.10, model=None,
            reference=0, *, samples: int = 400, seed: int | None = 0, progress=None,
            rankings=None) -> Comparison:
    """Compare lots (flow curves) with one model, at one operating point, against a reference.

    Parameters
    ----------
    curves : list of FlowCurve
        Two or more lots, in the order they appear in the output.
    geometry : Tube or Slit, optional
        The channel of the operating point; without it (and without an
        operating point) only the curves are compared.
    flow_rate, pressure_drop : float or str
        Exactly one, with ``geometry``: Q [m^3/s] (then the pressure drops
        are compared) or dP [Pa] (then the flow rates); text with a unit
        such as ``"10 uL/min"`` is accepted.
    tolerance : float or str
        Relative tolerance, e.g. 0.10 or "10 %".
    model : str, optional
        One model for every lot; by default the best by AICc summed over
        the lots (every model is fitted to every lot at its optimum, and
        intervals are computed for the chosen model only).
    reference : int or str
        Index (from 0) or name of the reference lot.
    samples, seed : Monte Carlo draws and seed of the prediction intervals.
    progress : callable(str), optional
        Called with a short message before each step (fits, predictions).
    rankings : list of FitRanking, optional
        :func:`rheofit.fitting.fit_all` of each lot, in order, when the
        caller has them already: the model is then chosen from their AICc
        and its fits (with intervals) are taken from them, not redone.

    Returns
    -------
    Comparison

    Raises
    ------
    ParameterError : fewer than two curves, a bad tolerance or reference.
    GeometryError : an operating point without a channel (or the reverse),
        several operating points, or a bad channel.
    FitError : a lot that cannot be fitted, no shared shear-rate range.
    ModelNameError : an unknown model.
    """
    curves = _check_curves(curves)
    labels = lot_labels(curves)
    tolerance = parse_tolerance(tolerance)
    reference = _check_reference(reference, labels)
    geometry, point = _operating(geometry, flow_rate, pressure_drop)
    shared = shared_range(curves, labels)
    progress = progress or (lambda message: None)
    fits, model_name, choice, totals, scores = _fits(curves, labels, model, progress, rankings)
    predictions = []
    if point:
        from rheofit.flow.predict import predict

        for label, f in zip(labels, fits):
            progress(f"predicting '{label}' with 95 % intervals")
            predictions.append(predict(f, geometry, **point, samples=samples, seed=seed))
    progress("same-curve test on the pooled lots")
    test = same_curve_test(curves, fits)
    solved = _QUANTITY[next(iter(point))] if point else None
    table = _table(labels, fits, predictions, solved, reference, shared, tolerance)
    flags = _comparison_flags(labels, fits, predictions, shared, scores, model_name, geometry)
    flags += _lot_flags(labels, curves, fits, predictions)
    if not math.isfinite(test["p_value"]):
        flags.append(Flag("test_unavailable", f"The same-curve test could not be made: {test.get('note', '')}.",
                          {}))
    return Comparison(
        curves=tuple(curves), fits=tuple(fits), predictions=tuple(predictions), lots=labels,
        model=model_name, model_choice=choice, aicc_totals=totals, table=table,
        p_value=test["p_value"], same_curve=test, reference=reference, shared_range=shared,
        tolerance=tolerance, geometry=geometry, operating_point=point, flags=tuple(flags),
    )
