"""The ``rheofit`` command.  Thin: parse options, call the API, print.

User errors end in one sentence on stderr and exit code 2, never a traceback.
Heavy libraries are imported inside the commands so that ``--help`` is fast.
"""

from __future__ import annotations

import functools
import json
import sys
from pathlib import Path
from typing import Optional

import typer

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Fit flow curves of non-Newtonian samples and predict how they flow in tubes and slits.",
)


def _console(stderr: bool = False):
    from rich.console import Console

    return Console(stderr=stderr, soft_wrap=False)


def user_errors(command):
    """Turn RheofitError (and unreadable paths) into one line on stderr, exit 2."""

    @functools.wraps(command)
    def wrapper(*args, **kwargs):
        from rheofit.errors import RheofitError

        try:
            return command(*args, **kwargs)
        except RheofitError as exc:
            _console(stderr=True).print(f"[bold red]error:[/] {exc}", highlight=False)
            raise typer.Exit(2) from None
        except (IsADirectoryError, PermissionError) as exc:
            _console(stderr=True).print(f"[bold red]error:[/] cannot read '{exc.filename}': {exc.strerror}.")
            raise typer.Exit(2) from None

    return wrapper


def _emit_json(document: dict, out: Optional[Path], force: bool) -> None:
    from rheofit.output import write_atomic

    text = json.dumps(document, indent=2)
    if out is not None:
        write_atomic(out, text + "\n", force=force)
        _console(stderr=True).print(f"saved {out}")
    else:
        sys.stdout.write(text + "\n")


def fit_files(files, model: str):
    """Read every curve of every file and fit it: [(curve, [FitResult best first])]."""
    from rheofit.fitting import fit, fit_all
    from rheofit.ingest import read_flow_curves
    from rheofit.models import get_model

    chosen = None if model == "all" else get_model(model).name
    groups = []
    for path in files:
        for curve in read_flow_curves(path):
            results = fit_all(curve) if chosen is None else [fit(curve, chosen)]
            groups.append((curve, results))
    return groups


@app.command("fit")
@user_errors
def fit_command(
    files: list[Path] = typer.Argument(..., help="CSV export(s) of a shear-rate sweep."),
    model: str = typer.Option("all", "--model", "-m", help="A model name (see `rheofit models`) or 'all' to rank every model."),
    as_json: bool = typer.Option(False, "--json", help="Print the fits as JSON instead of tables."),
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Save the fits as JSON (read back by `rheofit flow`)."),
    force: bool = typer.Option(False, "--force", help="Overwrite --out if it exists."),
):
    """Fit viscosity models to flow curves, with 95 % intervals and a ranking."""
    from rheofit.saved import fits_document

    if out is not None and out.exists() and not force:
        from rheofit.errors import OutputExistsError

        raise OutputExistsError(f"Output file '{out}' already exists; choose another name or pass --force to overwrite it.")
    groups = fit_files(files, model)
    document = fits_document(groups)
    if as_json:
        _emit_json(document, out, force)
        return
    from rheofit.report.console import curve_block, summary_table

    console = _console()
    for curve, results in groups:
        console.print(curve_block(curve, results, results[0]))
    if len(groups) > 1:
        console.print(summary_table(groups))
    if out is not None:
        _emit_json(document, out, force)


@app.command("models")
def models_command():
    """List the viscosity models with their equation, parameters and source."""
    from rheofit.report.console import models_list

    _console().print(models_list())


def main() -> None:  # pragma: no cover - console entry
    app()
