"""A declared viscosity model with its parameters bound, as the 2-D solver uses it.

The solver needs only the stress tau(s) [Pa] at shear rate s [1/s], its
slope dtau/ds [Pa*s], the yield stress tau_y [Pa] and the inverse of
tau(s) + r s = w, all from the model's declaration
(:data:`rheofit.models.MODELS`); no model is named here.

The inverse is solved for many values at once by a bracketed Newton
iteration on x = ln s,

    F(x) = ln(tau(e^x) + r e^x) - ln w = 0,   dF/dx = s (tau'(s) + r) / (tau + r s),

which is increasing in x for every rising flow curve; where a Newton step
leaves the bracket, bisection takes over (Press et al. 2007, Numerical
Recipes, 3rd ed., sect. 9.4, "rtsafe").  With r > 0 the root lies below
ln((w - tau_y)/r), since tau >= tau_y.
"""

from __future__ import annotations

import numpy as np

from rheofit.errors import ParameterError

#: relative step in ln s of the central difference for dtau/ds
_SLOPE_STEP = 1e-4
#: ln s brackets [ln(1/s)]: about 5e-324 and 1e308
_LOG_LOW, _LOG_HIGH = -744.0, 709.0
#: |ln(tau + r s) - ln w| below which tau + r s = w holds to rounding
_ROUNDING = 1e-15


class FlowLaw:
    """tau(s) of one declared model with its parameters (SI) bound.

    Parameters
    ----------
    declaration : rheofit.models.ViscosityModel
        The model declaration.
    params : mapping
        Parameter values in SI, checked by ``declaration.check``.
    """

    def __init__(self, declaration, params):
        self.declaration = declaration
        self.params = declaration.check(params)
        self.yield_stress = float(declaration.yield_stress(**self.params))
        if not (np.isfinite(self.yield_stress) and self.yield_stress >= 0.0):
            raise ParameterError(
                f"{declaration.name}: the yield stress {self.yield_stress!r} Pa is not a "
                "non-negative number; check the parameter values."
            )

    @property
    def has_yield_stress(self) -> bool:
        """True when tau_y > 0."""
        return self.yield_stress > 0.0

    def stress(self, rate):
        """Shear stress tau(s) [Pa] at shear rates s > 0 [1/s]."""
        with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
            return self.declaration.stress(rate, **self.params)

    def slope(self, rate):
        """dtau/ds [Pa*s] at s > 0 by a central difference in ln s (relative error ~1e-8)."""
        rate = np.asarray(rate, dtype=float)
        up, down = np.exp(_SLOPE_STEP), np.exp(-_SLOPE_STEP)
        return (self.stress(rate * up) - self.stress(rate * down)) / (rate * (up - down))

    def shear_rate(self, stress, penalty: float = 0.0, start=None, tol: float = 1e-12):
        """s >= 0 with tau(s) + r s = w [1/s] for each w in ``stress`` [Pa]; 0 where w <= tau_y.

        ``penalty`` is r [Pa*s] (0 gives the inverse flow curve); ``start``
        optional first guesses [1/s] (a previous solution).
        """
        w = np.asarray(stress, dtype=float)
        out = np.zeros(w.shape)
        moving = w > self.yield_stress
        if not moving.any():
            return out
        target = np.log(w[moving])
        lo = np.full(target.shape, _LOG_LOW)
        hi = np.full(target.shape, _LOG_HIGH)
        if penalty > 0.0:
            with np.errstate(divide="ignore"):
                hi = np.minimum(hi, np.log((w[moving] - self.yield_stress) / penalty))
        x = self._first_guess(w[moving], penalty, start, moving, lo, hi)
        out[moving] = np.exp(self._newton(x, lo, hi, target, penalty, tol))
        return out

    def _first_guess(self, w, penalty, start, moving, lo, hi):
        if start is not None:
            guess = np.asarray(start, dtype=float)[moving]
            x = np.where(guess > 0, np.log(np.maximum(guess, 1e-300)), hi - 1.0)
        else:
            x = np.where(np.isfinite(hi) & (hi < _LOG_HIGH), hi - 1.0, 0.0)
        return np.clip(x, lo, hi)

    def _newton(self, x, lo, hi, target, penalty, tol, maxiter=200):
        active = np.arange(x.size)
        for _ in range(maxiter):
            if active.size == 0:
                break
            xa = x[active]
            s = np.exp(xa)
            tau = self.stress(s) + penalty * s
            with np.errstate(divide="ignore", invalid="ignore"):
                f = np.log(tau) - target[active]
                df = s * (self.slope(s) + penalty) / tau
            f = np.where(np.isnan(f), -np.inf, f)
            lo[active] = np.where(f < 0, xa, lo[active])
            hi[active] = np.where(f > 0, xa, hi[active])
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(f == 0, 0.0, f / df)
            new = xa - step
            inside = np.isfinite(new) & (new > lo[active]) & (new < hi[active])
            new = np.where(inside, new, 0.5 * (lo[active] + hi[active]))
            solved = np.abs(f) <= _ROUNDING  # tau + r s = w to rounding: keep this x
            x[active] = np.where(solved, xa, new)
            done = solved | (inside & (np.abs(step) <= tol)) | (hi[active] - lo[active] <= tol)
            active = active[~done]
        return x
