"""The least-squares problem behind a fit, in the internal parametrisation.

Residuals are relative, in log space::

    r_i = ln tau_model(gamma_dot_i) - ln tau_i      (= ln eta_model - ln eta_i)

A parameter declared with ``positive_scale=True`` (a viscosity, a time, a
consistency) is fitted as its natural logarithm ``x = ln p`` with bounds
``[ln lower, ln upper]``, so that a step of the optimiser means a factor, not
an increment, across many decades; the others are fitted as they are, inside
their declared bounds.  Every minimisation (the main fit and the constrained
refits of the profile likelihood) is :func:`scipy.optimize.least_squares`,
trust-region reflective within the bounds, on the same residual function.

Infeasible trial points get the same huge residual as a stress that is not
a positive finite number, so the optimiser turns away from them, whatever
the model: values that break the declaration's joint ``constraint`` (e.g.
eta_inf > eta0), and flow curves that fall anywhere over the measured range
(checked on the measured shear rates and a grid of 64 log-spaced rates
between the lowest and the highest; see the bound rule in
:mod:`rheofit.models.catalogue`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from rheofit.models import ViscosityModel

#: residual given to the optimiser where the model stress is not a positive
#: finite number (a huge relative error, e^50, that steers it away)
_BAD_RESIDUAL = 50.0

#: log-spaced rates between the lowest and highest measured on which a trial
#: flow curve must not fall (with the measured rates themselves)
_MONOTONE_GRID = 64

#: below this condition number of the scaled normal matrix the covariance is
#: trusted; above, the parameters are not separately identifiable
_MAX_CONDITION = 1e13


@dataclass(frozen=True)
class Parametrisation:
    """Map between parameter values (SI) and the internal fitting vector x.

    ``logged[i]`` is True where ``x[i] = ln(value)``; ``lower``/``upper`` are
    the bounds of x (internal units).
    """

    names: tuple[str, ...]
    logged: tuple[bool, ...]
    lower: tuple[float, ...]
    upper: tuple[float, ...]

    @classmethod
    def of(cls, declaration: ViscosityModel) -> "Parametrisation":
        names, logged, lower, upper = [], [], [], []
        for p in declaration.parameters:
            use_log = bool(p.positive_scale) and p.lower >= 0
            names.append(p.name)
            logged.append(use_log)
            lower.append((math.log(p.lower) if p.lower > 0 else -math.inf) if use_log else p.lower)
            upper.append(math.log(p.upper) if use_log else p.upper)
        return cls(tuple(names), tuple(logged), tuple(lower), tuple(upper))

    @property
    def internal_names(self) -> tuple[str, ...]:
        """Names of the internal coordinates, e.g. ``ln_eta0`` or ``n``."""
        return tuple(f"ln_{n}" if lg else n for n, lg in zip(self.names, self.logged))

    def internal(self, values) -> np.ndarray:
        """Internal vector x from a dict of values (SI)."""
        return np.array([math.log(values[n]) if lg else float(values[n])
                         for n, lg in zip(self.names, self.logged)])

    def natural(self, x) -> dict[str, float]:
        """Dict of values (SI) from an internal vector x."""
        x = np.asarray(x, dtype=float)
        v = np.where(self.logged, np.exp(np.where(self.logged, x, 0.0)), x)
        return dict(zip(self.names, v.tolist()))

    def clip(self, x) -> np.ndarray:
        """x moved inside the bounds."""
        return np.clip(np.asarray(x, dtype=float), self.lower, self.upper)


class LogStressProblem:
    """Log-space least squares of one model on one curve.

    Parameters
    ----------
    declaration : ViscosityModel
        The model.
    shear_rate : array [1/s]
        Shear rates, all > 0.
    stress : array [Pa]
        Measured stresses, all > 0.
    """

    def __init__(self, declaration: ViscosityModel, shear_rate, stress):
        self.declaration = declaration
        self.parametrisation = Parametrisation.of(declaration)
        self.shear_rate = np.asarray(shear_rate, dtype=float)
        self.log_stress = np.log(np.asarray(stress, dtype=float))
        self.n_points = int(self.shear_rate.size)
        self.n_params = len(self.parametrisation.names)
        self.lower = np.array(self.parametrisation.lower)
        self.upper = np.array(self.parametrisation.upper)
        grid = np.geomspace(self.shear_rate.min(), self.shear_rate.max(), _MONOTONE_GRID)
        self._rates = np.unique(np.concatenate([self.shear_rate, grid]))
        self._data_at = np.searchsorted(self._rates, self.shear_rate)

    def residual(self, x) -> np.ndarray:
        """ln tau_model - ln tau_data at internal vector x [-]; huge where x is infeasible."""
        values = self.parametrisation.natural(x)
        if self.declaration.violation(values) is not None:
            return np.full(self.n_points, _BAD_RESIDUAL)
        with np.errstate(all="ignore"):
            model = self.declaration.stress_function(self._rates, **values)
            if np.any(np.diff(model) < 0):  # the flow curve falls inside the data
                return np.full(self.n_points, _BAD_RESIDUAL)
            r = np.log(model[self._data_at]) - self.log_stress
        return np.where(np.isfinite(r), r, _BAD_RESIDUAL)

    def rss(self, x) -> float:
        """Residual sum of squares at x [-]."""
        r = self.residual(x)
        return float(r @ r)

    # --- optimisation -----------------------------------------------------

    def solve(self, x0) -> tuple[np.ndarray, float, str]:
        """Minimise the RSS from x0 within the bounds; return (x, rss, message).

        Trust-region reflective least squares, 2-point Jacobian, tolerances
        1e-8 on f, x and the gradient, variables scaled by the Jacobian's
        columns, at most 2000 (k + 1) evaluations: the settings the fits used
        when they ran through lmfit's ``least_squares`` wrapper, which gives
        the same iterates (the wrapper added 0.5 s of imports and nothing else
        that the fits used).
        """
        out = least_squares(self.residual, self.parametrisation.clip(x0),
                            bounds=(self.lower, self.upper), method="trf", jac="2-point",
                            ftol=1e-8, xtol=1e-8, gtol=1e-8, x_scale="jac",
                            max_nfev=2000 * (self.n_params + 1))
        return out.x, self.rss(out.x), str(out.message)

    def refit_fixed(self, index: int, value: float, x_start,
                    bounds: tuple[np.ndarray, np.ndarray] | None = None
                    ) -> tuple[np.ndarray, float]:
        """Minimise over all coordinates but ``index``, held at ``value``.

        ``bounds`` (internal lower, upper arrays) replaces the declared ones.
        Returns the full internal vector and its RSS (one point of a profile).
        """
        lower, upper = bounds if bounds is not None else (self.lower, self.upper)
        x_start = np.clip(np.asarray(x_start, dtype=float), lower, upper)
        x_full = x_start.copy()
        x_full[index] = value
        free = np.arange(self.n_params) != index
        if not free.any():
            return x_full, self.rss(x_full)

        def residual(y):
            x_full[free] = y
            return self.residual(x_full)

        out = least_squares(residual, x_start[free], bounds=(lower[free], upper[free]),
                            x_scale="jac", method="trf")
        x_full[free] = out.x
        return x_full.copy(), self.rss(x_full)

    # --- local curvature --------------------------------------------------

    def jacobian(self, x) -> np.ndarray:
        """d r / d x by central differences (one-sided at a bound), shape (N, k)."""
        x = np.asarray(x, dtype=float)
        jac = np.empty((self.n_points, self.n_params))
        for i in range(self.n_params):
            h = 1e-6 * max(1.0, abs(x[i]))
            up, down = x.copy(), x.copy()
            up[i] = min(x[i] + h, self.upper[i])
            down[i] = max(x[i] - h, self.lower[i])
            jac[:, i] = (self.residual(up) - self.residual(down)) / (up[i] - down[i])
        return jac

    def covariance(self, jac, rss: float) -> np.ndarray | None:
        """Covariance of x: s^2 (J^T J)^-1 with s^2 = RSS / (N - k).

        ``jac`` is :meth:`jacobian` at the optimum.  Returns None when J^T J
        is singular or too ill-conditioned for its inverse to mean anything
        (parameters not separately identifiable).
        """
        normal = jac.T @ jac
        scale = np.sqrt(np.diag(normal))
        if not np.all(np.isfinite(normal)) or np.any(scale == 0):
            return None
        scaled = normal / np.outer(scale, scale)
        if np.linalg.cond(scaled) > _MAX_CONDITION:
            return None
        variance = rss / (self.n_points - self.n_params)
        return variance * np.linalg.inv(scaled) / np.outer(scale, scale)
