"""The ``flow`` command: pressure drop or flow rate, wall shear and velocity in a tube or slit."""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import console, load_source, make_geometry, operating_point, read_overrides, user_errors
from rheofit.cli.options import COLUMN, DENSITY, DIAMETER, FLOW_RATE, GAP, LENGTH, PRESSURE_DROP, UNIT, WIDTH


@user_errors
def flow_command(
    source: Path = typer.Argument(..., help="A sweep (CSV, fitted on the spot) or a saved fit from `rheofit fit --out`."),
    diameter: Optional[str] = DIAMETER,
    gap: Optional[str] = GAP,
    width: Optional[str] = WIDTH,
    length: Optional[str] = LENGTH,
    flow_rate: Optional[str] = FLOW_RATE,
    pressure_drop: Optional[str] = PRESSURE_DROP,
    model: Optional[str] = typer.Option(None, "--model", "-m", help="Model to use (default: the best by AICc)."),
    curve: Optional[str] = typer.Option(None, "--curve", help="Which curve of a file holding several (number from 1, or label such as '37 °C')."),
    density: Optional[str] = DENSITY,
    newtonian_viscosity: Optional[str] = typer.Option(None, "--newtonian-viscosity", help="Reference viscosity for the Newtonian comparison, e.g. '50 mPa s' (default: the model's viscosity at the apparent wall shear rate)."),
    as_json: bool = typer.Option(False, "--json", help="Print the prediction as JSON (SI units)."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
):
    """Predict pressure drop or flow rate, wall shear and velocity profile in a tube or slit."""
    from rheofit.flow import predict
    from rheofit.units import parse_quantity

    if model is not None:
        from rheofit.models import get_model

        model = get_model(model).name
    geometry = make_geometry(diameter, gap, width, length)
    point = operating_point(flow_rate, pressure_drop)
    reference = None if newtonian_viscosity is None else parse_quantity(newtonian_viscosity, "viscosity")
    if density is not None:
        point["density"] = parse_quantity(density, "density")
    with console(stderr=True).status(f"fitting {source.name}"):  # shown on a terminal only
        result = load_source(source, model, curve, read_overrides(column, unit))
    with console(stderr=True).status("solving the flow and its 95 % interval"):
        prediction = predict(result, geometry, newtonian_viscosity=reference, **point)
    if as_json:
        sys.stdout.write(json.dumps(prediction.to_dict(), indent=2) + "\n")
        return
    from rheofit.report.console import prediction_block

    console().print(prediction_block(result, geometry, prediction))
