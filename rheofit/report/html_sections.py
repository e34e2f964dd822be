"""The sections of the HTML report; each returns escaped HTML (:class:`Raw`)."""

from __future__ import annotations

import math

import numpy as np

from rheofit.fitting.statistics import CORRELATION_SHOWN_ABOVE, akaike_weights
from rheofit.fitting.support import RANKING_MIN_POINTS, not_ranked_lines
from rheofit.lots import EVIDENCE_COLUMNS
from rheofit.report.display import number, shown
from rheofit.report.html_parts import Raw, bullets, esc, join, key_values, percent, table, tag

_GAP = Raw("\n")


def _first(value):
    return np.ravel(value)[0].item() if value is not None else None


def _flag_words(flags) -> str:
    return ", ".join(sorted({f.code.replace("_", " ") for f in flags})) or "—"


def _celsius(kelvin) -> str:
    return "—" if kelvin is None else f"{kelvin - 273.15:.1f} °C"


def _figures(items) -> Raw:
    return tag("div", join(*items), class_="figures") if items else Raw("")


# --- summary --------------------------------------------------------------------

def _misfit_cell(fit) -> str:
    """'1.9 % (runs p 0.43)': the typical misfit and the runs test of a fit."""
    from rheofit.fitting.evidence import Evidence

    evidence = Evidence.of(fit)
    runs = "runs test n/a" if evidence.runs_p_value is None else f"runs p {evidence.runs_p_value:.2g}"
    pattern = ", PATTERN" if evidence.pattern else ""
    return f"{evidence.misfit_percent:.2g} % ({runs}{pattern})"


def _weight_cell(fit) -> str:
    support = fit.support
    if support is None:
        return "—"
    if support.sole:
        return f"only model ranked ({support.n_points} points)"
    thin = f"; {support.n_points} points only" if support.thin else ""
    return f"{support.akaike_weight:.3f} ({support.rank} of {support.ranked}{thin})"


def _unresolved_cell(fit) -> str:
    names = [name for name, est in fit.params.items() if not est.resolved]
    return ", ".join(names) or "none"


def _case_cells(p) -> list[str]:
    """result, 95 % interval, wall shear rate against the measured range; a sample at rest shows
    its threshold and nothing else."""
    from rheofit.flow.headline import extrapolation_factor, solved

    if not bool(_first(p.flowing)):
        return [f"no flow: starts above {shown(p.threshold_pressure_drop, 'pressure')}", "—", "—"]
    name = solved(p)
    kind = "pressure" if name == "pressure_drop" else "flow_rate"
    ci = getattr(p, name + "_ci95")
    interval = "—" if ci is None else f"{shown(_first(ci[0]), kind)} to {shown(_first(ci[1]), kind)}"
    factor = extrapolation_factor(p)
    if not math.isfinite(factor):
        reach = "—"
    elif factor <= 1.0:
        reach = "inside the measured range"
    else:
        low, high = p.fluid.shear_rate_range
        side = "above" if _first(p.wall_shear_rate) > high else "below"
        reach = f"EXTRAPOLATED {factor:.3g}× {side} the measured {number(low)} to {number(high)} 1/s"
    word = "Δp" if name == "pressure_drop" else "Q"
    return [f"{word} = {shown(_first(getattr(p, name)), kind)}", interval, reach]


def summary_section(analysis) -> Raw:
    """The samples at a glance, with the evidence of each chosen model, and every flow case's
    result with its 95 % interval and where its wall shear rate lies; warnings first."""
    rows = []
    for s in analysis.samples:
        low, high = s.curve.shear_rate_range
        rows.append([s.name, str(len(s.curve)), f"{number(low)} to {number(high)}",
                     s.chosen.declaration.title, _misfit_cell(s.chosen), _weight_cell(s.chosen),
                     _unresolved_cell(s.chosen), str(len(s.chosen.flags) + len(s.curve.flags))])
    parts = [tag("h2", "Summary", id="summary")]
    parts += [tag("p", join(tag("strong", "Warning: "), line), class_="warning") for line in analysis.warnings()]
    parts.append(table(["sample", "points", "shear rate [1/s]", "chosen model", "misfit (runs test)",
                        "Akaike weight (rank)", "unresolved", "flags"], rows,
                       caption="misfit: typical relative deviation of the chosen model, 100 (exp(rms ln) − 1) %, "
                               "with the runs test on the residual signs (PATTERN: the model misses the "
                               "curve's shape); Akaike weight among the models fitted to the sample."))
    cases = []
    for i, s in enumerate(analysis.samples):
        for j, c in enumerate(s.cases):
            p = c.prediction
            flowing = bool(_first(p.flowing))
            cases.append([s.name, join(tag("a", c.case.label, href=f"#sample-{i}-case-{j}"), Raw("<br>"),
                                       tag("span", c.case.geometry.describe(), class_="quiet")),
                          *_case_cells(p),
                          f"{number(_first(p.wall_shear_stress))} Pa" if flowing else "—",
                          _ratio(p) if flowing else "—"])
    if cases:
        parts.append(table(["sample", "case", "result", "95 % interval", "wall shear rate",
                            "wall shear stress", "model / Newtonian Δp"], cases,
                           caption="95 % interval: from the parameter uncertainty of the chosen fit. "
                                   "Newtonian Δp: the pressure drop with the viscosity the model has at "
                                   "the apparent wall shear rate; see each case for details."))
    return join(tag("section", join(*parts)))


def _ratio(p) -> str:
    ratio = _first(p.newtonian_ratio)
    return "—" if ratio is None or not math.isfinite(ratio) else f"{ratio:.3g}×"


def contents(analysis) -> Raw:
    """In-page links to every section."""
    items = [tag("li", tag("a", f"Sample: {s.name}", href=f"#sample-{i}"))
             for i, s in enumerate(analysis.samples)]
    if analysis.comparison is not None or analysis.comparison_note:
        items.append(tag("li", tag("a", "Lot comparison", href="#comparison")))
    items += [tag("li", tag("a", "Method and assumptions", href="#method")),
              tag("li", tag("a", "Safety", href="#caution"))]
    return tag("nav", join(tag("strong", "Contents"), tag("ul", join(*items))))


# --- one sample ----------------------------------------------------------------------

def _sample_facts(sample) -> Raw:
    curve = sample.curve
    low, high = curve.shear_rate_range
    pairs = [("file", curve.source or "in memory"), ("points", str(len(curve))),
             ("shear-rate range", f"{number(low)} to {number(high)} 1/s"),
             ("temperature", _celsius(curve.temperature))]
    for key in ("Sample", "Lot", "Operator", "Instrument", "Geometry"):
        if key in curve.metadata:
            pairs.append((key.lower(), str(curve.metadata[key])))
    return key_values(pairs)


def ranking_heading(sample) -> str:
    """'Models ranked by AICc', or what a ranking on few points or of one model is."""
    n, ranked = len(sample.curve), len(sample.ranking)
    if ranked == 1:
        return f"Only one model could be ranked on {n} points"
    if n < RANKING_MIN_POINTS:
        return f"Models ranked by AICc on only {n} points"
    return "Models ranked by AICc"


def ranking_table(sample) -> Raw:
    """Every model fitted, best first by AICc, with Akaike weights and flags; a ranking on few
    points, or of one model, says so first."""
    ranking = sample.ranking
    best = min((r.aicc for r in ranking if math.isfinite(r.aicc)), default=math.nan)
    rows = []
    for i, (r, w) in enumerate(zip(ranking, akaike_weights([r.aicc for r in ranking])), start=1):
        mark = " (chosen)" if r.model == sample.chosen.model else ""
        rows.append([str(i), r.declaration.title + mark, str(r.n_params), f"{r.aicc:.1f}",
                     f"{r.aicc - best:.1f}", f"{w:.3f}", f"{r.bic:.1f}", f"{r.rms_log_residual:.3f}",
                     _flag_words(r.flags)])
    caption = ("AICc: Akaike information criterion with the small-sample correction (lower is "
               "better); ΔAICc > 2 is a real difference, > 10 a decisive one. weight: Akaike weight. "
               "rms(ln): typical relative misfit.")
    caveat = getattr(ranking, "caveat", "")
    ranked = table(["#", "model", "k", "AICc", "ΔAICc", "weight", "BIC", "rms(ln)", "flags"], rows,
                   caption=caption)
    return join(tag("p", tag("strong", caveat), class_="warning"), ranked) if caveat else ranked


def not_fitted(sample) -> Raw:
    """The models left out of the ranking, each with the reason (nothing when none was)."""
    skipped = sample.ranking.skipped
    if not skipped:
        return Raw("")
    return join(tag("p", "Not fitted, so not ranked:"), bullets(not_ranked_lines(len(sample.curve), skipped)))


def parameter_table(fit) -> Raw:
    """The chosen model's parameters with standard errors and 95 % intervals."""
    rows = []
    for name, est in fit.params.items():
        spec = fit.declaration.parameter(name)
        low, high = est.ci95
        status = "resolved" if est.resolved else "NOT resolved"
        note = f"{status}; {est.note}" if est.note else status
        rows.append([name, spec.meaning, number(est.value), spec.unit, number(est.stderr),
                     "open" if low is None else number(low), "open" if high is None else number(high),
                     est.method, note])
    return table(["parameter", "meaning", "value", "unit", "std. error", "95 % low", "95 % high",
                  "interval method", "note"], rows,
                 caption="'open': the data do not bound the parameter on that side.")


def correlation_table(fit) -> Raw:
    """Pairs of the chosen model's estimates with |r| above the threshold (nothing for one parameter)."""
    if fit.n_params < 2:
        return Raw("")
    pairs = fit.correlations()
    if not pairs:
        why = "the fit gave no covariance" if pairs is None else f"no pair has |r| > {CORRELATION_SHOWN_ABOVE:g}"
        return tag("p", f"Correlations of the estimates: {why}.", class_="quiet")
    rows = [[f"{a} and {b}", f"{r:+.3f}"] for a, b, r in pairs]
    return table(["parameters", "correlation r"], rows,
                 caption=f"Correlations of the estimates with |r| > {CORRELATION_SHOWN_ABOVE:g}, "
                         "largest first: first order, from the covariance at the optimum (the same for "
                         "the SI values and the log coordinates the fit uses inside). |r| near 1: the "
                         "data fix a combination of the two rather than each one.")


def _sample_flags(sample) -> Raw:
    messages = [f.message for f in sample.curve.flags] + [f.message for f in sample.chosen.flags]
    return bullets(messages, empty="No flags: the data and the chosen fit raised no warning.")


def sample_section(i: int, sample, placed: dict) -> Raw:
    """Everything about one sample: data, fits, flags, figures, flow cases."""
    fit = sample.chosen
    parts = [
        tag("h2", f"Sample: {sample.name}", id=f"sample-{i}"), _sample_facts(sample),
        tag("h3", ranking_heading(sample)), tag("div", ranking_table(sample), class_="scroll"),
        not_fitted(sample),
        tag("h3", f"Chosen model: {fit.declaration.title}"),
        tag("p", join(tag("code", fit.declaration.equation), Raw(" — "), fit.declaration.reference)),
        tag("div", parameter_table(fit), class_="scroll"),
        correlation_table(fit),
        tag("h3", "Flags"), _sample_flags(sample),
        _figures(placed.get(("sample", i), [])),
    ]
    for j, result in enumerate(sample.cases):
        parts.append(case_block(i, j, result, fit, placed.get(("case", i, j), [])))
    return tag("section", join(*parts))


# --- one flow case --------------------------------------------------------------------

_QUANTITIES = (
    # (label, attribute, interval attribute, how shown)
    ("pressure drop", "pressure_drop", "pressure_drop_ci95", "pressure"),
    ("flow rate", "flow_rate", "flow_rate_ci95", "flow_rate"),
    ("mean velocity", "mean_velocity", None, "velocity"),
    ("max velocity (centre line)", "max_velocity", None, "velocity"),
    ("wall shear stress", "wall_shear_stress", "wall_shear_stress_ci95", "Pa"),
    ("wall shear rate", "wall_shear_rate", "wall_shear_rate_ci95", "1/s"),
    ("apparent (Newtonian) wall shear rate", "apparent_wall_shear_rate", None, "1/s"),
)


def _value(x, how: str) -> str:
    if x is None:
        return "—"
    return shown(x, how) if how in ("pressure", "flow_rate", "velocity") else f"{number(x)} {how}"


def _interval_cell(p, attribute, how) -> str:
    ci = getattr(p, attribute, None) if attribute else None
    if ci is None or ci[0] is None or ci[1] is None:
        return "—"
    low, high = _first(ci[0]), _first(ci[1])
    if abs(high - low) <= 1e-9 * max(abs(low), abs(high)):
        return "exact: set by the operating point"
    return f"{_value(low, how)} to {_value(high, how)}"


def prediction_rows(p, fit) -> list[list[str]]:
    """(quantity, value, 95 % interval) rows of one flowing operating point (a sample at rest
    shows its threshold only: :func:`headline_block`)."""
    rows = [[label, _value(_first(getattr(p, attr)), how), _interval_cell(p, ci, how)]
            for label, attr, ci, how in _QUANTITIES]
    low, high = fit.shear_rate_range
    rate = _first(p.wall_shear_rate)
    where = "inside" if low <= rate <= high else "OUTSIDE"
    rows[5][1] += f" ({where} the measured {number(low)} to {number(high)} 1/s)"
    if p.threshold_pressure_drop > 0:
        rows.append(["threshold pressure drop (flow starts)", shown(p.threshold_pressure_drop, "pressure"), "—"])
        rows.append(["plug size / channel half-size", f"{_first(p.plug_fraction):.3f}", "—"])
    regime = "laminar" if bool(_first(p.laminar)) else "NOT laminar"
    rows.append(["generalised Reynolds number", f"{number(_first(p.reynolds))} ({regime}; critical "
                 f"{number(_first(p.critical_reynolds))})", "—"])
    default = " (default; not given)" if p.density_is_default else ""
    rows.append(["density", f"{number(p.density)} kg/m³{default}", "—"])
    return rows


def newtonian_text(p) -> str:
    """The Newtonian comparison in words (of a flowing operating point)."""
    text = (f"A Newtonian estimate with η = {number(_first(p.newtonian_viscosity))} Pa·s "
            f"({p.newtonian_reference}) gives {shown(_first(p.newtonian_pressure_drop), 'pressure')}; "
            f"the model needs {number(_first(p.newtonian_ratio), 3)}× that.")
    if p.zero_shear_viscosity is not None:
        text += (f" With the zero-shear viscosity η₀ = {number(p.zero_shear_viscosity)} Pa·s it would "
                 f"give {shown(_first(p.zero_shear_pressure_drop), 'pressure')}; the model needs "
                 f"{number(_first(p.zero_shear_ratio), 3)}× that.")
    return text


def headline_block(p) -> Raw:
    """The prediction's headline: the warning (when the data reject the chosen model, or one model
    was left), the answer with its 95 % interval, where the wall shear rate lies, the evidence."""
    top = p.headline(shown)
    parts = [tag("p", join(tag("strong", "Warning: "), top.warning), class_="warning")] if top.warning else []
    parts.append(tag("p", tag("strong", top.answer[0].upper() + top.answer[1:] + ".")))
    for part in (top.reach, top.evidence):
        if part:
            parts.append(tag("p", part[0].upper() + part[1:] + "."))
    return join(*parts)


def case_block(i: int, j: int, result, fit, figures) -> Raw:
    """One flow case: headline, prediction table, Newtonian comparison, flags, figures.  A sample
    at rest shows its threshold (the headline) and nothing else."""
    p, case = result.prediction, result.case
    heading = [tag("h3", f"Flow: {case.label}", id=f"sample-{i}-case-{j}"),
               tag("p", f"{fit.declaration.title} model of {fit.name or 'the sample'} in a {case.describe()}."),
               headline_block(p)]
    if not bool(_first(p.flowing)):
        return join(*heading, _figures(figures))
    method = getattr(p, "uncertainty_method", None)
    note = f"95 % intervals: {method}." if method else "No intervals were computed for this prediction."
    return join(
        *heading,
        table(["quantity", "value", "95 % interval"], prediction_rows(p, fit), caption=note),
        tag("p", join(tag("strong", "Newtonian comparison. "), newtonian_text(p))),
        tag("p", tag("strong", "Flags")), bullets([f.message for f in p.flags], empty="No flags."),
        _figures(figures),
    )


# --- lot comparison ---------------------------------------------------------------------

#: comparison-table columns left out (the verdict and its evidence are listed in words below the table)
_HIDDEN = ("failed", "verdict", *EVIDENCE_COLUMNS)


def _frame_cell(column: str, value) -> str:
    """A comparison-table cell in display units: kPa, µL/min, 1/s, % for deviations."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "—"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "NO"
    if not isinstance(value, (int, float, np.integer, np.floating)):
        return str(value)
    value = float(value)
    for prefix, kind in (("pressure_drop", "pressure"), ("flow_rate", "flow_rate")):
        if column.startswith(prefix):
            return shown(value, kind)
    if column.endswith("_at") or column == "wall_shear_rate":
        return f"{number(value)} 1/s"
    return percent(value) if "deviation" in column else number(value)


def _merged_cell(record, column) -> str:
    """'value [low, high]' (and ' at <shear rate>' for a deviation with its place)."""
    cell = _frame_cell(column, record[column])
    if f"{column}_low" in record and f"{column}_high" in record:
        cell += f" [{_frame_cell(column, record[f'{column}_low'])}, {_frame_cell(column, record[f'{column}_high'])}]"
    if f"{column}_at" in record:
        cell += f" at {_frame_cell(f'{column}_at', record[f'{column}_at'])}"
    return cell


def _unit(unit: str) -> str:
    return "" if unit in ("", "1", "-") else f" {unit}"


def comparison_table(frame, units=None) -> Raw:
    """The comparison DataFrame: one row per lot, intervals in brackets.

    ``units`` maps the parameter columns to their SI units; those columns
    share one cell ('eta0 = 0.25 [0.24, 0.26] Pa*s', one per line).
    """
    units = units or {}
    columns = [str(c) for c in frame.columns]
    inner = {f"{c}_{side}" for c in columns for side in ("low", "high", "at")}
    parameters = [c for c in columns if c in units]
    others = [c for c in columns if c not in inner and c not in units and c not in _HIDDEN]
    rows = []
    for record in frame.to_dict("records"):
        lines = [f"{c} = {_merged_cell(record, c)}{_unit(units[c])}" for c in parameters]
        cells = [_merged_cell(record, c) for c in others]
        block = "<br>".join(f'<span class="nowrap">{esc(line)}</span>' for line in lines)
        rows.append(cells[:1] + [Raw(block)] + cells[1:])
    headers = others[:1] + ["parameters [95 %]"] + [c.replace("_", " ") for c in others[1:]]
    return table(headers, rows, caption="Brackets: 95 % intervals ('—': open). Deviations are "
                                        "relative to the reference lot.")


def comparison_section(analysis, figures) -> Raw:
    """The lot comparison: table, verdicts, p-value, flags and the overlay."""
    comparison = analysis.comparison
    if comparison is None:
        if not analysis.comparison_note:
            return Raw("")
        return tag("section", join(tag("h2", "Lot comparison", id="comparison"),
                                   tag("p", analysis.comparison_note)))
    parts = [tag("h2", "Lot comparison", id="comparison")]
    if comparison.warning:
        parts.append(tag("p", join(tag("strong", "Warning: "), comparison.warning), class_="warning"))
    parts.append(tag("p", _comparison_intro(comparison)))
    units = {p.name: p.unit for f in comparison.fits for p in f.declaration.parameters}
    parts.append(tag("div", comparison_table(comparison.table, units), class_="scroll"))
    p_value = comparison.p_value
    if math.isfinite(float(p_value)):
        parts.append(tag("p", f"p-value of the test that all lots share one curve: {float(p_value):.3g} "
                              f"({'the lots differ beyond their noise' if p_value < 0.05 else 'no significant difference'} "
                              "at the 5 % level)."))
    parts.append(tag("p", tag("strong", "Verdicts")))
    parts.append(bullets(_verdict_lines(comparison), empty="No verdicts."))
    parts.append(tag("p", tag("strong", "Flags")))
    parts.append(bullets([f.message for f in comparison.flags], empty="No flags."))
    parts.append(_figures(figures))
    return tag("section", join(*parts))


def _comparison_intro(comparison) -> str:
    names = [c.name for c in comparison.curves]
    low, high = comparison.shared_range
    return (f"{len(names)} lots ({', '.join(names)}) compared with the {comparison.model} model over "
            f"the shared shear-rate range {number(low)} to {number(high)} 1/s; reference lot: "
            f"{names[comparison.reference]}, tolerance ±{100 * comparison.tolerance:.0f} %.")


def _verdict_lines(comparison) -> list[str]:
    from rheofit.report.figures_compare import verdicts

    return [(f"{c.name}: {v}", [f"evidence: {comparison.evidence(i, shown)}"])
            for i, (c, v) in enumerate(zip(comparison.curves, verdicts(comparison))) if v]


# --- method --------------------------------------------------------------------------------

METHOD = (
    "Residuals are relative, in log space: r = ln τ_model − ln τ_measured, minimised by "
    "trust-region least squares within physical bounds; parameters spanning decades are fitted as "
    "logarithms. Viscosity spans decades, so every point weighs by its relative error.",
    "95 % intervals by profile likelihood with an F threshold, honest for a nonlinear model; an end "
    "the data cannot close is reported as open and the parameter as not resolved.",
    "Models are ranked by AICc, the Akaike criterion corrected for small samples (Burnham & Anderson "
    "2002), with Akaike weights and BIC alongside; a Wald–Wolfowitz runs test on the residual signs "
    "flags a systematic misfit.",
    "Flow: laminar, isothermal, fully developed flow without wall slip. The flow rate follows from "
    "the wall shear stress by the Rabinowitsch–Mooney integral over the fitted flow curve (Rabinowitsch "
    "1929; Mooney 1931), for any model; a yield-stress fluid moves as a plug where the stress is below "
    "its yield stress and does not flow at all when the wall shear stress does not exceed it.",
    "Wall shear stress from a force balance: tube τw = Δp R / (2L), slit τw = Δp h / L (h = half "
    "the gap); the slit is treated as infinitely wide.",
)


def _comparison_method(comparison) -> str:
    choice = getattr(comparison, "model_choice", "")
    model = f"one model for every lot ({comparison.model}{', ' + choice if choice else ''})"
    return (f"Lot comparison: {model}; each lot is judged against the reference lot by the "
            "operating point (when a geometry is given) and by the largest viscosity deviation over "
            "the shear-rate range all lots share; the p-value is the extra-sum-of-squares F test of "
            "one curve for all lots against one per lot (Motulsky & Christopoulos 2004).")


def _distinct(values) -> list[str]:
    return list(dict.fromkeys(v for v in values if v))


def method_section(analysis) -> Raw:
    """The method and its assumptions, including what this report actually used."""
    predictions = [c.prediction for s in analysis.samples for c in s.cases]
    interval_methods = _distinct(e.method for s in analysis.samples for e in s.chosen.params.values())
    items = list(METHOD)
    if interval_methods:
        items.append("Parameter intervals in this report: " + "; ".join(interval_methods) + ".")
    criteria = _distinct(p.laminar_criterion for p in predictions)
    if criteria:
        items.append(("Laminar criterion (the flow is laminar below it):", criteria))
    references = _distinct(p.newtonian_reference for p in predictions)
    if references:
        items.append(("Newtonian comparison: the same flow rate with a constant viscosity, namely",
                      references))
    uncertainty = _distinct(getattr(p, "uncertainty_method", None) for p in predictions)
    if uncertainty:
        items.append(("95 % intervals of the predictions:", uncertainty))
    if analysis.comparison is not None:
        items.append(_comparison_method(analysis.comparison))
    items.append("All computation in SI units; shown in the units people read (kPa, µL/min, mm/s).")
    return tag("section", join(tag("h2", "Method and assumptions", id="method"), bullets(items)))
