"""Command-line options shared by several commands (declared once)."""

from __future__ import annotations

import typer

DIAMETER = typer.Option(None, "--diameter", "-d", help="Tube inner diameter, e.g. '0.8 mm'.")
GAP = typer.Option(None, "--gap", help="Slit gap (height), e.g. '200 um'.")
WIDTH = typer.Option(None, "--width", help="Slit width, e.g. '8 mm'.")
LENGTH = typer.Option(None, "--length", "-l", help="Channel length, e.g. '30 cm'.")
FLOW_RATE = typer.Option(None, "--flow-rate", "-q", help="Volumetric flow rate, e.g. '50 uL/min' or '1.2 mL/h'.")
PRESSURE_DROP = typer.Option(None, "--pressure-drop", "-p", help="Pressure drop over the length, e.g. '25 kPa'.")
DENSITY = typer.Option(None, "--density", help="Fluid density, e.g. '1.05 g/mL' (for the Reynolds number; default 1000 kg/m^3).")
COLUMN = typer.Option(None, "--column", help="Which column holds a quantity, as ROLE=NAME (e.g. 'viscosity=Eta app'); repeatable.")
UNIT = typer.Option(None, "--unit", help="The unit of a column, as ROLE=UNIT (e.g. 'viscosity=mPa*s'); repeatable. Roles: shear_rate, viscosity, stress, temperature.")
