"""rheofit: fit flow curves of non-Newtonian samples and predict their flow.

The public API is this short list.  Heavy modules (pandas, scipy, matplotlib,
pint) load on first use, so ``import rheofit`` and ``rheofit --help``
stay fast.

The map (dependencies point down this list, never up; tests/test_layout.py checks it):

- ground floor: ``errors``, ``units``, ``output``, ``progress``, ``curve``, ``markup`` (HTML escaping)
- ``models/``   ADD A MODEL HERE: declaration, catalogue, closed forms
- ``fluid``     a model with given parameter values
- ``ingest/``   ADD AN INPUT FORMAT HERE: text exports -> FlowCurve
- ``fitting/``  problem, intervals, statistics, result, parameter draws, saved fits
- ``flow/``     ADD A GEOMETRY HERE: geometry protocol, engine, regime, predict, prediction intervals
- ``lots``      lots side by side
- ``report/``   renderers only: display units, console, text, HTML, figures
- ``jobs/``     orchestration: the analysis behind a report, the demo
- ``cli/``      ADD A COMMAND HERE: one module per command, shared options

>>> import rheofit
>>> blood_like = rheofit.fluid("casson", tau_y=0.005, mu_c=0.0035)
>>> round(float(blood_like.viscosity(100.0)) * 1e3, 2)   # mPa*s
4.39
"""

from __future__ import annotations

import importlib

# Imported eagerly (light: numpy only) so that the function, not the submodule
# of the same name, is what ``rheofit.fluid`` means.
from rheofit.fluid import Fluid, fluid

from rheofit.version import VERSION as __version__

_EXPORTS = {
    "FlowCurve": "rheofit.curve",
    "Flag": "rheofit.curve",
    "read_flow_curve": "rheofit.ingest",
    "read_flow_curves": "rheofit.ingest",
    "MODELS": "rheofit.models",
    "get_model": "rheofit.models",
    "fit": "rheofit.fitting.solve",
    "fit_all": "rheofit.fitting.solve",
    "FitResult": "rheofit.fitting.result",
    "Tube": "rheofit.flow",
    "Slit": "rheofit.flow",
    "predict": "rheofit.flow",
    "FlowPrediction": "rheofit.flow",
    "RheofitError": "rheofit.errors",
    "compare": "rheofit.lots",
    "Comparison": "rheofit.lots",
}

__all__ = sorted([*_EXPORTS, "Fluid", "fluid"]) + ["__version__"]


def __getattr__(name: str):
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'rheofit' has no attribute '{name}'")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__():
    return __all__
