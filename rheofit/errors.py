"""One family of exceptions, each with a message written for the user.

Every message quotes the bad value, says what was expected and, where there is
a fixed set of valid choices, lists them and suggests the nearest one.  The
CLI prints ``str(error)`` and exits with code 2; it never shows a traceback.
"""

from __future__ import annotations

import contextlib
import contextvars
import difflib
from collections.abc import Iterable

#: "python" or "command line": how messages name an option (``curve=2`` or ``--curve 2``)
_SPELLING = contextvars.ContextVar("rheofit_option_spelling", default="python")


class RheofitError(Exception):
    """Base class of every error rheofit raises on purpose."""


class InputFileError(RheofitError, ValueError):
    """A data file cannot be read as a flow curve (names file, row, column)."""


class UnitError(RheofitError, ValueError):
    """A unit string is unknown or of the wrong kind."""


class ModelNameError(RheofitError, KeyError):
    """An unknown model name was asked for."""

    def __str__(self) -> str:  # KeyError would otherwise quote the message
        return self.args[0] if self.args else ""


class ParameterError(RheofitError, ValueError):
    """A parameter name or value does not fit the model."""


class DeclarationError(RheofitError, TypeError):
    """A model declaration disagrees with itself (names the model and the mismatched names)."""


class FitError(RheofitError, RuntimeError):
    """A fit could not be carried out on the given data."""


class GeometryError(RheofitError, ValueError):
    """A geometry or operating point is not physical."""


class OutputExistsError(RheofitError, FileExistsError):
    """An output file exists and ``force`` was not given, or a folder stands where a file goes."""


class OutputPathError(RheofitError, FileNotFoundError):
    """An output would go into a folder that does not exist (it is never created silently)."""


def spelled(python: str, command_line: str) -> str:
    """How a message names an option: the Python keyword, or the option when run from the CLI.

    >>> spelled("viscosity_column=2", "--column viscosity=2")
    'viscosity_column=2'
    >>> with command_line_spelling():
    ...     spelled("viscosity_column=2", "--column viscosity=2")
    '--column viscosity=2'
    """
    return command_line if _SPELLING.get() == "command line" else python


@contextlib.contextmanager
def command_line_spelling():
    """Within this block, messages name command-line options (set by the CLI around a command)."""
    token = _SPELLING.set("command line")
    try:
        yield
    finally:
        _SPELLING.reset(token)


def nearest(word: str, choices: Iterable[str]) -> str:
    """Return `` Did you mean 'x'?`` for the closest choice, or ``""``."""
    close = difflib.get_close_matches(word, list(choices), n=1, cutoff=0.5)
    return f" Did you mean '{close[0]}'?" if close else ""


def choice_message(kind: str, word: str, choices: Iterable[str]) -> str:
    """Message for an unknown name: quote it, list the valid ones, suggest one."""
    choices = list(choices)
    return f"Unknown {kind} '{word}'; choose one of: {', '.join(choices)}.{nearest(word, choices)}"
