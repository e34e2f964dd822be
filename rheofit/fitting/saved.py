"""Saved fits: the JSON document ``rheofit fit --out`` writes and later commands read."""

from __future__ import annotations

import json
from pathlib import Path

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


def is_saved_fit(path) -> bool:
    """True when ``path`` looks like a saved-fit JSON document."""
    path = Path(path)
    if path.suffix.lower() != ".json":
        return False
    try:
        return json.loads(path.read_text(encoding="utf-8")).get("kind") == KIND
    except (OSError, ValueError, AttributeError):
        return False


def _document(path: Path) -> dict:
    """The saved-fit document in ``path``, or InputFileError saying what is wrong."""
    if not path.is_file():
        raise InputFileError(f"Saved fit '{path}' does not exist; check the path and the file name.")
    try:
        document = json.loads(path.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, ValueError):
        document = None
    if not isinstance(document, dict) or document.get("kind") != KIND:
        raise InputFileError(
            f"'{path}' is not a saved rheofit fit; make one with `rheofit fit DATA.csv --out {path.name}`."
        )
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
    entry = _pick_curve(path, _document(path).get("curves") or [], curve)
    fits = entry.get("fits") or []
    label = entry.get("name", "") or "the curve"
    if not fits:
        raise InputFileError(f"Saved fit '{path}' holds no fitted model for {label}; fit it again with `rheofit fit`.")
    if model is None:
        return _supported(FitResult.from_dict(fits[0]), fits)
    for fitted in fits:
        if fitted["model"] == model:
            return _supported(FitResult.from_dict(fitted), fits)
    raise ModelNameError(
        f"Model '{model}' was not saved in '{path.name}'; saved models: "
        f"{', '.join(f['model'] for f in fits)}. Fit it with `rheofit fit DATA.csv --model {model}`."
    )


def _supported(result, fits: list):
    """``result`` with its Akaike weight and rank; a fit saved without them (an older file)
    gets them from the AICc of the fits saved beside it."""
    from dataclasses import replace

    from rheofit.fitting.result import FitResult
    from rheofit.fitting.support import with_support

    if result.support is not None or len(fits) < 2:
        return result
    ranked = with_support([FitResult.from_dict(f) for f in fits])
    return next((replace(result, support=r.support) for r in ranked if r.model == result.model), result)
