"""Progress drawn on the terminal (stderr) for the CLI's long commands."""

from __future__ import annotations

from contextlib import contextmanager

from rheofit.progress import Steps
from rheofit.report.display import markup_safe


class RichSteps(Steps):
    """Progress drawn by a :class:`rich.progress.Progress`."""

    def __init__(self, progress):
        self._progress = progress
        self._task = None
        self._stage = ""

    def begin(self, description: str, total: int) -> None:
        self.finish()
        self._stage = description = markup_safe(description)
        self._task = self._progress.add_task(description, total=max(int(total), 1))

    def finish(self) -> None:
        """Mark the current stage complete, under its own name again."""
        if self._task is not None:
            total = self._progress.tasks[-1].total
            self._progress.update(self._task, completed=total, description=self._stage)

    def advance(self, description: str | None = None) -> None:
        if self._task is None:
            return
        if description is not None:
            self._progress.update(self._task, description=markup_safe(description))
        self._progress.advance(self._task)

    def note(self, description: str) -> None:
        if self._task is not None:
            self._progress.update(self._task, description=markup_safe(description))


@contextmanager
def rich_steps(console=None):
    """A :class:`RichSteps` on ``console`` (default: stderr) for the ``with`` block."""
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    console = console or Console(stderr=True)
    columns = (TextColumn("{task.description:<44}"), BarColumn(), MofNCompleteColumn(), TimeElapsedColumn())
    with Progress(*columns, console=console, transient=False) as progress:
        steps = RichSteps(progress)
        yield steps
        steps.finish()
