"""Writing outputs: values made JSON-safe, files written atomically and never over an
existing file unless asked."""

from __future__ import annotations

import contextlib
import json
import math
import os
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


_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_safe(value):
    """A CSV cell a spreadsheet will not run as a formula: text starting with ``= + - @``,
    tab or CR gets a leading single quote (OWASP, "CSV Injection"); numbers, and text
    that reads as a number (``-1.5``), stay as they are.

    >>> [spreadsheet_safe(v) for v in ("=HYPERLINK(1)", "-1.5", -2.0, "@x", "lot A")]
    ["'=HYPERLINK(1)", '-1.5', -2.0, "'@x", 'lot A']
    """
    if not isinstance(value, str) or not value.startswith(_FORMULA_START):
        return value
    try:
        float(value)
        return value
    except ValueError:
        return "'" + value


def csv_text(table) -> str:
    """A pandas table as CSV text with every cell and column name made :func:`spreadsheet_safe`;
    every CSV rheofit writes goes through here."""
    safe = table.map(spreadsheet_safe)
    safe.columns = [spreadsheet_safe(str(c)) for c in safe.columns]
    return safe.to_csv(index=False)


PARTIAL = ".rheofit-partial-"
"""Temp files are named ``<output>.rheofit-partial-<pid>``: recognisable, safe to delete."""

_STAGED: list | None = None  # (temp, target) pairs waiting for the end of a staged() block


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


def _blocked(folder: Path):
    """Why files cannot go into ``folder``, as (error class, reason), or None when they can."""
    if folder.is_dir():
        if not os.access(folder, os.W_OK | os.X_OK):
            return OutputPathError, f"the folder '{folder}' is not writable; choose another folder"
        return None
    if folder.exists():
        return OutputExistsError, f"'{folder}' is a file, not a folder; choose another path"
    above = next((p for p in folder.parents if p.exists()), None)
    if above is not None and not above.is_dir():
        return OutputExistsError, f"'{above}' is a file, not a folder; choose another path"
    return OutputPathError, f"the folder '{folder}' does not exist; create it first or choose another path"


def make_folder(folder) -> Path:
    """Create the output ``folder`` itself (never missing folders above it), or say why not.

    Raises OutputPathError when the folder above is missing or a folder is not
    writable, OutputExistsError when a file or a symlink stands in the way.
    """
    folder = Path(folder)
    if folder.is_symlink() and not folder.is_dir():
        raise OutputExistsError(f"Cannot write into '{folder}': it is a symbolic link to no folder; "
                                "remove it or choose another path.")
    blocked = _blocked(folder) if folder.is_dir() else (
        _blocked(folder.parent) or (_blocked(folder) if folder.exists() else None))
    if blocked:
        error, reason = blocked
        raise error(f"Cannot write into '{folder}': {reason}.")
    if not folder.is_dir():
        folder.mkdir()
    return folder


def _same_file(path: Path, other) -> bool:
    """Whether ``path`` names the file ``other`` (same real path, or os.path.samefile)."""
    try:
        other = Path(other)
        if path.resolve() == other.resolve():
            return True
        return path.exists() and other.exists() and os.path.samefile(path, other)
    except (OSError, ValueError):
        return False


def check_target(path, *, force: bool = False, inputs=()) -> None:
    """Refuse, before any work, an output file that cannot or must not be written (None is skipped).

    Refused whatever ``force`` says: one of ``inputs`` (compared by real path),
    a symbolic link (even a dangling one), anything there that is not a
    regular file (a folder, a FIFO, a device), a missing or read-only folder
    or a file above it (a folder is never created silently).  An existing
    regular file is refused unless ``force``.
    """
    if path is None:
        return
    path = Path(path)
    for given in inputs:
        if _same_file(path, given):
            raise OutputExistsError(f"Output '{path}' is also an input ('{given}'); "
                                    "an input is never overwritten, so choose another name.")
    if path.is_symlink():
        raise OutputExistsError(f"Output '{path}' is a symbolic link; rheofit does not write through "
                                "or over links, so remove it or choose another name.")
    if path.is_dir():
        raise OutputExistsError(f"Output '{path}' is a folder; give the name of a file to write in it, "
                                f"e.g. '{path / 'results.json'}'.")
    if path.exists() and not path.is_file():
        raise OutputExistsError(f"Output '{path}' exists and is not a regular file (a device, pipe or "
                                "socket); rheofit never replaces one, so choose another name.")
    blocked = _blocked(path.parent)
    if blocked:
        error, reason = blocked
        raise error(f"Cannot write '{path}': {reason}.")
    if not force:
        refuse_existing(path)


def refuse_existing(*paths) -> None:
    """Raise OutputExistsError naming the first of ``paths`` that exists, a dangling link included
    (None is skipped)."""
    for path in paths:
        if path is not None and os.path.lexists(path):
            raise OutputExistsError(
                f"Output file '{path}' already exists; choose another name or pass --force to overwrite it."
            )


def partial_name(path) -> Path:
    """The temp file beside ``path`` while it is written: ``<name>.rheofit-partial-<pid>``."""
    path = Path(path)
    return path.with_name(f"{path.name}{PARTIAL}{os.getpid()}")


def _write_temp(tmp: Path, data: str | bytes) -> None:
    if os.path.lexists(tmp) and tmp.is_file() and not tmp.is_symlink():
        tmp.unlink()  # our own leftover from a run with the same process id
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)  # the umask gives the usual permissions
    mode = "wb" if isinstance(data, bytes) else "w"
    with os.fdopen(fd, mode, **({} if mode == "wb" else {"encoding": "utf-8"})) as handle:
        handle.write(data)
        handle.flush()
        os.fsync(handle.fileno())


def write_atomic(path, data: str | bytes, *, force: bool = False, inputs=()) -> Path:
    """Write ``data`` to ``path`` via a temp file in the same folder and a rename.

    A reader never sees a half-written file; the target is checked by
    :func:`check_target` (``force`` and ``inputs`` as there).  The temp file
    (see :func:`partial_name`) is removed on every exit Python sees, Ctrl-C
    included.  Inside :func:`staged` the rename waits for the end of the block.
    """
    path = Path(path)
    check_target(path, force=force, inputs=inputs)
    tmp = partial_name(path)
    try:
        _write_temp(tmp, data)
        if _STAGED is not None:
            _STAGED.append((tmp, path, force, tuple(inputs)))
            return path
        check_target(path, force=force, inputs=inputs)  # nothing took its place meanwhile
        os.replace(tmp, path)
    finally:
        if _STAGED is None or not any(t == tmp for t, *_ in _STAGED):
            tmp.unlink(missing_ok=True)
    return path


@contextlib.contextmanager
def staged():
    """Hold every :func:`write_atomic` in the block as a temp file and rename them all at its end.

    A run stopped inside the block leaves none of its outputs (so a plain rerun
    is not blocked by half of them) and, on any exit Python sees, no temp file.
    """
    global _STAGED
    outer, _STAGED = _STAGED, []
    pending = _STAGED
    try:
        yield
        _STAGED = outer
        for tmp, path, force, inputs in pending:
            check_target(path, force=force, inputs=inputs)
        for tmp, path, *_ in pending:
            os.replace(tmp, path)
    finally:
        _STAGED = outer
        for tmp, *_ in pending:
            tmp.unlink(missing_ok=True)
