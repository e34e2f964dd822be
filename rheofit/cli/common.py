"""What every command shares: one-line user errors, the console, JSON output, reading sources.

User errors end in one sentence on stderr and exit code 2, never a traceback.
Heavy libraries are imported inside the functions so that ``--help`` is fast.
"""

from __future__ import annotations

import contextlib
import functools
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
    from rheofit.report.display import markup_safe

    console(stderr=True).print(f"[bold red]error:[/] {markup_safe(message)}", highlight=False)
    raise typer.Exit(2)


@contextlib.contextmanager
def expected_numeric_warnings_silenced():
    """numpy floating-point and lmfit warnings kept off the user's stderr.

    Overflow, nan and division by zero at the edges (a 1e-320 m gap, a fit
    probing its bounds) are expected there: the results are checked for
    finiteness by the code that uses them and refused or flagged in words.
    """
    import warnings

    import numpy as np

    with np.errstate(all="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        warnings.filterwarnings("ignore", module=r"lmfit(\..*)?$")
        yield


def user_errors(command):
    """Turn RheofitError (and unreadable paths) into one line on stderr, exit 2."""

    @functools.wraps(command)
    def wrapper(*args, **kwargs):
        from rheofit.errors import RheofitError, command_line_spelling

        try:
            with command_line_spelling(), expected_numeric_warnings_silenced():
                return command(*args, **kwargs)  # messages name --column viscosity=2, not viscosity_column=2
        except RheofitError as exc:
            error_line(str(exc))
        except OSError as exc:  # a path the system refuses: say which and why, in one line
            error_line(f"cannot use '{exc.filename}': {exc.strerror or exc}.")

    return wrapper


def emit_json(document: dict, out: Optional[Path], force: bool, inputs=()) -> None:
    from rheofit.output import strict_json, write_atomic

    text = strict_json(document, indent=2)
    if out is not None:
        write_atomic(out, text + "\n", force=force, inputs=inputs)
        from rheofit.report.display import markup_safe

        console(stderr=True).print(f"saved {markup_safe(out)}")
    else:
        sys.stdout.write(text + "\n")


def quantities(**given) -> dict:
    """Typed quantity options (``flow_rate="10 uL/min"``) -> SI floats; None stays None.

    Each is parsed by :func:`rheofit.units.parse_typed` under its option's
    name (a unit is required, the value must be positive and finite), all of
    them before anything else is checked or read.
    """
    from rheofit.cli.options import QUANTITIES
    from rheofit.units import parse_typed

    parsed = {}
    for key, text in given.items():
        option = "--" + key.replace("_", "-")
        parsed[key] = None if text is None else parse_typed(text, QUANTITIES[option], option)
    return parsed


def import_keywords(columns: Optional[list[str]], units: Optional[list[str]], curve: Optional[str] = None,
            segment: str = "all") -> dict:
    """--column, --unit, --curve and --segment -> importer keywords (viscosity_unit=..., curve=...).

    ``--column ROLE=NUMBER`` names a column by its number counted from 1.
    """
    from rheofit.errors import ParameterError, choice_message
    from rheofit.ingest import ROLES
    from rheofit.ingest.sweep import check_segment

    keywords = {"segment": check_segment(segment)}
    for option, suffix, pairs in (("--column", "column", columns), ("--unit", "unit", units)):
        for pair in pairs or ():
            role, found, value = pair.partition("=")
            role, value = role.strip().replace("-", "_").replace(" ", "_"), value.strip()
            if not found or not value:
                raise ParameterError(f"{option} '{pair}' should read ROLE=VALUE, e.g. {option} viscosity=...")
            if role not in ROLES:
                raise ParameterError(choice_message(f"{option} role", role, ROLES))
            keywords[f"{role}_{suffix}"] = _number_or_text(value) if suffix == "column" else value
    if curve is not None:
        keywords["curve"] = _number_or_text(curve)
    return keywords


def _number_or_text(text: str):
    from rheofit.units import counting_number

    number = counting_number(text)
    return text if number is None else number


def read_curves(path, keywords: dict) -> list:
    """The curves of one data file as :func:`import_keywords` asks (the one ``--curve`` picks, if given)."""
    from rheofit.ingest import read_flow_curve, read_flow_curves

    keywords = dict(keywords)
    curve = keywords.pop("curve", None)
    if curve is None:
        return read_flow_curves(path, **keywords)
    return [read_flow_curve(path, curve=curve, **keywords)]


def load_source(source: Path, model: Optional[str], keywords: dict):
    """A FitResult from a saved fit (JSON) or from fitting a data file on the spot.

    A model given by name is judged against the others (its Akaike weight and
    rank), and flagged ``forced_model`` when the data reject it."""
    from rheofit.fitting.saved import looks_like_json, load_fit
    from rheofit.fitting.support import forced

    if looks_like_json(source):  # a saved fit, or broken JSON said so (never read as a CSV)
        given = [k for k, v in keywords.items() if k != "curve" and v not in (None, "all")]
        if given:
            from rheofit.errors import ParameterError

            raise ParameterError(
                f"'{source}' is a saved fit; --column, --unit and --segment apply to a data file, "
                "so give the sweep (CSV) or leave them out."
            )
        result = load_fit(source, model=model, curve=keywords.get("curve"))
        return forced(result) if model else result
    from rheofit.fitting import fit_all, fit_judged
    from rheofit.ingest import read_flow_curve

    keywords = dict(keywords)
    curve = read_flow_curve(source, curve=keywords.pop("curve", None), **keywords)
    return fit_judged(curve, model) if model else fit_all(curve)[0]  # a chosen model carries its weight


def best_instead(source: Path, result, keywords: dict):
    """The best model's fit when the data reject ``result``'s (a ``forced_model`` flag), else None.

    From a data file the best model is fitted again (point estimate only); from a
    saved fit it is read back when it was saved, otherwise None.
    """
    support = getattr(result, "support", None)
    if not result.flags_with("forced_model") or support is None or not support.best \
            or support.best == result.model:
        return None
    from rheofit.fitting.saved import looks_like_json

    if looks_like_json(source):
        from rheofit.errors import ModelNameError
        from rheofit.fitting.saved import load_fit

        try:
            return load_fit(source, model=support.best, curve=keywords.get("curve"))
        except ModelNameError:
            return None
    from rheofit.fitting import fit
    from rheofit.ingest import read_flow_curve

    keywords = dict(keywords)
    curve = read_flow_curve(source, curve=keywords.pop("curve", None), **keywords)
    return fit(curve, support.best, interval_method="wald")


def make_geometry(diameter, gap, width, length):
    """Tube or Slit from the CLI's channel options, already in SI (see :func:`quantities`)."""
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
    """{'flow_rate': SI} or {'pressure_drop': SI} from exactly one option (already in SI)."""
    from rheofit.errors import GeometryError

    if (flow_rate is None) == (pressure_drop is None):
        raise GeometryError("Give exactly one of --flow-rate (e.g. '10 uL/min') or --pressure-drop (e.g. '25 kPa').")
    return {"flow_rate": flow_rate} if flow_rate is not None else {"pressure_drop": pressure_drop}
