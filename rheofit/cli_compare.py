"""The ``rheofit compare`` command: lots side by side at one operating point.

:mod:`rheofit.cli` registers it with
``from rheofit.cli_compare import compare_command`` and
``app.command("compare")(compare_command)``.  Thin: parse the options
(reusing :func:`rheofit.cli.make_geometry` and
:func:`rheofit.cli.operating_point`), call :func:`rheofit.lots.compare`,
print a rich table, the verdicts, the test, the flags and the caution.
"""

from __future__ import annotations

import functools
import json
import sys
from pathlib import Path
from typing import Optional

import typer

from rheofit.cli_options import DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, WIDTH


def user_errors(command):
    """:func:`rheofit.cli.user_errors`, looked up at call time.

    So ``rheofit.cli`` may import this module anywhere (even before it
    defines ``user_errors``) without a circular import.
    """

    @functools.wraps(command)
    def wrapper(*args, **kwargs):
        from rheofit.cli import user_errors as turn_into_one_line

        return turn_into_one_line(command)(*args, **kwargs)

    return wrapper


def parse_tolerance(text: str) -> float:
    """'10%', '10 %' or '0.1' -> 0.1 (units parsed by rheofit.units); ParameterError otherwise."""
    from rheofit.errors import ParameterError, UnitError
    from rheofit.units import parse_quantity

    try:
        value = parse_quantity(text, "dimensionless")
    except UnitError:
        value = float("nan")
    if not 0 < value < float("inf"):
        raise ParameterError(
            f"--tolerance '{text}' is not a positive fraction or percentage; write e.g. '10%', "
            "'10 %' or '0.1'."
        )
    return value


def pick_reference(text: str, labels) -> int:
    """--reference: a lot number counted from 1, or a lot name -> index from 0."""
    from rheofit.errors import ParameterError, choice_message

    if text in labels:
        return labels.index(text)
    if text.strip().isdigit() and 1 <= int(text) <= len(labels):
        return int(text) - 1
    if text.strip().isdigit():
        raise ParameterError(
            f"--reference {text} is not a lot: give a number from 1 to {len(labels)} "
            f"(in the order the lots were read) or a lot name."
        )
    raise ParameterError(choice_message("lot", text, labels))


def read_lots(files, console) -> list:
    """Every curve of every file, in order (each curve is a lot), with progress."""
    from rich.progress import Progress

    from rheofit.ingest import read_flow_curves

    curves = []
    with Progress(console=console, transient=True) as bar:
        task = bar.add_task("reading", total=len(files))
        for path in files:
            bar.update(task, description=f"reading {Path(path).name}")
            curves += read_flow_curves(path)
            bar.advance(task)
    return curves


def run_comparison(curves, console, **options):
    """rheofit.compare with a progress bar over its steps."""
    from rich.progress import Progress

    from rheofit.lots import compare

    steps = len(curves) * (2 if options.get("geometry") is not None else 1) + 1
    with Progress(console=console, transient=True) as bar:
        task = bar.add_task("comparing", total=steps)

        def step(message):
            bar.update(task, description=message)
            bar.advance(task)

        return compare(curves, progress=step, **options)


# --- rendering -----------------------------------------------------------------------------------

def _percent(value) -> str:
    return "—" if value is None or value != value else f"{100 * value:+.1f} %"


def _short_interval(ci) -> str:
    """'low–high' with 3 significant digits, 'open' for an open end."""
    from rheofit.report.console import number

    return "–".join("open" if v is None else number(v, 3) for v in ci)


def _range_text(low, high, kind: str) -> str:
    """'923.4–949.4 Pa' (the unit once when both ends share it)."""
    from rheofit.report.console import shown

    left, right = shown(low, kind), shown(high, kind)
    if left.split(" ")[-1] == right.split(" ")[-1] and " " in left:
        return f"{left.rsplit(' ', 1)[0]}–{right}"
    return f"{left} – {right}"


def _lot_column(table, comparison) -> None:
    width = min(max(len(label) for label in comparison.lots), 10)
    table.add_column("lot", overflow="fold", min_width=width)


def parameter_table(comparison):
    """Rich table: one row per lot, each parameter with its 95 % interval below it."""
    from rich.table import Table

    from rheofit.report.console import number

    declaration = comparison.fits[0].declaration
    table = Table(title=f"Parameters of the {comparison.model} model (SI, 95 % intervals)",
                  caption="* reference lot")
    table.add_column("#", justify="right")
    _lot_column(table, comparison)
    for spec in declaration.parameters:
        table.add_column(f"{spec.name} [{spec.unit}]", justify="right", overflow="fold")
    for i, row in enumerate(comparison.table.to_dict(orient="records")):
        fit = comparison.fits[i]
        cells = [f"{number(fit.params[s.name].value, 4)}\n{_short_interval(fit.params[s.name].ci95)}"
                 for s in declaration.parameters]
        table.add_row(str(i + 1) + ("*" if i == comparison.reference else ""), row["lot"], *cells)
    return table


def lots_table(comparison):
    """Rich table: one row per lot, the operating value with its interval and both criteria."""
    from rich.table import Table
    from rich.text import Text

    from rheofit.report.console import shown

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
        cells = [str(i + 1) + ("*" if i == comparison.reference else ""), row["lot"]]
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
    from rheofit.report.console import flag_lines, number

    low, high = comparison.shared_range
    head = Text(f"\n{len(comparison.lots)} lots; reference '{comparison.lots[comparison.reference]}'; "
                f"model {comparison.model} ({comparison.model_choice}); shared shear-rate range "
                f"{number(low)} to {number(high)} 1/s", style="bold")
    if comparison.operating_point:
        (given, value), = comparison.operating_point.items()
        from rheofit.report.console import shown

        what = shown(value, "flow_rate" if given == "flow_rate" else "pressure")
        head.append(f"\noperating point: {given.replace('_', ' ')} {what} in a {comparison.geometry.describe()}",
                    style="bold")
    verdicts = Text("\nVerdicts:\n", style="bold")
    for row in comparison.table.to_dict(orient="records"):
        style = "green" if row["within_tolerance"] else "red"
        verdicts.append(f"  {row['lot']}: ", style="bold")
        verdicts.append(f"{row['verdict']}\n", style=style)
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


def _write(out: Path, comparison, force: bool) -> None:
    from rheofit.output import write_atomic

    if out.suffix.lower() == ".csv":
        write_atomic(out, comparison.table.to_csv(index=False), force=force)
    else:
        write_atomic(out, json.dumps(comparison.to_dict(), indent=2) + "\n", force=force)


# --- the command -------------------------------------------------------------------------------

@user_errors
def compare_command(
    files: list[Path] = typer.Argument(..., help="Sweeps of the lots (CSV); every curve of every file is one lot, in order."),
    diameter: Optional[str] = DIAMETER,
    gap: Optional[str] = GAP,
    width: Optional[str] = WIDTH,
    length: Optional[str] = LENGTH,
    flow_rate: Optional[str] = FLOW_RATE,
    pressure_drop: Optional[str] = PRESSURE_DROP,
    tolerance: str = typer.Option("10%", "--tolerance", "-t", help="Allowed relative difference from the reference lot: '10%', '10 %' or '0.1'."),
    model: Optional[str] = typer.Option(None, "--model", "-m", help="One model for every lot (default: the best by AICc summed over the lots)."),
    reference: str = typer.Option("1", "--reference", "-r", help="Reference lot: its number from 1 in the order read, or its name."),
    as_json: bool = typer.Option(False, "--json", help="Print the comparison as JSON (SI units)."),
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Save the comparison: JSON, or the lot table when the name ends in .csv."),
    force: bool = typer.Option(False, "--force", help="Overwrite --out if it exists."),
):
    """Compare lots: one model, parameters and the operating point against a reference lot, a same-curve test."""
    from rich.console import Console

    from rheofit.cli import make_geometry, operating_point
    from rheofit.lots import lot_labels
    from rheofit.errors import OutputExistsError, ParameterError
    from rheofit.models import get_model

    if out is not None and out.exists() and not force:
        raise OutputExistsError(f"Output file '{out}' already exists; choose another name or pass --force to overwrite it.")
    fraction = parse_tolerance(tolerance)
    model = None if model is None else get_model(model).name
    channel = (diameter, gap, width, length, flow_rate, pressure_drop)
    if all(option is None for option in channel):  # the curves alone are compared
        geometry, point = None, {}
    else:
        geometry = make_geometry(diameter, gap, width, length)
        point = operating_point(flow_rate, pressure_drop)
    status = Console(stderr=True)
    curves = read_lots(files, status)
    if len(curves) < 2:
        raise ParameterError(f"A comparison needs at least two lots; the file(s) given hold {len(curves)} curve(s).")
    index = pick_reference(reference, list(lot_labels(curves)))
    comparison = run_comparison(curves, status, geometry=geometry, tolerance=fraction, model=model,
                                reference=index, **point)
    if as_json:
        if out is None:
            sys.stdout.write(json.dumps(comparison.to_dict(), indent=2) + "\n")
            return
    else:
        Console().print(comparison_block(comparison))
    if out is not None:
        _write(out, comparison, force)
        status.print(f"saved {out}")
