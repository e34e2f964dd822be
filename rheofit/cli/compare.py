"""The ``rheofit compare`` command: lots side by side at one operating point.

Thin: parse the options, call :func:`rheofit.lots.compare`, print what
:mod:`rheofit.report.console_compare` renders.
"""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import import_keywords, make_geometry, operating_point, quantities, read_curves, user_errors
from rheofit.cli.options import COLUMN, CURVE, DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, SEGMENT, UNIT, WIDTH


def pick_reference(text: str, labels) -> int:
    """--reference: a lot number counted from 1, or a lot name -> index from 0."""
    from rheofit.errors import ParameterError, choice_message
    from rheofit.units import counting_number

    if text in labels:
        return labels.index(text)
    number = counting_number(text)
    if number is not None and 1 <= number <= len(labels):
        return number - 1
    if number is not None:
        raise ParameterError(
            f"--reference {text} is not a lot: give a number from 1 to {len(labels)} "
            f"(in the order the lots were read) or a lot name."
        )
    raise ParameterError(choice_message("lot", text, labels))


def read_lots(files, console, keywords: dict) -> list:
    """Every curve of every file (as ``keywords`` ask), in order (each curve is a lot), with progress."""
    from rich.progress import Progress

    from rheofit.report.display import markup_safe

    curves = []
    with Progress(console=console, transient=True) as bar:
        task = bar.add_task("reading", total=len(files))
        for path in files:
            bar.update(task, description=f"reading {markup_safe(Path(path).name)}")
            curves += read_curves(path, keywords)
            bar.advance(task)
    return curves


def run_comparison(curves, console, **options):
    """rheofit.compare with a progress bar over its steps."""
    from rich.progress import Progress

    from rheofit.lots import compare
    from rheofit.report.display import markup_safe

    per_lot = 2 + (options.get("geometry") is not None)  # rank (a given model is judged too), fit, predict
    steps = len(curves) * per_lot + 1
    with Progress(console=console, transient=True) as bar:
        task = bar.add_task("comparing", total=steps)

        def step(message):
            bar.update(task, description=markup_safe(message))
            bar.advance(task)

        return compare(curves, progress=step, **options)


def _write(out: Path, comparison, force: bool, inputs) -> None:
    from rheofit.output import csv_text, strict_json, write_atomic

    if out.suffix.lower() == ".csv":
        write_atomic(out, csv_text(comparison.table), force=force, inputs=inputs)
    else:
        write_atomic(out, strict_json(comparison.to_dict(), indent=2) + "\n", force=force, inputs=inputs)


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
    tolerance: str = typer.Option("10%", "--tolerance", "-t", help="Allowed relative difference from the reference lot: a percentage ('10%', '10 %') or a fraction below 1 ('0.1'); a bare 10 is refused."),
    model: Optional[str] = typer.Option(None, "--model", "-m", help="One model for every lot (default: the best by AICc summed over the lots)."),
    reference: str = typer.Option("1", "--reference", "-r", help="Reference lot: its number from 1 in the order read, or its name."),
    as_json: bool = typer.Option(False, "--json", help="Print the comparison as JSON (SI units)."),
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Save the comparison: JSON, or the lot table when the name ends in .csv."),
    force: bool = typer.Option(False, "--force", help="Overwrite --out if it exists."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
    curve: Optional[str] = CURVE,
    segment: str = SEGMENT,
):
    """Compare lots: one model, parameters and the operating point against a reference lot, a same-curve test."""
    from rich.console import Console

    from rheofit.report.console_compare import comparison_block
    from rheofit.lots import lot_labels
    from rheofit.errors import ParameterError
    from rheofit.output import check_target
    from rheofit.report.display import markup_safe
    from rheofit.units import parse_tolerance
    from rheofit.models import get_model

    typed = quantities(diameter=diameter, gap=gap, width=width, length=length, flow_rate=flow_rate,
                       pressure_drop=pressure_drop)
    keywords = import_keywords(column, unit, curve, segment)
    check_target(out, force=force, inputs=files)
    fraction = parse_tolerance(tolerance, "--tolerance")
    model = None if model is None else get_model(model).name
    if all(value is None for value in typed.values()):  # the curves alone are compared
        geometry, point = None, {}
    else:
        geometry = make_geometry(typed["diameter"], typed["gap"], typed["width"], typed["length"])
        point = operating_point(typed["flow_rate"], typed["pressure_drop"])
    status = Console(stderr=True)
    curves = read_lots(files, status, keywords)
    if len(curves) < 2:
        raise ParameterError(f"A comparison needs at least two lots; the file(s) given hold {len(curves)} curve(s).")
    index = pick_reference(reference, list(lot_labels(curves)))
    comparison = run_comparison(curves, status, geometry=geometry, tolerance=fraction, model=model,
                                reference=index, **point)
    if as_json:
        if out is None:
            from rheofit.output import strict_json

            sys.stdout.write(strict_json(comparison.to_dict(), indent=2) + "\n")
            return
    else:
        Console().print(comparison_block(comparison))
    if out is not None:
        _write(out, comparison, force, files)
        status.print(f"saved {markup_safe(out)}")
