"""Laminar flow of a fitted fluid in a tube or a slit.

``predict(fluid_or_fit, Tube(...) or Slit(...), flow_rate=... or pressure_drop=...)``
returns a :class:`FlowPrediction`; the engine functions below work on plain
arrays; :mod:`rheofit.flow.curves` holds the operating curve dP(Q) and the
velocity profile as data.  Every output carries :data:`SAFETY_CAUTION`.
"""

from rheofit.flow.engine import flow_rate, pressure_drop, velocity_profile, wall_shear_rate
from rheofit.flow.geometry import Slit, Tube
from rheofit.flow.predict import SAFETY_CAUTION, FlowPrediction, predict

__all__ = [
    "Tube", "Slit", "predict", "FlowPrediction", "SAFETY_CAUTION",
    "flow_rate", "pressure_drop", "velocity_profile", "wall_shear_rate",
]
