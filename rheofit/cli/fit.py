"""The ``fit`` command: fit viscosity models to flow curves, with 95 % intervals and a ranking."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import console, emit_json, import_keywords, read_curves, user_errors
from rheofit.cli.options import COLUMN, CURVE, SEGMENT, UNIT


def fit_files(files, model: str, overrides: Optional[dict] = None):
    """Read the curves of every file (as ``overrides`` ask, see import_keywords) and fit them:
    [(curve, [FitResult best first])]; a model given by name is judged against the others."""
    from rheofit.fitting import fit_all
    from rheofit.fitting.support import choose
    from rheofit.models import get_model
    from rheofit.report.display import markup_safe

    chosen = None if model == "all" else get_model(model).name
    groups = []
    with console(stderr=True).status("reading") as status:  # shown on a terminal only
        for path in files:
            for curve in read_curves(path, overrides or {}):
                status.update(f"fitting {markup_safe(curve.name)} ({len(groups) + 1} so far)")
                ranking = fit_all(curve)  # also for one model: its weight among the others
                results = ranking if chosen is None else [choose(ranking, chosen)]
                groups.append((curve, results))
    return groups


@user_errors
def fit_command(
    files: list[Path] = typer.Argument(..., help="CSV export(s) of a shear-rate sweep."),
    model: str = typer.Option("all", "--model", "-m", help="A model name (see `rheofit models`) or 'all' to rank every model."),
    as_json: bool = typer.Option(False, "--json", help="Print the fits as JSON instead of tables."),
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Save the fits as JSON (read back by `rheofit flow`)."),
    force: bool = typer.Option(False, "--force", help="Overwrite --out if it exists."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
    curve: Optional[str] = CURVE,
    segment: str = SEGMENT,
):
    """Fit viscosity models to flow curves, with 95 % intervals and a ranking."""
    from rheofit.fitting.saved import fits_document

    from rheofit.output import check_target

    check_target(out, force=force, inputs=files)
    groups = fit_files(files, model, import_keywords(column, unit, curve, segment))
    document = fits_document(groups)
    if as_json:
        emit_json(document, out, force, files)
        return
    from rheofit.report.console import curve_block, summary_table

    screen = console()
    for curve, results in groups:
        screen.print(curve_block(curve, results, results[0]))
    if len(groups) > 1:
        screen.print(summary_table(groups))
    if out is not None:
        emit_json(document, out, force, files)
