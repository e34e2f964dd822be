"""The viscosity models: each one declared once, in :mod:`rheofit.models.catalogue`.

ADD A MODEL HERE: one :class:`ViscosityModel` declaration in the catalogue
(its stress function, parameter specs, guess, example values, source).
Fitting, the flow engine, plots, reports, the CLI and the tests all iterate
over :data:`MODELS`.

- :mod:`~rheofit.models.declaration`: the declaration (Parameter, ViscosityModel)
- :mod:`~rheofit.models.catalogue`: the declared models and :func:`get_model`
- :mod:`~rheofit.models.closed_forms`: published laminar flow rates, fast paths of the engine
"""

from rheofit.models.catalogue import MODELS, get_model
from rheofit.models.declaration import Parameter, ViscosityModel

__all__ = ["MODELS", "Parameter", "ViscosityModel", "get_model"]
