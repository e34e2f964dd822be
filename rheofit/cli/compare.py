"""The ``rheofit compare`` command: lots side by side at one operating point.

Thin: parse the options, call :func:`rheofit.lots.compare`, print what
:mod:`rheofit.report.console_compare` renders.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import make_geometry, operating_point, user_errors
from rheofit.cli.options import DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, WIDTH


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

    per_lot = 1 + (options.get("model") is None) + (options.get("geometry") is not None)
    steps = len(curves) * per_lot + 1
    with Progress(console=console, transient=True) as bar:
        task = bar.add_task("comparing", total=steps)

        def step(message):
            bar.update(task, description=message)
            bar.advance(task)

        return compare(curves, progress=step, **options)


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

    from rheofit.report.console_compare import comparison_block
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
