"""The sections of the HTML report; each returns escaped HTML (:class:`Raw`)."""

from __future__ import annotations

import math

import numpy as np

from rheofit.fitting.statistics import CORRELATION_SHOWN_ABOVE, akaike_weights
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

def _case_result(p) -> str:
    if not bool(_first(p.flowing)):
        return f"no flow (threshold {shown(p.threshold_pressure_drop, 'pressure')})"
    return f"{shown(_first(p.pressure_drop), 'pressure')} at {shown(_first(p.flow_rate), 'flow_rate')}"


def summary_section(analysis) -> Raw:
    """The samples at a glance, and every flow case's result."""
    rows = []
    for s in analysis.samples:
        low, high = s.curve.shear_rate_range
        rows.append([s.name, s.curve.source or "in memory", str(len(s.curve)),
                     f"{number(low)} to {number(high)}", s.chosen.declaration.title,
                     f"{s.chosen.rms_log_residual:.3f}", str(len(s.chosen.flags) + len(s.curve.flags))])
    parts = [tag("h2", "Summary", id="summary"),
             table(["sample", "file", "points", "shear rate [1/s]", "chosen model", "rms(ln)", "flags"],
                   rows, caption="rms(ln): typical relative misfit of the chosen model (0.02 ≈ 2 %).")]
    cases = [[s.name, tag("a", c.case.label, href=f"#sample-{i}-case-{j}"), c.case.geometry.describe(),
              _case_result(c.prediction), f"{number(_first(c.prediction.wall_shear_stress))} Pa",
              _ratio(c.prediction)]
             for i, s in enumerate(analysis.samples) for j, c in enumerate(s.cases)]
    if cases:
        parts.append(table(["sample", "case", "geometry", "result", "wall shear stress",
                            "model / Newtonian Δp"], cases,
                           caption="Newtonian Δp: the pressure drop with the viscosity the model has at "
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


def ranking_table(sample) -> Raw:
    """Every model fitted, best first by AICc, with Akaike weights and flags."""
    ranking = sample.ranking
    best = min((r.aicc for r in ranking if math.isfinite(r.aicc)), default=math.nan)
    rows = []
    for i, (r, w) in enumerate(zip(ranking, akaike_weights([r.aicc for r in ranking])), start=1):
        mark = " (chosen)" if r is sample.chosen else ""
        rows.append([str(i), r.declaration.title + mark, str(r.n_params), f"{r.aicc:.1f}",
                     f"{r.aicc - best:.1f}", f"{w:.3f}", f"{r.bic:.1f}", f"{r.rms_log_residual:.3f}",
                     _flag_words(r.flags)])
    caption = ("AICc: Akaike information criterion with the small-sample correction (lower is "
               "better); ΔAICc > 2 is a real difference, > 10 a decisive one. weight: Akaike weight. "
               "rms(ln): typical relative misfit.")
    return table(["#", "model", "k", "AICc", "ΔAICc", "weight", "BIC", "rms(ln)", "flags"], rows,
                 caption=caption)


def not_fitted(sample) -> Raw:
    """The models left out of the ranking, each with the reason (nothing when none was)."""
    skipped = sample.ranking.skipped
    if not skipped:
        return Raw("")
    return join(tag("p", "Not fitted:"),
                bullets([join(tag("strong", name), Raw(": "), why) for name, why in skipped]))


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
        tag("h3", "Models ranked by AICc"), tag("div", ranking_table(sample), class_="scroll"),
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
    """(quantity, value, 95 % interval) rows of one operating point."""
    flowing = bool(_first(p.flowing))
    # a sample at rest has nothing uncertain to show but its threshold
    rows = [[label, _value(_first(getattr(p, attr)), how), _interval_cell(p, ci, how) if flowing else "—"]
            for label, attr, ci, how in _QUANTITIES]
    low, high = fit.shear_rate_range
    rate = _first(p.wall_shear_rate)
    where = "inside" if low <= rate <= high else "OUTSIDE"
    if flowing:
        rows[5][1] += f" ({where} the measured {number(low)} to {number(high)} 1/s)"
    if p.threshold_pressure_drop > 0:
        rows.append(["threshold pressure drop (flow starts)", shown(p.threshold_pressure_drop, "pressure"), "—"])
    if p.threshold_pressure_drop > 0 and flowing:
        rows.append(["plug size / channel half-size", f"{_first(p.plug_fraction):.3f}", "—"])
    regime = "laminar" if bool(_first(p.laminar)) else "NOT laminar"
    rows.append(["generalised Reynolds number", f"{number(_first(p.reynolds))} ({regime}; critical "
                 f"{number(_first(p.critical_reynolds))})", "—"])
    default = " (default; not given)" if p.density_is_default else ""
    rows.append(["density", f"{number(p.density)} kg/m³{default}", "—"])
    return rows


def newtonian_text(p) -> str:
    """The Newtonian comparison in words."""
    if not bool(_first(p.flowing)):
        return (f"The wall shear stress ({number(_first(p.wall_shear_stress))} Pa) does not "
                f"exceed the yield stress, so the sample stays at rest. It starts to flow only above a "
                f"pressure drop of {shown(p.threshold_pressure_drop, 'pressure')} over this length.")
    text = (f"A Newtonian estimate with η = {number(_first(p.newtonian_viscosity))} Pa·s "
            f"({p.newtonian_reference}) gives {shown(_first(p.newtonian_pressure_drop), 'pressure')}; "
            f"the model needs {number(_first(p.newtonian_ratio), 3)}× that.")
    if p.zero_shear_viscosity is not None:
        text += (f" With the zero-shear viscosity η₀ = {number(p.zero_shear_viscosity)} Pa·s it would "
                 f"give {shown(_first(p.zero_shear_pressure_drop), 'pressure')}; the model needs "
                 f"{number(_first(p.zero_shear_ratio), 3)}× that.")
    return text


def case_block(i: int, j: int, result, fit, figures) -> Raw:
    """One flow case: prediction table, Newtonian comparison, flags, figures."""
    p, case = result.prediction, result.case
    method = getattr(p, "uncertainty_method", None)
    note = f"95 % intervals: {method}." if method else "No intervals were computed for this prediction."
    return join(
        tag("h3", f"Flow: {case.label}", id=f"sample-{i}-case-{j}"),
        tag("p", f"{fit.declaration.title} model of {fit.name or 'the sample'} in a {case.describe()}."),
        table(["quantity", "value", "95 % interval"], prediction_rows(p, fit), caption=note),
        tag("p", join(tag("strong", "Newtonian comparison. " if bool(_first(p.flowing)) else "No flow. "),
                      newtonian_text(p))),
        tag("p", tag("strong", "Flags")), bullets([f.message for f in p.flags], empty="No flags."),
        _figures(figures),
    )


# --- lot comparison ---------------------------------------------------------------------

#: comparison-table columns left out (the verdict is listed in words below the table)
_HIDDEN = ("failed", "verdict")


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
    parts = [tag("h2", "Lot comparison", id="comparison"), tag("p", _comparison_intro(comparison))]
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

    return [f"{c.name}: {v}" for c, v in zip(comparison.curves, verdicts(comparison)) if v]


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
