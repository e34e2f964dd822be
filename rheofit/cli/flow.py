"""The ``flow`` command: pressure drop or flow rate, wall shear and velocity in a tube or slit."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import (best_instead, console, import_keywords, load_source, make_geometry, operating_point,
                                quantities, user_errors)
from rheofit.cli.options import (COLUMN, CURVE, DENSITY, DIAMETER, FLOW_RATE, GAP, LENGTH, NEWTONIAN_VISCOSITY,
                                 PRESSURE_DROP, SEGMENT, UNIT, WIDTH)


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
    density: Optional[str] = DENSITY,
    newtonian_viscosity: Optional[str] = NEWTONIAN_VISCOSITY,
    as_json: bool = typer.Option(False, "--json", help="Print the prediction as JSON (SI units)."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
    curve: Optional[str] = CURVE,
    segment: str = SEGMENT,
):
    """Predict pressure drop or flow rate, wall shear and velocity profile in a tube or slit."""
    from rheofit.flow import predict
    from rheofit.report.display import markup_safe

    typed = quantities(diameter=diameter, gap=gap, width=width, length=length, flow_rate=flow_rate,
                       pressure_drop=pressure_drop, density=density, newtonian_viscosity=newtonian_viscosity)
    keywords = import_keywords(column, unit, curve, segment)
    if model is not None:
        from rheofit.models import get_model

        model = get_model(model).name
    geometry = make_geometry(typed["diameter"], typed["gap"], typed["width"], typed["length"])
    point = operating_point(typed["flow_rate"], typed["pressure_drop"])
    if typed["density"] is not None:
        point["density"] = typed["density"]
    with console(stderr=True).status(f"fitting {markup_safe(source.name)}"):  # shown on a terminal only
        result = load_source(source, model, keywords)
    with console(stderr=True).status("solving the flow and its 95 % interval"):
        prediction = predict(result, geometry, newtonian_viscosity=typed["newtonian_viscosity"], **point)
        best = best_instead(source, result, keywords)
        if best is not None:  # the data reject the chosen model: say what the best one gives
            from rheofit.flow.predict import beside_best

            prediction = beside_best(prediction, predict(best, geometry, uncertainty=False, **point))
    if as_json:
        from rheofit.output import strict_json

        sys.stdout.write(strict_json(prediction.to_dict(), indent=2) + "\n")
        return
    from rheofit.report.console import prediction_block

    console().print(prediction_block(result, geometry, prediction))
