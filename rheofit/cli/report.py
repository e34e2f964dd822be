"""The ``report`` command: one self-contained HTML report.

Thin: parse the options, call :mod:`rheofit.jobs.analysis` and :mod:`rheofit.report.html`,
print.  Progress goes to stderr, results to stdout.  Heavy libraries load
inside the commands so that ``rheofit --help`` stays fast.
"""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import import_keywords, make_geometry, operating_point, quantities, read_curves, user_errors
from rheofit.cli.options import (COLUMN, CURVE, DENSITY, DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, SEGMENT,
                                 UNIT, WIDTH)


def _stdout():
    from rich.console import Console

    return Console()


def _read_curves(files, keywords: dict):
    """Every curve of every file, as ``keywords`` ask (a saved-fit JSON is refused: the report shows the data)."""
    from rheofit.errors import InputFileError
    from rheofit.fitting.saved import is_saved_fit

    for path in files:
        if is_saved_fit(path):
            raise InputFileError(
                f"'{path}' is a saved fit; the report needs the measured sweep it was fitted from "
                "(the CSV export), to show the data and the residuals."
            )
    return [curve for path in files for curve in read_curves(path, keywords)]


def _case(diameter, gap, width, length, flow_rate, pressure_drop):
    """The operating case from the flow options (SI), or None when none of them is given."""
    from rheofit.jobs.analysis import OperatingCase
    from rheofit.report.display import shown

    if all(v is None for v in (diameter, gap, width, length, flow_rate, pressure_drop)):
        return None
    geometry = make_geometry(diameter, gap, width, length)
    point = operating_point(flow_rate, pressure_drop)
    kind, value = next(iter(point.items()))
    label = f"{geometry.kind}, {shown(value, 'flow_rate' if kind == 'flow_rate' else 'pressure')}"
    return OperatingCase(label, geometry, **point)


@user_errors
def report_command(
    files: list[Path] = typer.Argument(..., help="CSV export(s) of shear-rate sweeps; several curves are compared as lots (the first is the reference)."),
    out: Path = typer.Option(..., "--out", "-o", help="The HTML report to write, e.g. report.html."),
    diameter: Optional[str] = DIAMETER,
    gap: Optional[str] = GAP,
    width: Optional[str] = WIDTH,
    length: Optional[str] = LENGTH,
    flow_rate: Optional[str] = FLOW_RATE,
    pressure_drop: Optional[str] = PRESSURE_DROP,
    model: Optional[str] = typer.Option(None, "--model", "-m", help="Model for the predictions and the comparison (default: each sample's best by AICc)."),
    density: Optional[str] = DENSITY,
    figures: Optional[Path] = typer.Option(None, "--figures", help="Also write every figure as PNG and SVG into this folder."),
    force: bool = typer.Option(False, "--force", help="Overwrite the report (and figure files) if they exist."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
    curve: Optional[str] = CURVE,
    segment: str = SEGMENT,
):
    """Write one self-contained HTML report: fits, flags, flow prediction, lot comparison, figures."""
    from rheofit.models import get_model
    from rheofit.jobs.analysis import analyse
    from rheofit.output import check_target, make_folder
    from rheofit.report.html import write_report
    from rheofit.cli.progress import rich_steps
    from rheofit.report.display import visible

    typed = quantities(diameter=diameter, gap=gap, width=width, length=length, flow_rate=flow_rate,
                       pressure_drop=pressure_drop, density=density)
    keywords = import_keywords(column, unit, curve, segment)
    check_target(out, force=force, inputs=files)
    if figures is not None:
        make_folder(figures)
    model = None if model is None else get_model(model).name
    rho = typed.pop("density")
    case = _case(**typed)
    curves = _read_curves(files, keywords)  # before the progress display, so an error stands alone
    with rich_steps() as steps:
        analysis = analyse(curves, model=model, cases=[case] if case else [], density=rho, steps=steps)
        path = write_report(out, analysis, figures_dir=figures, force=force, steps=steps,
                            inputs=files)
    for line in analysis.warnings():  # before anything else: the report's numbers rest on these
        _stdout().print(f"WARNING: {visible(line)}", style="bold red", highlight=False, markup=False,
                        soft_wrap=True)
    where = f"; figures in {figures}" if figures is not None else ""
    _stdout().print(f"Report written to {visible(path)} ({len(analysis.samples)} sample(s){visible(where)}).",
                    highlight=False, markup=False)
    notes = [f"  • {visible(c.name)}: {visible(flag.message)}" for c in curves for flag in c.flags]
    if notes:  # what the importer noticed is worth a word before the report is opened
        _stdout().print("Flags from reading the files (also in the report):\n" + "\n".join(notes),
                        highlight=False, markup=False)
