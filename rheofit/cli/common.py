"""What every command shares: one-line user errors, the console, JSON output, reading sources.

User errors end in one sentence on stderr and exit code 2, never a traceback.
Heavy libraries are imported inside the functions so that ``--help`` is fast.
"""

from __future__ import annotations

import functools
import json
import sys
from pathlib import Path
from typing import Optional

import typer


def console(stderr: bool = False):
    """A rich console on stdout (results) or stderr (progress, errors)."""
    from rich.console import Console

    return Console(stderr=stderr, soft_wrap=stderr)


def error_line(message: str) -> None:
    """Print one error sentence on stderr (literally: no markup) and exit with code 2."""
    from rich.markup import escape

    console(stderr=True).print(f"[bold red]error:[/] {escape(message)}", highlight=False)
    raise typer.Exit(2)


def user_errors(command):
    """Turn RheofitError (and unreadable paths) into one line on stderr, exit 2."""

    @functools.wraps(command)
    def wrapper(*args, **kwargs):
        from rheofit.errors import RheofitError

        try:
            return command(*args, **kwargs)
        except RheofitError as exc:
            error_line(str(exc))
        except OSError as exc:  # a path the system refuses: say which and why, in one line
            error_line(f"cannot use '{exc.filename}': {exc.strerror or exc}.")

    return wrapper


def emit_json(document: dict, out: Optional[Path], force: bool) -> None:
    from rheofit.output import write_atomic

    text = json.dumps(document, indent=2)
    if out is not None:
        write_atomic(out, text + "\n", force=force)
        console(stderr=True).print(f"saved {out}")
    else:
        sys.stdout.write(text + "\n")


def read_overrides(columns: Optional[list[str]], units: Optional[list[str]]) -> dict:
    """--column/--unit 'role=value' pairs -> importer keywords (viscosity_unit=..., ...)."""
    from rheofit.errors import ParameterError, choice_message
    from rheofit.ingest import ROLES

    overrides = {}
    for option, suffix, pairs in (("--column", "column", columns), ("--unit", "unit", units)):
        for pair in pairs or ():
            role, found, value = pair.partition("=")
            role = role.strip().replace("-", "_").replace(" ", "_")
            if not found or not value.strip():
                raise ParameterError(f"{option} '{pair}' should read ROLE=VALUE, e.g. {option} viscosity=...")
            if role not in ROLES:
                raise ParameterError(choice_message(f"{option} role", role, ROLES))
            overrides[f"{role}_{suffix}"] = value.strip()
    return overrides




def load_source(source: Path, model: Optional[str], curve: Optional[str] = None,
                overrides: Optional[dict] = None):
    """A FitResult from a saved fit (JSON) or from fitting a data file on the spot.

    A model given by name is judged against the others (its Akaike weight and
    rank), and flagged ``forced_model`` when the data reject it."""
    from rheofit.fitting.saved import is_saved_fit, load_fit

    from rheofit.fitting.support import choose, forced

    if is_saved_fit(source):
        result = load_fit(source, model=model, curve=curve)
        return forced(result) if model else result
    from rheofit.fitting import fit_all
    from rheofit.ingest import read_flow_curve

    pick = int(curve) if curve and curve.isdigit() else curve
    curve = read_flow_curve(source, curve=pick, **(overrides or {}))
    return choose(fit_all(curve), model)  # every model ranked: a chosen one carries its weight


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
