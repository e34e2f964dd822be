"""The ``demo`` command: the whole job on the bundled, invented sample sweeps."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import user_errors


def _stdout():
    from rich.console import Console

    return Console()


@user_errors
def demo_command(
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Folder for the demo's report and saved fits (made if missing; its parent must exist). Default: a fresh folder under the system's temporary directory."),
    force: bool = typer.Option(False, "--force", help="Overwrite an earlier demo's files in that folder."),
):
    """Run the whole job on the bundled (invented) sample sweeps and write a report."""
    from rheofit.jobs.demo import run_demo, summary
    from rheofit.cli.progress import rich_steps

    with rich_steps() as steps:
        result = run_demo(out, force=force, steps=steps)
    _stdout().print(summary(result))
