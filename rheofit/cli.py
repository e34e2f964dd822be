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

from rheofit.cli_options import DENSITY, DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, WIDTH

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Fit flow curves of non-Newtonian samples and predict how they flow in tubes and slits.",
)


def _console(stderr: bool = False):
    from rich.console import Console

    return Console(stderr=stderr, soft_wrap=stderr)


def _error_line(message: str) -> None:
    """Print one error sentence on stderr (literally: no markup) and exit with code 2."""
    from rich.markup import escape

    _console(stderr=True).print(f"[bold red]error:[/] {escape(message)}", highlight=False)
    raise typer.Exit(2)


def user_errors(command):
    """Turn RheofitError (and unreadable paths) into one line on stderr, exit 2."""

    @functools.wraps(command)
    def wrapper(*args, **kwargs):
        from rheofit.errors import RheofitError

        try:
            return command(*args, **kwargs)
        except RheofitError as exc:
            _error_line(str(exc))
        except OSError as exc:  # a path the system refuses: say which and why, in one line
            _error_line(f"cannot use '{exc.filename}': {exc.strerror or exc}.")

    return wrapper


def _emit_json(document: dict, out: Optional[Path], force: bool) -> None:
    from rheofit.output import write_atomic

    text = json.dumps(document, indent=2)
    if out is not None:
        write_atomic(out, text + "\n", force=force)
        _console(stderr=True).print(f"saved {out}")
    else:
        sys.stdout.write(text + "\n")


_ROLES = ("shear_rate", "viscosity", "stress", "temperature")
_COLUMN_HELP = "Which column holds a quantity, as ROLE=NAME (e.g. 'viscosity=Eta app'); repeatable."
_UNIT_HELP = "The unit of a column, as ROLE=UNIT (e.g. 'viscosity=mPa*s'); repeatable. Roles: shear_rate, viscosity, stress, temperature."


def read_overrides(columns: Optional[list[str]], units: Optional[list[str]]) -> dict:
    """--column/--unit 'role=value' pairs -> importer keywords (viscosity_unit=..., ...)."""
    from rheofit.errors import ParameterError, choice_message

    overrides = {}
    for option, suffix, pairs in (("--column", "column", columns), ("--unit", "unit", units)):
        for pair in pairs or ():
            role, found, value = pair.partition("=")
            role = role.strip().replace("-", "_").replace(" ", "_")
            if not found or not value.strip():
                raise ParameterError(f"{option} '{pair}' should read ROLE=VALUE, e.g. {option} viscosity=...")
            if role not in _ROLES:
                raise ParameterError(choice_message(f"{option} role", role, _ROLES))
            overrides[f"{role}_{suffix}"] = value.strip()
    return overrides


def fit_files(files, model: str, overrides: Optional[dict] = None):
    """Read every curve of every file and fit it: [(curve, [FitResult best first])]."""
    from rheofit.fitting import fit, fit_all
    from rheofit.ingest import read_flow_curves
    from rheofit.models import get_model

    chosen = None if model == "all" else get_model(model).name
    groups = []
    with _console(stderr=True).status("reading") as status:  # shown on a terminal only
        for path in files:
            for curve in read_flow_curves(path, **(overrides or {})):
                status.update(f"fitting {curve.name} ({len(groups) + 1} so far)")
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
    column: Optional[list[str]] = typer.Option(None, "--column", help=_COLUMN_HELP),
    unit: Optional[list[str]] = typer.Option(None, "--unit", help=_UNIT_HELP),
):
    """Fit viscosity models to flow curves, with 95 % intervals and a ranking."""
    from rheofit.saved import fits_document

    if out is not None and out.exists() and not force:
        from rheofit.errors import OutputExistsError

        raise OutputExistsError(f"Output file '{out}' already exists; choose another name or pass --force to overwrite it.")
    groups = fit_files(files, model, read_overrides(column, unit))
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


def load_source(source: Path, model: Optional[str], curve: Optional[str] = None,
                overrides: Optional[dict] = None):
    """A FitResult from a saved fit (JSON) or from fitting a data file on the spot."""
    from rheofit.saved import is_saved_fit, load_fit

    if is_saved_fit(source):
        return load_fit(source, model=model, curve=curve)
    from rheofit.fitting import fit, fit_all
    from rheofit.ingest import read_flow_curve

    pick = int(curve) if curve and curve.isdigit() else curve
    curve = read_flow_curve(source, curve=pick, **(overrides or {}))
    return fit(curve, model) if model else fit_all(curve)[0]


def make_geometry(diameter, gap, width, length):
    """Tube or Slit from the CLI's text options (units parsed by the geometry)."""
    from rheofit.errors import GeometryError
    from rheofit.flow import Slit, Tube

    if length is None:
        raise GeometryError("Give the channel length with --length (e.g. --length '30 cm').")
    if diameter is not None and (gap is None and width is None):
        return Tube(diameter, length)
    if diameter is None and gap is not None and width is not None:
        return Slit(gap, width, length)
    raise GeometryError(
        "Give either --diameter (a tube) or both --gap and --width (a slit), not a mix."
    )


def operating_point(flow_rate, pressure_drop) -> dict:
    """{'flow_rate': SI} or {'pressure_drop': SI} from exactly one option."""
    from rheofit.errors import GeometryError
    from rheofit.units import parse_quantity

    if (flow_rate is None) == (pressure_drop is None):
        raise GeometryError("Give exactly one of --flow-rate (e.g. '10 uL/min') or --pressure-drop (e.g. '25 kPa').")
    if flow_rate is not None:
        return {"flow_rate": parse_quantity(flow_rate, "flow_rate")}
    return {"pressure_drop": parse_quantity(pressure_drop, "pressure")}


@app.command("flow")
@user_errors
def flow_command(
    source: Path = typer.Argument(..., help="A sweep (CSV, fitted on the spot) or a saved fit from `rheofit fit --out`."),
    diameter: Optional[str] = DIAMETER,
    gap: Optional[str] = GAP,
    width: Optional[str] = WIDTH,
    length: Optional[str] = LENGTH,
    flow_rate: Optional[str] = FLOW_RATE,
    pressure_drop: Optional[str] = PRESSURE_DROP,
    model: Optional[str] = typer.Option(None, "--model", "-m", help="Model to use (default: the best by AICc)."),
    curve: Optional[str] = typer.Option(None, "--curve", help="Which curve of a file holding several (number from 1, or label such as '37 °C')."),
    density: Optional[str] = DENSITY,
    newtonian_viscosity: Optional[str] = typer.Option(None, "--newtonian-viscosity", help="Reference viscosity for the Newtonian comparison, e.g. '50 mPa s' (default: the model's viscosity at the apparent wall shear rate)."),
    as_json: bool = typer.Option(False, "--json", help="Print the prediction as JSON (SI units)."),
    column: Optional[list[str]] = typer.Option(None, "--column", help=_COLUMN_HELP),
    unit: Optional[list[str]] = typer.Option(None, "--unit", help=_UNIT_HELP),
):
    """Predict pressure drop or flow rate, wall shear and velocity profile in a tube or slit."""
    from rheofit.flow import predict
    from rheofit.units import parse_quantity

    if model is not None:
        from rheofit.models import get_model

        model = get_model(model).name
    geometry = make_geometry(diameter, gap, width, length)
    point = operating_point(flow_rate, pressure_drop)
    reference = None if newtonian_viscosity is None else parse_quantity(newtonian_viscosity, "viscosity")
    if density is not None:
        point["density"] = parse_quantity(density, "density")
    with _console(stderr=True).status(f"fitting {source.name}"):  # shown on a terminal only
        result = load_source(source, model, curve, read_overrides(column, unit))
    with _console(stderr=True).status("solving the flow and its 95 % interval"):
        prediction = predict(result, geometry, newtonian_viscosity=reference, **point)
    if as_json:
        sys.stdout.write(json.dumps(prediction.to_dict(), indent=2) + "\n")
        return
    from rheofit.report.console import prediction_block

    _console().print(prediction_block(result, geometry, prediction))


def _register_more_commands() -> None:
    """Commands that live in their own modules (each imports only typer at the top)."""
    from rheofit.cli_compare import compare_command
    from rheofit.cli_report import demo_command, report_command

    app.command("compare")(compare_command)
    app.command("report")(report_command)
    app.command("demo")(demo_command)


_register_more_commands()
