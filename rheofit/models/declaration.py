"""A viscosity model's declaration: its parameters and its equations, checked once.

Units: shear rate gamma_dot [1/s], stress tau [Pa], viscosity eta [Pa*s].
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import ParameterError, choice_message


@dataclass(frozen=True)
class Parameter:
    """One model parameter.

    ``positive_scale`` marks a parameter that spans decades (a viscosity, a
    time, a consistency); fitting and uncertainty work on its logarithm.
    """

    name: str
    unit: str
    lower: float
    upper: float
    meaning: str
    positive_scale: bool = True


@dataclass(frozen=True)
class ViscosityModel:
    """A declared viscosity model (see module docstring)."""

    name: str
    title: str
    equation: str
    parameters: tuple[Parameter, ...]
    stress_function: Callable[..., np.ndarray]
    guess_function: Callable[[np.ndarray, np.ndarray], dict]
    reference: str
    yield_stress_function: Callable[..., float] | None = None
    zero_shear_viscosity_function: Callable[..., float] | None = None
    extras: Mapping[str, Callable] = field(default_factory=dict)

    @property
    def parameter_names(self) -> tuple[str, ...]:
        return tuple(p.name for p in self.parameters)

    def parameter(self, name: str) -> Parameter:
        for p in self.parameters:
            if p.name == name:
                return p
        raise ParameterError(choice_message(f"{self.name} parameter", name, self.parameter_names))

    def stress(self, shear_rate, **params) -> np.ndarray:
        """Shear stress tau [Pa] at ``shear_rate`` [1/s]."""
        return self.stress_function(np.asarray(shear_rate, dtype=float), **params)

    def viscosity(self, shear_rate, **params) -> np.ndarray:
        """Apparent viscosity eta = tau / gamma_dot [Pa*s]."""
        rate = np.asarray(shear_rate, dtype=float)
        return self.stress_function(rate, **params) / rate

    def yield_stress(self, **params) -> float:
        """Yield stress tau_y [Pa]; zero for models without one."""
        if self.yield_stress_function is None:
            return 0.0
        return float(self.yield_stress_function(**params))

    def zero_shear_viscosity(self, **params) -> float | None:
        """Zero-shear plateau eta_0 [Pa*s], or None when the model has none."""
        if self.zero_shear_viscosity_function is None:
            return None
        return float(self.zero_shear_viscosity_function(**params))

    def guess(self, shear_rate, stress) -> dict[str, float]:
        """Initial parameter values from data, clipped inside the bounds."""
        raw = self.guess_function(np.asarray(shear_rate, float), np.asarray(stress, float))
        out = {}
        for p in self.parameters:
            value = float(raw[p.name])
            if not np.isfinite(value):
                value = p.lower if np.isfinite(p.lower) and p.lower > 0 else 1.0
            if p.positive_scale:
                low, high = p.lower * 1.0001, p.upper / 1.0001
            else:  # the guesses are inside already; keep them off the bounds
                span = 1e-6 * (p.upper - p.lower)
                low = p.lower if value > p.lower else p.lower + span
                high = p.upper if value < p.upper else p.upper - span
            out[p.name] = float(np.clip(value, low, high))
        return out

    def check(self, params: Mapping[str, float]) -> dict[str, float]:
        """Validate names and values; return a plain dict of floats.

        Raises ParameterError naming the bad or missing parameter and the
        valid ones.
        """
        names = self.parameter_names
        for key in params:
            if key not in names:
                raise ParameterError(choice_message(f"{self.name} parameter", key, names))
        missing = [n for n in names if n not in params]
        if missing:
            raise ParameterError(
                f"Model {self.name} needs {', '.join(names)}; missing: {', '.join(missing)}."
            )
        out = {}
        for p in self.parameters:
            try:
                value = float(params[p.name])
            except (TypeError, ValueError):
                raise ParameterError(
                    f"{self.name}: {p.name} = {params[p.name]!r} is not a number; give it in {p.unit}."
                ) from None
            if not (np.isfinite(value) and p.lower <= value <= p.upper):
                raise ParameterError(
                    f"{self.name}: {p.name} = {value:g} is outside its physical range "
                    f"[{p.lower:g}, {p.upper:g}] {p.unit}."
                )
            out[p.name] = value
        return out
