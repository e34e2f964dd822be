"""The ``models`` command: the declared viscosity models."""

from __future__ import annotations

from rheofit.cli.common import console


def models_command():
    """List the viscosity models with their equation, parameters and source."""
    from rheofit.report.console import models_list

    console().print(models_list())
