"""The ``rheofit`` command.  ADD A COMMAND HERE: one module per command, registered below.

Thin: each command parses its options, calls the API, prints.  Every command
module imports only typer at the top, so ``rheofit --help`` is fast.

- :mod:`~rheofit.cli.common`: one-line user errors, console, JSON output, sources
- :mod:`~rheofit.cli.options`: options shared by several commands
- :mod:`~rheofit.cli.progress`: progress bars on stderr
- :mod:`~rheofit.cli.fit`, :mod:`~rheofit.cli.models`, :mod:`~rheofit.cli.flow`,
  :mod:`~rheofit.cli.compare`, :mod:`~rheofit.cli.report`, :mod:`~rheofit.cli.demo`: the commands
"""

from __future__ import annotations

import typer

from rheofit.cli.compare import compare_command
from rheofit.cli.demo import demo_command
from rheofit.cli.fit import fit_command
from rheofit.cli.flow import flow_command
from rheofit.cli.models import models_command
from rheofit.cli.report import report_command

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Fit flow curves of non-Newtonian samples and predict how they flow in tubes and slits.",
)

for _name, _command in (("fit", fit_command), ("models", models_command), ("flow", flow_command),
                        ("compare", compare_command), ("report", report_command), ("demo", demo_command)):
    app.command(_name)(_command)

__all__ = ["app"]
