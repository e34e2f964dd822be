"""FitResult: one model fitted to one flow curve, as data.

A result carries the estimates with their 95 % intervals, goodness of fit,
the flags, the covariance of the internal parametrisation (for carrying the
uncertainty into flow predictions) and a :class:`~rheofit.fluid.Fluid` for
the flow engine.  It converts to a JSON-able dict (:meth:`FitResult.to_dict`)
and back (:meth:`FitResult.from_dict`), and prints as a sectioned report.

Open interval ends are ``None`` in Python and ``null`` in JSON: the data
bound the parameter on one side only (or on neither).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.errors import FitError
from rheofit.fitting.statistics import CORRELATION_SHOWN_ABOVE, correlated_pairs, correlation_matrix
from rheofit.fitting.text import text_report
from rheofit.fluid import Fluid
from rheofit.markup import join, key_values, table, tag
from rheofit.models import ViscosityModel, get_model
from rheofit.output import finite_or_none, json_safe

SCHEMA = "rheofit.fit/1"


@dataclass(frozen=True)
class ParameterEstimate:
    """A fitted parameter (SI).

    Attributes
    ----------
    name, unit : str
        Symbol and SI unit, from the declaration.
    value : float
        Best estimate [unit].
    stderr : float or None
        Standard error from the covariance (delta method for logged
        parameters); None when the covariance is not available.
    ci95 : (low, high)
        95 % confidence interval [unit]; an open end is ``None``.
    method : str
        How the interval was obtained: ``"profile likelihood (F threshold)"``
        or ``"covariance (Wald)"``.
    resolved : bool
        True when both ends of the interval are closed by the data.
    note : str
        Plain words on anything unusual ("" when nothing is).
    """

    name: str
    unit: str
    value: float
    stderr: float | None
    ci95: tuple[float | None, float | None]
    method: str
    resolved: bool
    note: str = ""

    def to_dict(self) -> dict:
        return {
            "value": finite_or_none(self.value),
            "unit": self.unit,
            "stderr": finite_or_none(self.stderr),
            "ci95": [finite_or_none(self.ci95[0]), finite_or_none(self.ci95[1])],
            "method": self.method,
            "resolved": bool(self.resolved),
            "note": self.note,
        }

    @classmethod
    def from_dict(cls, name: str, unit: str, d: dict) -> "ParameterEstimate":
        low, high = (list(d.get("ci95") or [None, None]) + [None, None])[:2]
        return cls(name, d.get("unit", unit), float(d["value"]), finite_or_none(d.get("stderr")),
                   (finite_or_none(low), finite_or_none(high)), str(d.get("method", "")),
                   bool(d.get("resolved", low is not None and high is not None)),
                   str(d.get("note", "")))

    def interval_text(self, fmt: str = ".4g") -> str:
        """``[low, high]`` with ``open`` for an open end."""
        low, high = self.ci95
        left = f"[{low:{fmt}}" if low is not None else "(open"
        right = f"{high:{fmt}}]" if high is not None else "open)"
        return f"{left}, {right}"


@dataclass(frozen=True, eq=False)
class Covariance:
    """Covariance of the internal fitting vector x.

    ``x[i] = ln(value)`` where ``logged[i]``, else ``x[i] = value``.
    ``matrix`` is None when the fit left the parameters not separately
    identifiable.  Sample x ~ N(center, matrix) and map with :meth:`natural`.
    """

    names: tuple[str, ...]
    logged: tuple[bool, ...]
    center: np.ndarray
    matrix: np.ndarray | None

    def natural(self, x) -> dict[str, np.ndarray]:
        """Parameter values (SI) from internal vectors x, shape (..., k)."""
        x = np.asarray(x, dtype=float)
        return {n: (np.exp(x[..., i]) if lg else x[..., i])
                for i, (n, lg) in enumerate(zip(self.names, self.logged))}

    def correlation(self) -> np.ndarray | None:
        """Correlation matrix of x [-] (None without a covariance).

        It is also, to first order, the correlation of the SI values: each
        SI value is an increasing function of its own coordinate alone
        (v = exp(x) or v = x), so the delta method scales row and column i
        by dv_i/dx_i > 0, which leaves every r_ij unchanged.
        """
        return None if self.matrix is None else correlation_matrix(self.matrix)

    def to_dict(self) -> dict:
        matrix = None
        if self.matrix is not None:
            matrix = [[finite_or_none(v) for v in row] for row in np.asarray(self.matrix)]
        return {"names": list(self.names), "logged": [bool(v) for v in self.logged],
                "center": [finite_or_none(v) for v in self.center], "matrix": matrix}

    @classmethod
    def from_dict(cls, d: dict) -> "Covariance":
        matrix = d.get("matrix")
        if matrix is not None:
            matrix = np.array([[np.nan if v is None else v for v in row] for row in matrix],
                              dtype=float)
        return cls(tuple(d["names"]), tuple(bool(v) for v in d["logged"]),
                   np.array(d["center"], dtype=float), matrix)


@dataclass(frozen=True, eq=False, repr=False)
class FitResult:
    """One viscosity model fitted to one flow curve (SI throughout).

    Goodness of fit is in log space: ``rms_log_residual`` is
    sqrt(RSS/N) of r_i = ln tau_model - ln tau_i (0.02 means a typical
    deviation of about 2 %); ``r_squared_log`` is 1 - RSS / SS of ln(stress)
    about its mean - flattering, since stress grows with shear rate whatever
    the model: rank models by ``aicc`` instead.  ``aic``, ``aicc`` and ``bic``
    follow :func:`rheofit.fitting.statistics.information_criteria`.
    """

    model: str
    declaration: ViscosityModel
    params: dict[str, ParameterEstimate]
    values: dict[str, float]
    fluid: Fluid
    shear_rate_range: tuple[float, float] | None
    n_points: int
    n_params: int
    aic: float
    aicc: float
    bic: float
    rss_log: float
    rms_log_residual: float
    r_squared_log: float
    residuals: np.ndarray
    shear_rate: np.ndarray
    covariance: Covariance
    flags: tuple[Flag, ...] = ()
    name: str = ""
    source: str = ""

    # --- use ----------------------------------------------------------------

    def viscosity(self, shear_rate) -> np.ndarray:
        """Fitted apparent viscosity [Pa*s] at ``shear_rate`` [1/s]."""
        return self.fluid.viscosity(shear_rate)

    def stress(self, shear_rate) -> np.ndarray:
        """Fitted shear stress [Pa] at ``shear_rate`` [1/s]."""
        return self.fluid.stress(shear_rate)

    @property
    def resolved(self) -> bool:
        """True when every parameter's interval is closed on both sides."""
        return all(p.resolved for p in self.params.values())

    def flags_with(self, code: str) -> tuple[Flag, ...]:
        """The flags with a given code."""
        return tuple(f for f in self.flags if f.code == code)

    def correlations(self, above: float = CORRELATION_SHOWN_ABOVE):
        """Parameter pairs ``(a, b, r)`` with |r| > ``above``, largest first; None without a covariance.

        r is the correlation of the estimates from the covariance at the
        optimum (see :meth:`Covariance.correlation`: the same in the internal
        and the SI parametrisation, to first order).  A correlation near +/-1
        means the data fix a combination of the two rather than each one.
        """
        matrix = self.covariance.correlation()
        if matrix is None:
            return None
        return correlated_pairs(self.covariance.names, matrix, above)

    # --- JSON -----------------------------------------------------------------

    def to_dict(self) -> dict:
        """A JSON-able dict (no nan/inf: those become null)."""
        d = self.declaration
        return {
            "schema": SCHEMA,
            "model": self.model,
            "title": d.title,
            "equation": d.equation,
            "reference": d.reference,
            "name": self.name,
            "source": self.source,
            "params": {k: p.to_dict() for k, p in self.params.items()},
            "aic": finite_or_none(self.aic),
            "aicc": finite_or_none(self.aicc),
            "bic": finite_or_none(self.bic),
            "rss_log": finite_or_none(self.rss_log),
            "rms_log_residual": finite_or_none(self.rms_log_residual),
            "r_squared_log": finite_or_none(self.r_squared_log),
            "shear_rate_range": ([finite_or_none(v) for v in self.shear_rate_range]
                                 if self.shear_rate_range else None),
            "n_points": int(self.n_points),
            "n_params": int(self.n_params),
            "flags": [_flag_dict(f) for f in self.flags],
            "covariance": self.covariance.to_dict(),
            "shear_rate": [finite_or_none(v) for v in self.shear_rate],
            "residuals": [finite_or_none(v) for v in self.residuals],
        }

    @classmethod
    def from_dict(cls, d: dict) -> "FitResult":
        """Rebuild a result from :meth:`to_dict` output (e.g. a saved JSON fit).

        Raises FitError when ``model`` or a parameter value is missing, and
        ModelNameError for an unknown model.
        """
        _require(d)
        declaration = get_model(d["model"])
        params = {p.name: ParameterEstimate.from_dict(p.name, p.unit, d["params"][p.name])
                  for p in declaration.parameters}
        values = {k: p.value for k, p in params.items()}
        rng = d.get("shear_rate_range")
        rng = (float(rng[0]), float(rng[1])) if rng else None
        flags = tuple(Flag(f["code"], f["message"], dict(f.get("data") or {}))
                      for f in d.get("flags", []))
        name = str(d.get("name", ""))
        cov = d.get("covariance")
        covariance = (Covariance.from_dict(cov) if cov else
                      Covariance(declaration.parameter_names, (False,) * len(params),
                                 np.array(list(values.values())), None))
        return cls(
            model=declaration.name, declaration=declaration, params=params, values=values,
            fluid=Fluid(declaration, dict(values), rng, name, flags),
            shear_rate_range=rng, n_points=int(d.get("n_points", 0)),
            n_params=int(d.get("n_params", len(params))),
            aic=_criterion(d.get("aic")), aicc=_criterion(d.get("aicc")),
            bic=_criterion(d.get("bic")),
            rss_log=_float(d.get("rss_log")), rms_log_residual=_float(d.get("rms_log_residual")),
            r_squared_log=_float(d.get("r_squared_log")),
            residuals=_array(d.get("residuals")), shear_rate=_array(d.get("shear_rate")),
            covariance=covariance, flags=flags, name=name, source=str(d.get("source", "")),
        )

    # --- text -------------------------------------------------------------------

    def __str__(self) -> str:
        return text_report(self)

    def __repr__(self) -> str:
        values = ", ".join(f"{k}={v:.4g}" for k, v in self.values.items())
        return (f"FitResult(model={self.model!r}, name={self.name!r}, {values}, "
                f"aicc={self.aicc:.4g}, flags={[f.code for f in self.flags]})")

    def _repr_html_(self) -> str:
        """A compact HTML table for notebooks (every user string escaped)."""
        return _html(self)


def _html(fit: FitResult) -> str:
    """The parameters with their 95 % intervals, the goodness of fit and the flags."""
    head = f"{fit.declaration.title} fit" + (f" of {fit.name}" if fit.name else "")
    rows = [[p.name, f"{p.value:.4g}", p.unit, p.interval_text(), "yes" if p.resolved else "no", p.note]
            for p in fit.params.values()]
    methods = ", ".join(sorted({p.method for p in fit.params.values()}))
    facts = [("AICc", f"{fit.aicc:.4g}"), ("BIC", f"{fit.bic:.4g}"),
             ("rms of the log residuals", f"{fit.rms_log_residual:.3g}"), ("points", str(fit.n_points))]
    if fit.shear_rate_range:
        facts.append(("shear rate [1/s]", "{:.3g} to {:.3g}".format(*fit.shear_rate_range)))
    flags = table(["flag", "message"], [[f.code, f.message] for f in fit.flags]) if fit.flags else ""
    return join(tag("p", tag("strong", head)),
                table(["parameter", "value", "unit", "95 % interval", "resolved", "note"], rows,
                      caption=f"95 % intervals: {methods}"),
                _html_correlations(fit), key_values(facts), flags)


def _html_correlations(fit: FitResult) -> str:
    """The pairs of estimates with |r| above the reports' threshold ("" for one parameter)."""
    if fit.n_params < 2:
        return ""
    pairs = fit.correlations()
    caption = f"correlations of the estimates with |r| > {CORRELATION_SHOWN_ABOVE:g}"
    if pairs is None:
        return tag("p", caption + ": not available (the fit gave no covariance)")
    if not pairs:
        return tag("p", caption + ": none")
    return table(["parameters", "r"], [[f"{a}, {b}", f"{r:+.3f}"] for a, b, r in pairs], caption=caption)


def _flag_dict(flag: Flag) -> dict:
    return {"code": flag.code, "message": flag.message, "data": json_safe(dict(flag.data))}


def _float(value) -> float:
    return math.nan if value is None else float(value)


def _criterion(value) -> float:
    """An information criterion; null (written for inf) reads back as inf, the worst."""
    return math.inf if value is None else float(value)


def _array(values) -> np.ndarray:
    if not values:
        return np.array([], dtype=float)
    return np.array([np.nan if v is None else v for v in values], dtype=float)


def _require(d) -> None:
    if not isinstance(d, dict) or "model" not in d or not isinstance(d.get("params"), dict):
        keys = ", ".join(sorted(d)) if isinstance(d, dict) else type(d).__name__
        raise FitError(
            "A saved fit needs a 'model' name and a 'params' table "
            f"(as written by FitResult.to_dict); got: {keys or 'nothing'}."
        )
    declaration = get_model(d["model"])
    missing = [n for n in declaration.parameter_names
               if not isinstance(d["params"].get(n), dict) or d["params"][n].get("value") is None]
    if missing:
        raise FitError(
            f"The saved {declaration.name} fit has no value for {', '.join(missing)}; "
            f"it needs {', '.join(declaration.parameter_names)}."
        )
