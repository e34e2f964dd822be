"""Saved fits: the JSON document ``rheofit fit --out`` writes and later commands read."""

from __future__ import annotations

import json
from pathlib import Path

from rheofit.errors import InputFileError, ModelNameError, choice_message

KIND = "rheofit-fits"
VERSION = 1


def fits_document(groups) -> dict:
    """JSON-able document for ``[(curve, [FitResult, ...]), ...]`` (fits best first)."""
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


def load_fit(path, model: str | None = None, curve: int = 0):
    """Read one FitResult back from a saved-fit file (the best one unless ``model``)."""
    from rheofit.fitting import FitResult

    path = Path(path)
    try:
        document = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError) as exc:
        raise InputFileError(f"Cannot read saved fit '{path}': {exc}.") from None
    if not isinstance(document, dict) or document.get("kind") != KIND:
        raise InputFileError(
            f"'{path}' is not a saved rheofit fit; make one with `rheofit fit DATA.csv --out {path.name}`."
        )
    curves = document.get("curves") or []
    if not 0 <= curve < len(curves):
        raise InputFileError(f"Saved fit '{path}' holds {len(curves)} curve(s); curve {curve} does not exist.")
    fits = curves[curve]["fits"]
    if not fits:
        raise InputFileError(f"Saved fit '{path}' holds no fitted model for curve {curve}.")
    if model is None:
        return FitResult.from_dict(fits[0])
    for entry in fits:
        if entry["model"] == model:
            return FitResult.from_dict(entry)
    raise ModelNameError(
        choice_message(f"model saved in '{path.name}'", model, [f["model"] for f in fits])
    )
