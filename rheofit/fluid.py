"""Fluid: a viscosity model with definite parameter values.

A :class:`Fluid` is what the flow engine consumes.  ``rheofit.fluid()`` makes
one from given values; a :class:`~rheofit.fitting.FitResult` provides one
through its ``fluid`` attribute (with the measured shear-rate range, so that
predictions can flag extrapolation).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import ParameterError
from rheofit.models import ViscosityModel, get_model


@dataclass(frozen=True)
class Fluid:
    """A declared model with parameter values (SI).

    Attributes
    ----------
    declaration : ViscosityModel
        The model declaration from :data:`rheofit.models.MODELS`.
    values : Mapping[str, float]
        Parameter values in SI units.
    shear_rate_range : tuple of float or None
        Measured shear-rate range [1/s] behind the values; None if given by hand.
    name : str
        A label (sample name), or ``""``.
    """

    declaration: ViscosityModel
    values: Mapping[str, float]
    shear_rate_range: tuple[float, float] | None = None
    name: str = ""
    flags: tuple = field(default=())

    @property
    def model(self) -> str:
        """The model's name."""
        return self.declaration.name

    def stress(self, shear_rate) -> np.ndarray:
        """Shear stress [Pa] at ``shear_rate`` [1/s]."""
        return self.declaration.stress(shear_rate, **self.values)

    def viscosity(self, shear_rate) -> np.ndarray:
        """Apparent viscosity [Pa*s] at ``shear_rate`` [1/s]."""
        return self.declaration.viscosity(shear_rate, **self.values)

    @property
    def yield_stress(self) -> float:
        """Yield stress [Pa] (0 without one)."""
        return self.declaration.yield_stress(**self.values)

    @property
    def zero_shear_viscosity(self) -> float | None:
        """Zero-shear plateau [Pa*s], or None when the model has none."""
        return self.declaration.zero_shear_viscosity(**self.values)

    @property
    def fluid(self) -> "Fluid":
        return self

    def to_dict(self) -> dict:
        return {
            "model": self.model,
            "params": {k: {"value": float(v)} for k, v in self.values.items()},
            "shear_rate_range": list(self.shear_rate_range) if self.shear_rate_range else None,
            "name": self.name,
        }


def fluid(model, **params) -> Fluid:
    """A model with given parameter values, usable wherever a fit result is.

    >>> water = fluid("newtonian", mu=1.0016e-3)
    >>> float(water.viscosity(100.0))
    0.0010016

    Raises ModelNameError / ParameterError listing the valid names.
    """
    declaration = get_model(model)
    return Fluid(declaration, declaration.check(params))


def as_fluid(obj) -> Fluid:
    """Accept a Fluid or anything with a ``fluid`` attribute (a FitResult)."""
    candidate = getattr(obj, "fluid", None)
    if isinstance(candidate, Fluid):
        return candidate
    raise ParameterError(
        f"Expected a fluid (rheofit.fluid(...)) or a fit result, got {type(obj).__name__}."
    )
