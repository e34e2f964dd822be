"""Rich renderings of a lot comparison for the terminal (``rheofit compare``)."""

from __future__ import annotations

def _percent(value) -> str:
    return "—" if value is None or value != value else f"{100 * value:+.1f} %"


def _short_interval(ci) -> str:
    """'low–high' with 3 significant digits, 'open' for an open end."""
    from rheofit.report.display import number

    return "–".join("open" if v is None else number(v, 3) for v in ci)


def _range_text(low, high, kind: str) -> str:
    """'923.4–949.4 Pa' (the unit once when both ends share it)."""
    from rheofit.report.display import shown

    left, right = shown(low, kind), shown(high, kind)
    if left.split(" ")[-1] == right.split(" ")[-1] and " " in left:
        return f"{left.rsplit(' ', 1)[0]}–{right}"
    return f"{left} – {right}"


def _lot_column(table, comparison) -> None:
    width = min(max(len(label) for label in comparison.lots), 10)
    table.add_column("lot", overflow="fold", min_width=width)


def parameter_table(comparison):
    """Rich table: one row per lot, each parameter with its 95 % interval below it."""
    from rich.markup import escape
    from rich.table import Table

    from rheofit.report.display import literal, number

    declaration = comparison.fits[0].declaration
    table = Table(title=f"Parameters of the {comparison.model} model (SI, 95 % intervals)",
                  caption="* reference lot")
    table.add_column("#", justify="right")
    _lot_column(table, comparison)
    for spec in declaration.parameters:
        # escaped: rich would read '[s]' (lam's unit) as its strike-through markup and drop it
        table.add_column(escape(f"{spec.name} [{spec.unit}]"), justify="right", overflow="fold")
    for i, row in enumerate(comparison.table.to_dict(orient="records")):
        fit = comparison.fits[i]
        cells = [f"{number(fit.params[s.name].value, 4)}\n{_short_interval(fit.params[s.name].ci95)}"
                 for s in declaration.parameters]
        table.add_row(str(i + 1) + ("*" if i == comparison.reference else ""), literal(row["lot"]), *cells)
    return table


def lots_table(comparison):
    """Rich table: one row per lot, the operating value with its interval and both criteria."""
    from rich.table import Table
    from rich.text import Text

    from rheofit.report.display import literal, shown

    kind = {"pressure_drop": "pressure", "flow_rate": "flow_rate"}
    solved = comparison.solved
    table = Table(title=f"Against the reference lot (tolerance {100 * comparison.tolerance:g} %)",
                  caption="* reference lot; Δ point: at the operating point; max Δη: largest "
                          "viscosity difference over the shared shear-rate range (where: see verdicts)")
    table.add_column("#", justify="right")
    _lot_column(table, comparison)
    if solved:
        table.add_column(solved.replace("_", " "), justify="right")
        table.add_column("95 % interval", justify="right")
        table.add_column("Δ point", justify="right")
    table.add_column("max Δη", justify="right")
    table.add_column("ok", justify="center")
    for i, row in enumerate(comparison.table.to_dict(orient="records")):
        cells = [str(i + 1) + ("*" if i == comparison.reference else ""), literal(row["lot"])]
        if solved:
            cells += [shown(row[solved], kind[solved]),
                      _range_text(row[solved + "_low"], row[solved + "_high"], kind[solved]),
                      _percent(row["deviation"])]
        cells.append(_percent(row["max_viscosity_deviation"]))
        ok = row["within_tolerance"]
        table.add_row(*cells, Text("yes" if ok else "NO", style="green" if ok else "bold red"))
    return table


def comparison_block(comparison):
    """Everything ``rheofit compare`` prints."""
    from rich.console import Group
    from rich.panel import Panel
    from rich.text import Text

    from rheofit.flow.predict import SAFETY_CAUTION
    from rheofit.report.console import flag_lines
    from rheofit.report.display import number, shown, visible

    low, high = comparison.shared_range
    head = Text()
    if comparison.warning:
        head.append("\nWARNING: ", style="bold red")
        head.append(visible(comparison.warning), style="red")
    head.append(f"\n{len(comparison.lots)} lots; reference '{visible(comparison.lots[comparison.reference])}'; "
                f"model {comparison.model} ({comparison.model_choice}); shared shear-rate range "
                f"{number(low)} to {number(high)} 1/s", style="bold")
    if comparison.operating_point:
        (given, value), = comparison.operating_point.items()
        what = shown(value, "flow_rate" if given == "flow_rate" else "pressure")
        head.append(f"\noperating point: {given.replace('_', ' ')} {what} in a {comparison.geometry.describe()}",
                    style="bold")
    verdicts = Text("\nVerdicts:\n", style="bold")
    for i, row in enumerate(comparison.table.to_dict(orient="records")):
        style = "green" if row["within_tolerance"] else "red"
        verdicts.append(f"  {visible(row['lot'])}: ", style="bold")
        verdicts.append(f"{visible(row['verdict'])}\n", style=style)
        verdicts.append(f"    evidence: {visible(comparison.evidence(i, shown))}\n",
                        style="red" if row["forced_model"] else "dim")
    test = comparison.same_curve
    if comparison.p_value == comparison.p_value:
        stats = Text(f"Same-curve test (extra sum of squares F test, one parameter set for all lots "
                     f"against one per lot): F = {number(test['f_statistic'])} on "
                     f"({test['df_numerator']}, {test['df_denominator']}) degrees of freedom, "
                     f"p = {comparison.p_value:.3g}")
        stats.append("  — the lots are not one curve within their noise; the tolerance says whether "
                     "that matters." if comparison.p_value < 0.05 else
                     "  — no evidence that the lots differ.", style="dim")
    else:
        stats = Text(f"Same-curve test: not available ({test.get('note', '')}).")
    return Group(head, parameter_table(comparison), lots_table(comparison), verdicts, stats, Text("\nFlags:", style="bold"),
                 flag_lines(comparison.flags), Panel(Text(SAFETY_CAUTION), border_style="yellow"))


