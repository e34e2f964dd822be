"""Progress of long jobs: silent by default, a rich bar on the command line.

The report and the demo call ``steps.begin(description, total)`` and
``steps.advance()``; the library stays silent (:class:`Steps`), the CLI
passes :func:`rheofit.cli.progress.rich_steps`, which draws on stderr so that
stdout stays clean.
"""

from __future__ import annotations


class Steps:
    """Progress hooks that do nothing (the default for library calls)."""

    def begin(self, description: str, total: int) -> None:
        """A new stage of ``total`` steps."""

    def advance(self, description: str | None = None) -> None:
        """One step done (optionally with a new description)."""

    def note(self, description: str) -> None:
        """A new description for the current step, without counting a step."""


def quiet(steps: Steps | None) -> Steps:
    """``steps`` or the silent default."""
    return steps if steps is not None else Steps()
