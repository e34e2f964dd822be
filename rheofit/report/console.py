"""Rich renderings of results for the terminal.  No computation happens here."""

from __future__ import annotations

import math

from rich.console import Group
from rich.table import Table
from rich.text import Text

from rheofit.fitting.evidence import Evidence
from rheofit.fitting.statistics import akaike_weights
from rheofit.fitting.support import RANKING_MIN_POINTS, not_ranked_lines
from rheofit.models import MODELS
from rheofit.report.display import literal, number, shown, visible


def interval(ci) -> str:
    """'[low, high]' with an open end shown as 'open'."""
    if ci is None:
        return "—"
    low, high = ci
    return f"[{_end(low, 'open')}, {_end(high, 'open')}]"


def _end(x, word):
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return word
    return number(x)


def models_list() -> Text:
    """Every declared model: name, equation, parameters with SI units, source."""
    text = Text()
    for m in MODELS.values():
        text.append(f"{m.name}", style="bold cyan")
        text.append(f"  ({m.title})\n    {m.equation}\n")
        for p in m.parameters:
            text.append(f"    {p.name:<8} [{p.unit}]  {p.meaning}; bounds {p.lower:g} to {p.upper:g}\n")
        text.append(f"    source: {m.reference}\n\n", style="dim")
    return text


_SHORT_FLAG = {"at_bound": "B", "few_points": "F", "residual_pattern": "P", "unresolved": "U"}
_FLAG_LEGEND = "flags: B parameter at a bound, F few points, P residual pattern, U unresolved parameter"


def ranking_title(results) -> str:
    """The heading of a ranking: it says when the ranking rests on few points or on one model."""
    n = results[0].n_points if len(results) else 0
    if len(results) == 1:
        return f"Only one model could be ranked on {n} points"
    if n < RANKING_MIN_POINTS:
        return f"Ranking on only {n} points (AICc, lower is better)"
    return "Ranking (AICc, lower is better)"


def ranking_table(results) -> Table:
    """Models ranked by AICc with Akaike weights (Burnham & Anderson 2002); the heading and
    caption say what a ranking on few points, or of one model, cannot tell."""
    best = results[0].aicc
    weights = akaike_weights([r.aicc for r in results])
    caveat = getattr(results, "caveat", "")
    caption = (caveat + "\n" if caveat else "") + "rms(ln): typical relative misfit; weight: Akaike weight\n" + _FLAG_LEGEND
    table = Table(title=ranking_title(results), caption=caption)
    table.add_column("#", justify="right")
    table.add_column("model", no_wrap=True)
    for col in ("k", "AICc", "ΔAICc", "weight", "BIC", "rms(ln)"):
        table.add_column(col, justify="right", no_wrap=True)
    table.add_column("flags", min_width=5)
    for i, (r, w) in enumerate(zip(results, weights), 1):
        codes = sorted({_SHORT_FLAG.get(f.code, f.code) for f in r.flags if f.code in _SHORT_FLAG})
        table.add_row(
            str(i), r.model, str(len(r.params)), f"{r.aicc:.1f}", f"{r.aicc - best:.1f}",
            f"{w:.3f}", f"{r.bic:.1f}", f"{r.rms_log_residual:.3f}", "".join(codes) or "—",
        )
    return table


def parameter_table(result) -> Table:
    """Parameters of one fit with SI units, 95 % intervals and their method."""
    methods = sorted({est.method for est in result.params.values()})
    table = Table(
        title=f"{result.model}: {result.declaration.equation}",
        caption="95 % intervals by " + "; ".join(methods) + "; 'open' = not bounded by the data",
    )
    for col in ("parameter", "value", "std. error", "95 % interval", "unit", ""):
        table.add_column(col, no_wrap=col != "95 % interval")
    for name, est in result.params.items():
        unit = result.declaration.parameter(name).unit
        status = "" if est.resolved else "unresolved"
        table.add_row(name, number(est.value), number(est.stderr), Text(interval(est.ci95)), unit, status)
    return table


def flag_lines(flags) -> Text:
    """Flags as a bullet list in plain words."""
    if not flags:
        return Text("No flags.", style="green")
    text = Text()
    for flag in flags:
        text.append("  • ", style="yellow")
        text.append(visible(flag.message) + "\n")
    return text


def not_ranked(curve, results) -> Text | None:
    """The models tried but not fitted, with why (None when every model was ranked)."""
    skipped = getattr(results, "skipped", ())
    if not skipped:
        return None
    text = Text("Not ranked:\n", style="bold")
    for line in not_ranked_lines(len(curve), skipped):
        text.append(f"  • {line}\n", style="")
    return text


def evidence_text(fit) -> Text:
    """The warning (when the data reject the chosen model, or one model is left) and the evidence line."""
    evidence = Evidence.of(fit)
    text = Text()
    if evidence.warning():
        text.append("WARNING: ", style="bold red")
        text.append(evidence.warning() + "\n", style="red")
    text.append(f"Evidence ({evidence.model} model): ", style="bold")
    text.append(evidence.line())
    return text


def curve_block(curve, results, chosen) -> Group:
    """Everything `rheofit fit` shows for one curve: the ranking (when one was made), the models
    not ranked, the chosen fit's evidence, parameters and flags."""
    low, high = curve.shear_rate_range
    head = Text(
        f"\n{visible(curve.name)}  ({visible(curve.source or 'in memory')}; {len(curve)} points, "
        f"shear rate {number(low)}–{number(high)} 1/s)",
        style="bold",
    )
    parts = [head]
    if len(results) > 1 or hasattr(results, "skipped"):
        parts.append(ranking_table(results))
    parts += [part for part in (not_ranked(curve, results), evidence_text(chosen)) if part is not None]
    parts += [parameter_table(chosen), Text("Flags:", style="bold"), flag_lines(chosen.flags)]
    return Group(*parts)


def summary_table(groups) -> Table:
    """One row per curve: the best model and its parameters."""
    table = Table(title="Summary")
    for col in ("sample", "model", "ΔAICc to next", "weight", "misfit", "parameters", "flags"):
        table.add_column(col, overflow="fold")
    for curve, results in groups:
        best = results[0]
        gap = f"{results[1].aicc - best.aicc:.2f}" if len(results) > 1 else "—"
        params = ", ".join(f"{k}={number(v.value)}" for k, v in best.params.items())
        support = best.support
        weight = "—" if support is None else ("only one ranked" if support.sole else f"{support.akaike_weight:.3f}")
        misfit = f"{Evidence.of(best).misfit_percent:.2g} %"
        table.add_row(literal(curve.name), best.model, gap, weight, misfit, params, str(len(best.flags)))
    return table


# --- flow predictions -------------------------------------------------------

def _prediction_rows(p):
    rows = [
        ("pressure drop", shown(p.pressure_drop, "pressure")),
        ("flow rate", shown(p.flow_rate, "flow_rate")),
        ("mean velocity", shown(p.mean_velocity, "velocity")),
        ("max velocity (centre line)", shown(p.max_velocity, "velocity")),
        ("wall shear stress", f"{number(p.wall_shear_stress)} Pa"),
        ("wall shear rate", f"{number(p.wall_shear_rate)} 1/s"),
        ("apparent (Newtonian) wall shear rate", f"{number(p.apparent_wall_shear_rate)} 1/s"),
    ]
    if p.plug_fraction:
        rows.append(("plug size / channel half-size", f"{p.plug_fraction:.3f}"))
    regime = "laminar" if p.laminar else "NOT laminar"
    rows.append(("generalised Reynolds number", f"{number(p.reynolds)} ({regime}; critical {number(p.critical_reynolds)})"))
    for low_high, name, kind in (("pressure_drop_ci95", "pressure drop 95 % interval", "pressure"),
                                 ("flow_rate_ci95", "flow rate 95 % interval", "flow_rate")):
        ci = getattr(p, low_high, None)
        if ci is not None and ci[0] is not None:
            rows.append((name, f"{shown(ci[0], kind)} to {shown(ci[1], kind)}"))
    for low_high, name, unit in (("wall_shear_stress_ci95", "wall shear stress 95 % interval", "Pa"),
                                 ("wall_shear_rate_ci95", "wall shear rate 95 % interval", "1/s")):
        ci = getattr(p, low_high, None)
        if ci is not None and ci[0] is not None:
            rows.append((name, f"{number(ci[0])} to {number(ci[1])} {unit}"))
    if getattr(p, "uncertainty_samples", None):
        rows.append(("intervals from", f"{p.uncertainty_samples} Monte Carlo draws of the fitted "
                                       "parameters (method in --json)"))
    return rows


def headline_text(p) -> Text:
    """The prediction's headline: a warning line BEFORE the number (when there is one), the answer
    with its 95 % interval, where the wall shear rate lies, and the model's evidence."""
    top = p.headline(shown)
    text = Text()
    if top.warning:
        text.append("WARNING: ", style="bold red")
        text.append(top.warning + "\n", style="red")
    text.append(top.answer[0].upper() + top.answer[1:] + "\n", style="bold")
    if top.reach:
        text.append(top.reach + "\n", style="bold yellow" if top.reach.startswith("EXTRAPOLATED") else "")
    if top.evidence:
        text.append(top.evidence[0].upper() + top.evidence[1:] + "\n")
    return text


def prediction_block(result, geometry, p) -> Group:
    """Everything `rheofit flow` shows for one operating point."""
    from rich.panel import Panel

    from rheofit.flow.predict import SAFETY_CAUTION

    label = f" '{visible(p.fluid.name)}'" if p.fluid.name else ""
    head = Text(f"\n{p.fluid.model}{label} in a {geometry.describe()}", style="bold")
    top = headline_text(p)
    caution = Panel(Text(SAFETY_CAUTION), border_style="yellow")
    if not bool(p.flowing):  # at rest: the threshold is the whole answer
        return Group(head, top, caution)
    table = Table(show_header=False, box=None, padding=(0, 2))
    table.add_column(style="cyan")
    table.add_column()
    for name, value in _prediction_rows(p):
        table.add_row(name, Text(value))
    compare = Text("\nNewtonian comparison: ", style="bold")
    compare.append(
        f"with {number(p.newtonian_viscosity)} Pa·s ({p.newtonian_reference}) a Newtonian estimate "
        f"gives {shown(p.newtonian_pressure_drop, 'pressure')}; the model needs "
        f"{number(p.newtonian_ratio, 3)}× that."
    )
    if p.zero_shear_viscosity is not None:
        compare.append(
            f"\nWith the zero-shear viscosity {number(p.zero_shear_viscosity)} Pa·s it would give "
            f"{shown(p.zero_shear_pressure_drop, 'pressure')} (ratio {number(p.zero_shear_ratio, 3)})."
        )
    density = " (default; pass --density)" if p.density_is_default else ""
    notes = Text(f"\nLaminar criterion: {p.laminar_criterion}. Density {number(p.density)} kg/m³{density}.", style="dim")
    return Group(head, top, table, compare, notes, Text("\nFlags:", style="bold"), flag_lines(p.flags),
                 caution)
