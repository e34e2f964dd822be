"""Command-line options shared by several commands (declared once).

Every option that takes a dimensional quantity is declared with
:func:`quantity`, which records it in :data:`QUANTITIES`; the commands parse
them all with :func:`rheofit.cli.common.quantities` (a unit is required), and
the tests run every registered option through the same bad inputs.
"""

from __future__ import annotations

import typer

#: every option that takes a dimensional quantity: option -> unit kind (rheofit.units)
QUANTITIES: dict[str, str] = {}


def quantity(name: str, *short: str, kind: str, help: str):
    """A typed-quantity option (a number with its unit); registered in QUANTITIES."""
    QUANTITIES[name] = kind
    return typer.Option(None, name, *short, help=f"{help} A unit is required.")


DIAMETER = quantity("--diameter", "-d", kind="length", help="Tube inner diameter, e.g. '0.8 mm'.")
GAP = quantity("--gap", kind="length", help="Slit gap (height), e.g. '200 um'.")
WIDTH = quantity("--width", kind="length", help="Slit width, e.g. '8 mm'.")
LENGTH = quantity("--length", "-l", kind="length", help="Channel length, e.g. '30 cm'.")
FLOW_RATE = quantity("--flow-rate", "-q", kind="flow_rate",
                     help="Volumetric flow rate, e.g. '50 uL/min' or '1.2 mL/h'.")
PRESSURE_DROP = quantity("--pressure-drop", "-p", kind="pressure",
                         help="Pressure drop over the length, e.g. '25 kPa'.")
DENSITY = quantity("--density", kind="density",
                   help="Fluid density, e.g. '1.05 g/mL' (for the Reynolds number; default 1000 kg/m^3).")
NEWTONIAN_VISCOSITY = quantity(
    "--newtonian-viscosity", kind="viscosity",
    help="Reference viscosity for the Newtonian comparison, e.g. '50 mPa s' (default: the model's "
         "viscosity at the apparent wall shear rate).")

# --- how a data file is read (the same on fit, flow, compare and report) -----------------------
COLUMN = typer.Option(None, "--column", help="Which column holds a quantity, as ROLE=NAME or ROLE=NUMBER counted from 1 (e.g. 'viscosity=Eta app' or 'viscosity=2'); repeatable.")
UNIT = typer.Option(None, "--unit", help="The unit of a column, as ROLE=UNIT (e.g. 'viscosity=mPa*s'); repeatable. Roles: shear_rate, viscosity, stress, temperature.")
CURVE = typer.Option(None, "--curve", help="Which curve of a file holding several (number from 1, or label such as '37 °C'); for several files, that curve of each.")
SEGMENT = typer.Option("all", "--segment", help="Which part of an up-and-down sweep to use: 'up' (rising shear rate), 'down' or 'all'.")
