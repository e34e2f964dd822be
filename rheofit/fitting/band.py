"""The confidence band of a fitted viscosity curve, as data (computed once, drawn and saved).

:func:`drawn_band` evaluates :func:`rheofit.fitting.draws.viscosity_band`
(parameter draws, 2.5th to 97.5th percentile, widened along unresolved
parameters; method and sources in :mod:`rheofit.fitting.draws`) on the
shear rates a flow-curve figure draws: the measured range, widened to reach
any operating wall shear rate outside it.  The result is a frozen
:class:`ViscosityBand` that the report draws and that goes to JSON as it is.

Units: shear rate [1/s], viscosity [Pa*s].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.fitting.draws import BAND_SAMPLES, DEFAULT_SEED, LEVEL, parameter_draws, viscosity_band
from rheofit.output import json_safe

__all__ = ["ViscosityBand", "drawn_band", "drawn_shear_rates"]

#: shear rates of a drawn band (log-spaced)
BAND_POINTS = 300
#: how far past an outside operating point the curve is drawn [-]
MARGIN = 1.6


@dataclass(frozen=True, eq=False)
class ViscosityBand:
    """The fitted viscosity curve of one model with its confidence band (SI).

    Attributes
    ----------
    model : str
        The model's name.
    shear_rate : (M,) array [1/s], increasing; it includes both ends of
        ``measured_range`` (beyond them the curve is extrapolated).
    viscosity : (M,) array [Pa*s], the fitted curve.
    low, high : (M,) arrays [Pa*s], the band's ends.
    level : float, e.g. 0.95.
    method : str, how the band was made (plain words).
    samples : int, Monte Carlo draws.
    measured_range : (low, high) [1/s] of the data behind the fit.
    flags : anything that makes the band unreliable.
    """

    model: str
    shear_rate: np.ndarray
    viscosity: np.ndarray
    low: np.ndarray
    high: np.ndarray
    level: float
    method: str
    samples: int
    measured_range: tuple[float, float]
    flags: tuple[Flag, ...] = ()

    def to_dict(self) -> dict:
        """A JSON-able dict (arrays as lists, nan as null)."""
        return {
            "model": self.model,
            "level": self.level,
            "method": self.method,
            "samples": self.samples,
            "measured_range": json_safe(list(self.measured_range)),
            "shear_rate": json_safe(self.shear_rate),
            "viscosity": json_safe(self.viscosity),
            "low": json_safe(self.low),
            "high": json_safe(self.high),
            "flags": [json_safe(flag.to_dict()) for flag in self.flags],
        }


def drawn_shear_rates(measured_range, reach=(), points: int = BAND_POINTS) -> np.ndarray:
    """Log-spaced shear rates [1/s] over ``measured_range``, widened to reach ``reach``.

    A rate of ``reach`` [1/s] outside the range moves that end to
    rate / MARGIN (below) or rate * MARGIN (above); both ends of the measured
    range are kept as points, so the measured and extrapolated parts meet.
    """
    low, high = (float(v) for v in measured_range)
    rates = [float(r) for r in reach if np.isfinite(r) and r > 0]
    start = min(rates) / MARGIN if rates and min(rates) < low else low
    stop = max(rates) * MARGIN if rates and max(rates) > high else high
    return np.union1d(np.geomspace(start, stop, points), [low, high])


def drawn_band(fit, reach=(), *, level: float = LEVEL, samples: int = BAND_SAMPLES,
               seed: int | None = DEFAULT_SEED) -> ViscosityBand:
    """The band of ``fit`` over its measured range, widened to reach the rates ``reach`` [1/s].

    Raises ParameterError for a fluid without a fit (see :func:`viscosity_band`).
    """
    draws = parameter_draws(fit, samples, seed)
    rate = drawn_shear_rates(fit.shear_rate_range, reach)
    low, high = viscosity_band(fit, rate, level, draws=draws)
    return ViscosityBand(fit.model, rate, np.asarray(fit.viscosity(rate), float), low, high, level,
                         draws.method, draws.samples, tuple(fit.shear_rate_range), draws.flags)
