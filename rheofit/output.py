"""Writing outputs safely: atomically, and never over an existing file unless asked."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from rheofit.errors import OutputExistsError


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def make_folder(folder) -> Path:
    """Create ``folder`` (and its parents) for outputs, or say in one sentence why not."""
    folder = Path(folder)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except (FileExistsError, NotADirectoryError):
        raise OutputExistsError(
            f"Cannot write into '{folder}': it (or a folder above it) is a file, not a folder; "
            "choose another output path."
        ) from None
    return folder


def write_atomic(path, data: str | bytes, *, force: bool = False) -> Path:
    """Write ``data`` to ``path`` via a temporary file in the same folder and a rename.

    A reader never sees a half-written file, and an existing file is replaced
    only when ``force`` is true (otherwise OutputExistsError).
    """
    path = Path(path)
    if path.is_dir():
        raise OutputExistsError(f"Output '{path}' is a folder; give the name of a file to write.")
    if path.exists() and not force:
        raise OutputExistsError(
            f"Output file '{path}' already exists; choose another name or pass --force to overwrite it."
        )
    make_folder(path.parent)
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
