"""Writing outputs: values made JSON-safe, files written atomically and never over an
existing file unless asked."""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path

import numpy as np

from rheofit.errors import OutputExistsError, OutputPathError


def finite_or_none(value) -> float | None:
    """A JSON-safe float: None for None, nan and +/-inf (JSON has no nan)."""
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def json_safe(value, replaced: list | None = None, where: str = ""):
    """Numbers, strings, lists and dicts made JSON-safe, recursively: the one coercer.

    numpy scalars and arrays are unwrapped, nan and +/-inf become None (the
    key path of each is appended to ``replaced`` when given), dict keys become
    strings, anything else unknown becomes its ``str``.

    >>> json_safe({"a": np.array([1.5, np.nan]), 2: np.int64(3), "ok": np.bool_(True)})
    {'a': [1.5, None], '2': 3, 'ok': True}
    >>> found = []; _ = json_safe({"gap": [1.0, float("inf")]}, found); found
    ['gap[1]']
    """
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        safe = finite_or_none(value)
        if safe is None and replaced is not None:
            replaced.append(where)
        return safe
    if isinstance(value, np.ndarray):
        return json_safe(value.tolist(), replaced, where)
    if isinstance(value, dict):
        return {str(k): json_safe(v, replaced, f"{where}.{k}" if where else str(k)) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_safe(v, replaced, f"{where}[{i}]") for i, v in enumerate(value)]
    return value if value is None or isinstance(value, str) else str(value)


#: key added to a printed document listing where a non-finite number was written as null
REPLACED_KEY = "non_finite_written_as_null"


def strict_json(document, indent: int | None = 2) -> str:
    """``document`` as strict JSON (RFC 8259: no NaN or Infinity), via :func:`json_safe`.

    Every nan/inf becomes null; a dict document then gains the key
    ``non_finite_written_as_null`` listing the key paths so replaced.
    """
    replaced: list[str] = []
    safe = json_safe(document, replaced)
    if replaced and isinstance(safe, dict):
        safe[REPLACED_KEY] = replaced
    return json.dumps(safe, indent=indent, allow_nan=False)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _blocked(folder: Path):
    """Why files cannot go into ``folder``, as (error class, reason), or None when they can."""
    if folder.is_dir():
        return None
    if folder.exists():
        return OutputExistsError, f"'{folder}' is a file, not a folder; choose another path"
    above = next((p for p in folder.parents if p.exists()), None)
    if above is not None and not above.is_dir():
        return OutputExistsError, f"'{above}' is a file, not a folder; choose another path"
    return OutputPathError, f"the folder '{folder}' does not exist; create it first or choose another path"


def make_folder(folder) -> Path:
    """Create the output ``folder`` itself (never missing folders above it), or say why not.

    Raises OutputPathError when the folder above is missing, OutputExistsError
    when a file stands in the way.
    """
    folder = Path(folder)
    if folder.is_dir():
        return folder
    blocked = _blocked(folder.parent) or (_blocked(folder) if folder.exists() else None)
    if blocked:
        error, reason = blocked
        raise error(f"Cannot write into '{folder}': {reason}.")
    folder.mkdir()
    return folder


def check_target(path, *, force: bool = False) -> None:
    """Refuse, before any work, an output file that cannot be written (None is skipped).

    A folder at ``path``, a missing folder or a file above it: refused whatever
    ``force`` says (a folder is never created silently); an existing file:
    refused unless ``force``.
    """
    if path is None:
        return
    path = Path(path)
    if path.is_dir():
        raise OutputExistsError(f"Output '{path}' is a folder; give the name of a file to write in it, "
                                f"e.g. '{path / 'results.json'}'.")
    blocked = _blocked(path.parent)
    if blocked:
        error, reason = blocked
        raise error(f"Cannot write '{path}': {reason}.")
    if not force:
        refuse_existing(path)


def refuse_existing(*paths) -> None:
    """Raise OutputExistsError naming the first of ``paths`` that exists (None is skipped)."""
    for path in paths:
        if path is not None and Path(path).exists():
            raise OutputExistsError(
                f"Output file '{path}' already exists; choose another name or pass --force to overwrite it."
            )


def write_atomic(path, data: str | bytes, *, force: bool = False) -> Path:
    """Write ``data`` to ``path`` via a temporary file in the same folder and a rename.

    A reader never sees a half-written file, and an existing file is replaced
    only when ``force`` is true (otherwise OutputExistsError); the folder must
    exist (see :func:`check_target`).
    """
    path = Path(path)
    check_target(path, force=force)
    mode = "wb" if isinstance(data, bytes) else "w"
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, mode, **({} if mode == "wb" else {"encoding": "utf-8"})) as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; give the usual permissions
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
