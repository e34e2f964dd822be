"""Saved fits: the JSON document ``rheofit fit --out`` writes and later commands read."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

from rheofit.errors import InputFileError, ModelNameError, spelled
from rheofit.units import counting_number

KIND = "rheofit-fits"
VERSION = 1


def fits_document(groups) -> dict:
    """JSON-able document for ``[(curve, [FitResult, ...]), ...]`` (fits best first; for a ranking
    also the models not fitted, with why)."""
    return {
        "kind": KIND,
        "version": VERSION,
        "curves": [
            {
                "name": curve.name,
                "source": curve.source,
                "n_points": len(curve),
                "shear_rate_range": list(curve.shear_rate_range),
                "flags": [flag.to_dict() for flag in curve.flags],
                "best": results[0].model if results else None,
                "fits": [result.to_dict() for result in results],
                "not_fitted": [{"model": model, "reason": reason}
                               for model, reason in getattr(results, "skipped", ())],
            }
            for curve, results in groups
        ],
    }


def looks_like_json(path) -> bool:
    """True when ``path`` ends in .json or its first non-blank byte is '{' or '['."""
    path = Path(path)
    if path.suffix.lower() == ".json":
        return True
    try:
        with path.open("rb") as handle:
            head = handle.read(4096).lstrip(b"\xef\xbb\xbf \t\r\n")
    except OSError:
        return False
    return head[:1] in (b"{", b"[")


def is_saved_fit(path) -> bool:
    """True when ``path`` looks like a saved-fit JSON document."""
    path = Path(path)
    if path.suffix.lower() != ".json":
        return False
    try:
        return json.loads(path.read_text(encoding="utf-8")).get("kind") == KIND
    except (OSError, ValueError, AttributeError, RecursionError):
        return False


def _document(path: Path) -> dict:
    """The saved-fit document in ``path``, fully validated, or InputFileError naming the file and key."""
    if not path.is_file():
        raise InputFileError(f"Saved fit '{path}' does not exist; check the path and the file name.")
    try:
        document = json.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise InputFileError(f"'{path}' is not UTF-8 text, so not a saved fit; "
                             f"make one with `rheofit fit DATA.csv --out {path.name}`.") from None
    except json.JSONDecodeError as exc:
        raise InputFileError(f"'{path}' is broken JSON at line {exc.lineno}, column {exc.colno} "
                             f"({exc.msg}); repair it or write it again with `rheofit fit --out`.") from None
    except RecursionError:
        raise InputFileError(f"'{path}' is nested too deeply to be a saved fit; "
                             "write it again with `rheofit fit --out`.") from None
    if not isinstance(document, dict) or document.get("kind") != KIND:
        raise InputFileError(
            f"'{path}' is not a saved rheofit fit; make one with `rheofit fit DATA.csv --out {path.name}`."
        )
    try:
        _check_document(document)
    except _Fault as fault:
        raise fault.error(path) from None
    return document


def _pick_curve(path: Path, curves: list, curve) -> dict:
    """The saved curve chosen by number (from 1) or name; the only one when ``curve`` is None."""
    names = [f"{i}: {c.get('name', '')}" for i, c in enumerate(curves, start=1)]
    if curve is None and len(curves) == 1:
        return curves[0]
    if curve is None:
        raise InputFileError(
            f"Saved fit '{path}' holds {len(curves)} curves ({', '.join(names)}); pick one with "
            f"{spelled('curve=N', '--curve N')}."
        )
    text = str(curve).strip()
    number = counting_number(text)
    if number is not None and 1 <= number <= len(curves):
        return curves[number - 1]
    for entry in curves:
        if str(entry.get("name", "")).strip().lower() == text.lower():
            return entry
    raise InputFileError(
        f"Saved fit '{path}' holds no curve '{text}'; its curves are {', '.join(names) or 'none'}."
    )


def load_fit(path, model: str | None = None, curve=None):
    """Read one FitResult back from a saved-fit file (the best one unless ``model``).

    ``curve`` picks a curve of a file holding several: its number counted
    from 1, or its name.
    """
    from rheofit.fitting.result import FitResult

    path = Path(path)
    curves = _document(path).get("curves") or []
    entry = _pick_curve(path, curves, curve)
    fits = entry.get("fits") or []
    label = entry.get("name", "") or "the curve"
    if not fits:
        raise InputFileError(f"Saved fit '{path}' holds no fitted model for {label}; fit it again with `rheofit fit`.")
    chosen = [i for i, f in enumerate(fits) if model is None and i == 0 or f["model"] == model]
    if chosen:
        where = f"curves[{next(i for i, c in enumerate(curves) if c is entry)}].fits[{chosen[0]}]"
        try:
            check_fit_dict(fits[chosen[0]], where)
        except _Fault as fault:
            raise fault.error(path) from None
        return _supported(FitResult.from_dict(fits[chosen[0]]), fits)
    raise ModelNameError(
        f"Model '{model}' was not saved in '{path.name}'; saved models: "
        f"{', '.join(f['model'] for f in fits)}. Fit it with `rheofit fit DATA.csv --model {model}`."
    )


def _supported(result, fits: list):
    """``result`` with its Akaike weight and rank; a fit saved without them (an older file)
    gets them from the AICc of the fits saved beside it."""
    from rheofit.fitting.support import supported

    if result.support is not None or len(fits) < 2:
        return result
    scores = {f.get("model"): f.get("aicc") for f in fits if isinstance(f, dict)}
    scores = {name: (math.inf if value is None else value) for name, value in scores.items()
              if isinstance(name, str) and (value is None or isinstance(value, (int, float)))}
    return supported(result, scores)


# --- validation on load -------------------------------------------------------

#: deepest nesting a saved fit needs (document > curves > fit > flags > data > ...) with room to spare
MAX_DEPTH = 24
#: relative tolerance of the covariance's symmetry and of its smallest eigenvalue  # common practice, no source
_COV_TOL = 1e-8


class _Fault(Exception):
    """One fault at ``key`` (e.g. ``curves[0].fits[1].params.n``): a phrase saying what is wrong."""

    def __init__(self, key: str, what: str):
        super().__init__(key, what)
        self.key, self.what = key, what

    def error(self, path) -> InputFileError:
        """The one sentence the user sees, naming the file and the key."""
        return InputFileError(f"Saved fit '{path}': {self.key} {self.what}; "
                              "repair it or write it again with `rheofit fit --out`.")


def _at(where: str, key: str) -> str:
    return f"{where}.{key}" if where else key


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _number(d: dict, key: str, where: str, *, optional: bool = True, finite: bool = True):
    value = d.get(key)
    if value is None and optional:
        return None
    if not _is_number(value):
        raise _Fault(_at(where, key), f"is {_shown(value)}, not a number")
    if finite and not math.isfinite(value):
        raise _Fault(_at(where, key), f"is {value}, not a finite number")
    return float(value)


def _typed(d: dict, key: str, where: str, kind, *, optional: bool = True):
    value = d.get(key)
    if value is None and optional:
        return None
    if not isinstance(value, kind) or (kind is int and isinstance(value, bool)):
        names = {str: "text", bool: "true or false", int: "a whole number", list: "a list",
                 dict: "a table ({...})"}
        raise _Fault(_at(where, key), f"is {_shown(value)}, not {names.get(kind, kind.__name__)}")
    return value


def _shown(value) -> str:
    text = json.dumps(value)[:40] if _depth(value) < MAX_DEPTH else "nested too deeply"
    return "missing" if value is None else text


def _depth(value, limit: int = MAX_DEPTH + 1) -> int:
    """Nesting depth of lists and dicts (stops counting at ``limit``)."""
    if limit <= 0 or not isinstance(value, (list, dict)):
        return 0
    items = value.values() if isinstance(value, dict) else value
    return 1 + max((_depth(v, limit - 1) for v in items), default=0)


def _check_numbers(values, where: str, length: int | None = None, *, nulls: bool = True) -> list:
    if not isinstance(values, list) or (length is not None and len(values) != length):
        size = f" of {length}" if length is not None else ""
        raise _Fault(where, f"is {_shown(values)}, not a list{size} of numbers")
    for i, v in enumerate(values):
        if v is None and nulls:
            continue
        if not _is_number(v) or not math.isfinite(v):
            raise _Fault(f"{where}[{i}]", f"is {_shown(v)}, not a finite number")
    return values


def _check_param(declaration, name: str, d, where: str) -> float:
    if not isinstance(d, dict):
        raise _Fault(where, f"is {_shown(d)}, not a table with a 'value'")
    value = _number(d, "value", where, optional=False)
    stderr = _number(d, "stderr", where)
    if stderr is not None and stderr < 0:
        raise _Fault(f"{where}.stderr", f"is {stderr:g}, below zero")
    ci = d.get("ci95")
    if ci is not None:
        _check_numbers(ci, f"{where}.ci95", 2)
    for key, kind in (("unit", str), ("method", str), ("note", str), ("resolved", bool)):
        _typed(d, key, where, kind)
    parameter = declaration.parameter(name)
    if not parameter.lower <= value <= parameter.upper:
        raise _Fault(f"{where}.value", f"= {value:g} is outside the range of {declaration.name}'s {name}, "
                     f"[{parameter.bound_text('lower')}, {parameter.bound_text('upper')}]")
    return value


def _check_covariance(declaration, values: dict, d, where: str) -> None:
    if d is None:
        return
    if not isinstance(d, dict):
        raise _Fault(where, f"is {_shown(d)}, not a table")
    names = list(declaration.parameter_names)
    k = len(names)
    if d.get("names") != names:
        raise _Fault(f"{where}.names", f"is {_shown(d.get('names'))}, not {json.dumps(names)}")
    logged = d.get("logged")
    if not isinstance(logged, list) or len(logged) != k or not all(isinstance(v, bool) for v in logged):
        raise _Fault(f"{where}.logged", f"is {_shown(logged)}, not a list of {k} true/false")
    center = _check_numbers(d.get("center"), f"{where}.center", k, nulls=False)
    for i, (name, lg) in enumerate(zip(names, logged)):
        back = math.exp(center[i]) if lg and center[i] < 709 else (center[i] if not lg else math.inf)
        if not math.isclose(back, values[name], rel_tol=1e-6, abs_tol=1e-300):
            raise _Fault(f"{where}.center[{i}]", f"does not match params.{name}.value ({values[name]:g})")
    matrix = d.get("matrix")
    if matrix is None:
        return
    if not isinstance(matrix, list) or len(matrix) != k:
        raise _Fault(f"{where}.matrix", f"is not a {k} x {k} list of rows")
    for i, row in enumerate(matrix):
        _check_numbers(row, f"{where}.matrix[{i}]", k, nulls=False)
    m = np.array(matrix, dtype=float)
    scale = float(np.max(np.abs(m))) or 1.0
    if not np.allclose(m, m.T, rtol=_COV_TOL, atol=_COV_TOL * scale):
        raise _Fault(f"{where}.matrix", "is not symmetric")
    if float(np.linalg.eigvalsh(m).min()) < -_COV_TOL * scale:
        raise _Fault(f"{where}.matrix", "has a negative eigenvalue (not a covariance)")


def _check_flags(flags, where: str) -> None:
    if flags is None:
        return
    if not isinstance(flags, list):
        raise _Fault(where, f"is {_shown(flags)}, not a list")
    for i, flag in enumerate(flags):
        at = f"{where}[{i}]"
        if not isinstance(flag, dict):
            raise _Fault(at, f"is {_shown(flag)}, not a table with 'code' and 'message'")
        _typed(flag, "code", at, str, optional=False)
        _typed(flag, "message", at, str, optional=False)
        _typed(flag, "data", at, dict)


def check_fit_dict(d, where: str = "fit") -> None:
    """Raise _Fault naming the first key of a saved fit (``FitResult.to_dict`` form) that is wrong."""
    from rheofit.errors import ModelNameError, ParameterError
    from rheofit.models import get_model

    if not isinstance(d, dict):
        raise _Fault(where, f"is {_shown(d)}, not a table")
    name = _typed(d, "model", where, str, optional=False)
    try:
        declaration = get_model(name)
    except ModelNameError as exc:
        raise _Fault(f"{where}.model", f"is unknown ({exc})") from None
    params = _typed(d, "params", where, dict, optional=False)
    values = {p: _check_param(declaration, p, params.get(p), f"{where}.params.{p}")
              for p in declaration.parameter_names}
    why = declaration.violation(values)
    if why:
        raise _Fault(f"{where}.params", f"breaks {declaration.name}'s constraint: {why}")
    for key in ("aic", "aicc", "bic", "rss_log", "rms_log_residual", "r_squared_log"):
        _number(d, key, where)
    for key in ("n_points", "n_params"):
        if (_typed(d, key, where, int) or 0) < 0:
            raise _Fault(_at(where, key), "is below zero")
    for key in ("name", "source", "title", "equation", "reference", "schema"):
        _typed(d, key, where, str)
    rng = d.get("shear_rate_range")
    if rng is not None:
        _check_numbers(rng, f"{where}.shear_rate_range", 2, nulls=False)
        if not 0 < rng[0] <= rng[1]:
            raise _Fault(f"{where}.shear_rate_range", "is not a positive, increasing pair")
    for key in ("shear_rate", "residuals"):
        if d.get(key) is not None:
            _check_numbers(d[key], _at(where, key))
    _check_flags(d.get("flags"), f"{where}.flags")
    _check_covariance(declaration, values, d.get("covariance"), f"{where}.covariance")
    try:
        declaration.check(values)
    except ParameterError as exc:
        raise _Fault(f"{where}.params", str(exc)) from None


def _check_document(document) -> None:
    """Raise _Fault at the first key of a saved-fit document's frame that is wrong.

    The fit that is read back is checked in full by :func:`check_fit_dict` (see load_fit).
    """
    if _depth(document) > MAX_DEPTH:
        raise _Fault("(document)", f"is nested more than {MAX_DEPTH} levels deep")
    if not isinstance(document, dict) or document.get("kind") != KIND:
        raise _Fault("kind", f"is not \"{KIND}\"")
    version = document.get("version")
    if version != VERSION or isinstance(version, bool):
        raise _Fault("version", f"is {_shown(version)}; this rheofit reads version {VERSION} only")
    curves = _typed(document, "curves", "", list, optional=False)
    for i, entry in enumerate(curves):
        where = f"curves[{i}]"
        if not isinstance(entry, dict):
            raise _Fault(where, f"is {_shown(entry)}, not a table")
        _typed(entry, "name", where, str)
        _typed(entry, "best", where, str)
        _check_flags(entry.get("flags"), f"{where}.flags")
        for j, fitted in enumerate(_typed(entry, "fits", where, list) or []):
            if not isinstance(fitted, dict):
                raise _Fault(f"{where}.fits[{j}]", f"is {_shown(fitted)}, not a table")
            _typed(fitted, "model", f"{where}.fits[{j}]", str, optional=False)
