"""FlowCurve: one steady shear-rate sweep, in SI, with the flags found on import."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import ParameterError
from rheofit.output import json_safe


@dataclass(frozen=True)
class Flag:
    """A structured warning that travels with a result.

    ``code`` is a short stable identifier (e.g. ``"extrapolation"``),
    ``message`` a plain sentence for the user, ``data`` any numbers behind it.
    """

    code: str
    message: str
    data: dict = field(default_factory=dict)

    def to_dict(self) -> dict:
        return {"code": self.code, "message": self.message, "data": dict(self.data)}

    def __str__(self) -> str:
        return self.message


def _same_length(**arrays) -> None:
    """Raise ParameterError naming the lengths when the arrays of a curve do not match."""
    sizes = {name: np.shape(a) for name, a in arrays.items()}
    if len(set(sizes.values())) > 1:
        listed = ", ".join(f"{name} {size[0] if size else 'scalar'}" for name, size in sizes.items())
        raise ParameterError(f"The arrays of a flow curve must have the same length; got {listed}.")


@dataclass(frozen=True)
class FlowCurve:
    """A flow curve in SI units.

    Attributes
    ----------
    shear_rate : numpy.ndarray
        Shear rate [1/s], strictly positive.
    viscosity : numpy.ndarray
        Apparent viscosity eta = tau / gamma_dot [Pa*s].
    stress : numpy.ndarray
        Shear stress [Pa].
    name : str
        A label for the sample (file stem by default).
    source : str
        Where the data came from (file path), or ``""``.
    temperature : float or None
        Temperature [K], when known.
    flags : tuple of Flag
        What the importer noticed (dropped rows, hysteresis, ...).
    metadata : dict
        Free text found in the file (e.g. lines before the header).
    segment : numpy.ndarray or None
        Sweep segment index per point (0 = first sweep direction), or None.
    """

    shear_rate: np.ndarray
    viscosity: np.ndarray
    stress: np.ndarray
    name: str = ""
    source: str = ""
    temperature: float | None = None
    flags: tuple[Flag, ...] = ()
    metadata: dict = field(default_factory=dict)
    segment: np.ndarray | None = None

    def __post_init__(self):
        for attr in ("shear_rate", "viscosity", "stress"):
            arr = np.array(getattr(self, attr), dtype=float)
            arr.setflags(write=False)
            object.__setattr__(self, attr, arr)
        _same_length(shear_rate=self.shear_rate, viscosity=self.viscosity, stress=self.stress)

    @classmethod
    def from_arrays(cls, shear_rate, viscosity=None, stress=None, **kwargs) -> "FlowCurve":
        """Build a curve from shear rate and either viscosity or stress (SI)."""
        if viscosity is None and stress is None:
            raise ParameterError("A flow curve needs the viscosity or the stress beside the shear rate; give one.")
        shear_rate = np.asarray(shear_rate, dtype=float)
        given = {"viscosity": viscosity} if viscosity is not None else {"stress": stress}
        given = {k: np.asarray(v, dtype=float) for k, v in given.items()}
        _same_length(shear_rate=shear_rate, **given)
        if viscosity is None:
            viscosity = given["stress"] / shear_rate
        if stress is None:
            stress = given["viscosity"] * shear_rate
        return cls(shear_rate, viscosity, stress, **kwargs)

    def __len__(self) -> int:
        return int(self.shear_rate.size)

    def to_dict(self) -> dict:
        """A JSON-able dict: the data (SI, nan as null), name, source, temperature, flags, metadata."""
        return json_safe({
            "name": self.name, "source": self.source, "temperature": self.temperature,
            "shear_rate": self.shear_rate, "viscosity": self.viscosity, "stress": self.stress,
            "segment": self.segment, "flags": [flag.to_dict() for flag in self.flags],
            "metadata": self.metadata,
        })

    @property
    def shear_rate_range(self) -> tuple[float, float]:
        """(lowest, highest) measured shear rate [1/s]."""
        return float(self.shear_rate.min()), float(self.shear_rate.max())

    def with_flags(self, *flags: Flag) -> "FlowCurve":
        """A copy with extra flags."""
        from dataclasses import replace

        return replace(self, flags=self.flags + tuple(flags))
