"""The registry of viscosity models: each model is declared exactly once.

A declaration holds the SI stress function tau(gamma_dot; params), the
parameter specs (symbol, SI unit, bounds, meaning), a data-driven initial
guess, the yield stress, the equation as text and its published source.
Fitting, the flow engine, plots, reports, the CLI and the tests iterate over
:data:`MODELS`; adding a model means adding one declaration here.

Units: shear rate gamma_dot [1/s], stress tau [Pa], viscosity eta [Pa*s].

>>> round(float(MODELS["power_law"].viscosity(10.0, K=2.0, n=0.5)), 6)
0.632456
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import ModelNameError, ParameterError, choice_message


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


# --- shared parameter specs ------------------------------------------------

_VISC_UP = 1e9
_N_LOW = 0.01


def _viscosity_param(name: str, meaning: str, lower: float = 1e-12) -> Parameter:
    return Parameter(name, "Pa*s", lower, _VISC_UP, meaning, positive_scale=lower > 0)


_ETA0 = _viscosity_param("eta0", "zero-shear viscosity (low-shear plateau)")
_ETA_INF = _viscosity_param("eta_inf", "infinite-shear viscosity (high-shear plateau)", lower=0.0)
_LAM = Parameter("lam", "s", 1e-9, 1e6, "time constant; 1/lam is the onset of shear thinning")
_TAU_Y = Parameter("tau_y", "Pa", 0.0, 1e7, "yield stress", positive_scale=False)
_K = Parameter("K", "Pa*s^n", 1e-12, 1e9, "consistency index (SI unit depends on n)")


def _index(name: str, upper: float, meaning: str) -> Parameter:
    return Parameter(name, "1", _N_LOW, upper, meaning, positive_scale=False)


# --- guesses: cheap, robust, from the data ---------------------------------

def _loglog_line(rate, stress):
    """Slope and intercept of log10(stress) vs log10(rate)."""
    slope, intercept = np.polyfit(np.log10(rate), np.log10(stress), 1)
    return float(slope), float(10.0 ** intercept)


def _plateau_guess(rate, stress):
    """eta0, eta_inf, lam and the high-shear slope for plateau models."""
    order = np.argsort(rate)
    rate, stress = rate[order], stress[order]
    eta = stress / rate
    eta0 = float(np.max(eta[: max(2, len(eta) // 5)]))
    eta_inf = float(np.min(eta)) * 0.01
    half = np.nonzero(eta <= 0.5 * eta0)[0]
    lam = 1.0 / float(rate[half[0]]) if half.size else 1.0 / float(rate[-1])
    tail = max(3, len(rate) // 3)
    slope, _ = _loglog_line(rate[-tail:], stress[-tail:])
    return eta0, eta_inf, lam, float(np.clip(slope, 0.05, 1.0))


def _newtonian_guess(rate, stress):
    return {"mu": float(np.median(stress / rate))}


def _power_law_guess(rate, stress):
    n, K = _loglog_line(rate, stress)
    return {"K": K, "n": n}


def _carreau_guess(rate, stress):
    eta0, eta_inf, lam, n = _plateau_guess(rate, stress)
    return {"eta0": eta0, "eta_inf": eta_inf, "lam": lam, "n": n}


def _carreau_yasuda_guess(rate, stress):
    return {**_carreau_guess(rate, stress), "a": 2.0}


def _cross_guess(rate, stress):
    eta0, eta_inf, lam, n = _plateau_guess(rate, stress)
    return {"eta0": eta0, "eta_inf": eta_inf, "lam": lam, "m": 1.0 - n if n < 0.95 else 0.5}


def _sisko_guess(rate, stress):
    eta_inf = 0.5 * float(np.min(stress / rate))
    excess = np.clip(stress - eta_inf * rate, 1e-300, None)
    n, K = _loglog_line(rate, excess)
    return {"eta_inf": eta_inf, "K": K, "n": n}


def _bingham_guess(rate, stress):
    upper = rate >= np.median(rate)
    slope, intercept = np.polyfit(rate[upper], stress[upper], 1)
    tau_y = float(np.clip(intercept, 0.05 * stress.min(), 0.95 * stress.min()))
    return {"tau_y": tau_y, "mu_p": max(float(slope), float(np.min(stress / rate)) * 1e-3)}


def _herschel_bulkley_guess(rate, stress):
    tau_y = 0.5 * float(np.min(stress))
    n, K = _loglog_line(rate, stress - tau_y)
    return {"tau_y": tau_y, "K": K, "n": n}


def _casson_guess(rate, stress):
    slope, intercept = np.polyfit(np.sqrt(rate), np.sqrt(stress), 1)
    tau_y = float(np.clip(intercept, 0.05, 0.95) if intercept < 0 else intercept) ** 2
    tau_y = min(tau_y, 0.9 * float(stress.min()))
    return {"tau_y": tau_y, "mu_c": max(float(slope) ** 2, 1e-9)}


# --- stress functions (SI): the equations, each with its source -----------

def newtonian_stress(rate, mu):
    """tau = mu * gamma_dot.  Newton's law of viscosity (Newton 1687; Stokes 1845)."""
    return mu * rate


def power_law_stress(rate, K, n):
    """tau = K * gamma_dot**n.  Ostwald (1925) Kolloid-Z. 36, 99; de Waele (1923)."""
    return K * rate**n


def carreau_stress(rate, eta0, eta_inf, lam, n):
    """eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)**2)**((n-1)/2).

    Carreau, P.J. (1972) Trans. Soc. Rheol. 16, 99-127.
    """
    return (eta_inf + (eta0 - eta_inf) * (1.0 + (lam * rate) ** 2) ** ((n - 1.0) / 2.0)) * rate


def carreau_yasuda_stress(rate, eta0, eta_inf, lam, n, a):
    """eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)**a)**((n-1)/a).

    Yasuda, Armstrong & Cohen (1981) Rheol. Acta 20, 163-178.
    """
    return (eta_inf + (eta0 - eta_inf) * (1.0 + (lam * rate) ** a) ** ((n - 1.0) / a)) * rate


def cross_stress(rate, eta0, eta_inf, lam, m):
    """eta = eta_inf + (eta0 - eta_inf) / (1 + (lam*gamma_dot)**m).

    Cross, M.M. (1965) J. Colloid Sci. 20, 417-437.
    """
    return (eta_inf + (eta0 - eta_inf) / (1.0 + (lam * rate) ** m)) * rate


def sisko_stress(rate, eta_inf, K, n):
    """eta = eta_inf + K * gamma_dot**(n-1).  Sisko, A.W. (1958) Ind. Eng. Chem. 50, 1789-1792."""
    return eta_inf * rate + K * rate**n


def bingham_stress(rate, tau_y, mu_p):
    """tau = tau_y + mu_p * gamma_dot (gamma_dot > 0).

    Bingham, E.C. (1916) Bull. Bur. Standards 13, 309-353.
    """
    return tau_y + mu_p * rate


def herschel_bulkley_stress(rate, tau_y, K, n):
    """tau = tau_y + K * gamma_dot**n (gamma_dot > 0).

    Herschel, W.H. & Bulkley, R. (1926) Kolloid-Z. 39, 291-300.
    """
    return tau_y + K * rate**n


def casson_stress(rate, tau_y, mu_c):
    """sqrt(tau) = sqrt(tau_y) + sqrt(mu_c * gamma_dot) (gamma_dot > 0).

    Casson, N. (1959) in Rheology of Disperse Systems (ed. Mill), Pergamon, 84-104.
    """
    return (np.sqrt(tau_y) + np.sqrt(mu_c * rate)) ** 2


# --- closed-form laminar flow rates: optional fast paths of the flow engine --
# Hooks in a declaration's ``extras``: "tube_flow_rate"(tau_w, radius, **params)
# and "slit_flow_rate"(tau_w, half_gap, width, **params) -> Q [m^3/s], with the
# wall shear stress tau_w [Pa].  rheofit.flow checks them against its generic
# (Rabinowitsch-Mooney) path; they return 0 at or below a yield stress.

def _yield_ratio(tau_w, tau_y):
    """(phi, 1 - phi) with phi = tau_y / tau_w capped at 1 (no flow) [-].

    1 - phi is formed as (tau_w - tau_y) / tau_w, exact near the yield stress.
    """
    tau_w = np.asarray(tau_w, dtype=float)
    return np.minimum(tau_y / tau_w, 1.0), np.maximum(tau_w - tau_y, 0.0) / tau_w


def newtonian_tube_flow_rate(tau_w, radius, mu):
    """Q = pi R^3 tau_w / (4 mu): Hagen (1839), Poiseuille (1840)."""
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu)


def newtonian_slit_flow_rate(tau_w, half_gap, width, mu):
    """Q = 2 W h^2 tau_w / (3 mu): plane Poiseuille flow (Bird, Stewart & Lightfoot 2002, ch. 2)."""
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu)


def power_law_tube_flow_rate(tau_w, radius, K, n):
    """Q = pi n R^3 / (3n + 1) * (tau_w / K)^(1/n): Skelland (1967); Chhabra & Richardson (2008), ch. 3."""
    return np.pi * n * radius**3 / (3.0 * n + 1.0) * (np.asarray(tau_w, dtype=float) / K) ** (1.0 / n)


def power_law_slit_flow_rate(tau_w, half_gap, width, K, n):
    """Q = 2 n W h^2 / (2n + 1) * (tau_w / K)^(1/n): Skelland (1967); Chhabra & Richardson (2008)."""
    return 2.0 * n * width * half_gap**2 / (2.0 * n + 1.0) * (np.asarray(tau_w, dtype=float) / K) ** (1.0 / n)


def bingham_tube_flow_rate(tau_w, radius, tau_y, mu_p):
    """Q = pi R^3 tau_w / (4 mu_p) * (1 - 4/3 phi + 1/3 phi^4): Buckingham (1921); Reiner (1926).

    Evaluated as (1 - phi)^2 (3 + 2 phi + phi^2) / 3, free of cancellation near phi = 1.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu_p) * (
        rest**2 * (3.0 + 2.0 * phi + phi**2) / 3.0)


def bingham_slit_flow_rate(tau_w, half_gap, width, tau_y, mu_p):
    """Q = 2 W h^2 tau_w / (3 mu_p) * (1 - 3/2 phi + 1/2 phi^3): Buckingham (1921), slit form.

    Evaluated as (1 - phi)^2 (2 + phi) / 2.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu_p) * (
        rest**2 * (2.0 + phi) / 2.0)


def herschel_bulkley_tube_flow_rate(tau_w, radius, tau_y, K, n):
    """Q = pi R^3 (tau_w/K)^(1/n) (1-phi)^(1+1/n) [(1-phi)^2/(3+1/n) + 2 phi (1-phi)/(2+1/n) + phi^2/(1+1/n)].

    Chhabra & Richardson (2008), ch. 3 (Herschel-Bulkley fluid in a pipe).
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    m = 1.0 / n
    bracket = rest**2 / (3 + m) + 2 * phi * rest / (2 + m) + phi**2 / (1 + m)
    # (tau_w/K)^(1/n) (1-phi)^(1/n) = ((tau_w - tau_y)/K)^(1/n), the wall shear rate: no overflow
    rate = (np.maximum(np.asarray(tau_w, dtype=float) - tau_y, 0.0) / K) ** m
    return np.pi * radius**3 * rate * rest * bracket


def herschel_bulkley_slit_flow_rate(tau_w, half_gap, width, tau_y, K, n):
    """Q = 2 W h^2 (tau_w/K)^(1/n) (1-phi)^(1+1/n) [(1-phi)/(2+1/n) + phi/(1+1/n)] (slit form)."""
    phi, rest = _yield_ratio(tau_w, tau_y)
    m = 1.0 / n
    bracket = rest / (2 + m) + phi / (1 + m)
    rate = (np.maximum(np.asarray(tau_w, dtype=float) - tau_y, 0.0) / K) ** m
    return 2.0 * width * half_gap**2 * rate * rest * bracket


def casson_tube_flow_rate(tau_w, radius, tau_y, mu_c):
    """Q = pi R^3 tau_w / (4 mu_c) * (1 - 16/7 sqrt(phi) + 4/3 phi - 1/21 phi^4): Casson (1959).

    Evaluated with t = sqrt(phi) as (1-t)^2 (21 - 6t - 5t^2 - 4t^3 - 3t^4 - 2t^5 - t^6) / 21.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    t = np.sqrt(phi)
    gap = rest / (1.0 + t)  # 1 - sqrt(phi)
    poly = 21.0 - t * (6.0 + t * (5.0 + t * (4.0 + t * (3.0 + t * (2.0 + t)))))
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu_c) * gap**2 * poly / 21.0


def casson_slit_flow_rate(tau_w, half_gap, width, tau_y, mu_c):
    """Q = 2 W h^2 tau_w / (3 mu_c) * (1 - 12/5 sqrt(phi) + 3/2 phi - 1/10 phi^3) (slit form of Casson 1959).

    Evaluated with t = sqrt(phi) as (1-t)^2 (10 - 4t - 3t^2 - 2t^3 - t^4) / 10.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    t = np.sqrt(phi)
    gap = rest / (1.0 + t)
    poly = 10.0 - t * (4.0 + t * (3.0 + t * (2.0 + t)))
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu_c) * gap**2 * poly / 10.0


def _flow_extras(tube, slit) -> dict:
    return {"tube_flow_rate": tube, "slit_flow_rate": slit}


def _tau_y(tau_y, **_):
    return tau_y


def _eta0(eta0, **_):
    return eta0


_MODELS = (
    ViscosityModel(
        "newtonian", "Newtonian", "tau = mu * gamma_dot",
        (_viscosity_param("mu", "dynamic viscosity"),),
        newtonian_stress, _newtonian_guess,
        "Newton (1687) Principia, Book II, Sect. IX; Stokes (1845) Trans. Camb. Phil. Soc. 8, 287",
        zero_shear_viscosity_function=lambda mu: mu,
        extras=_flow_extras(newtonian_tube_flow_rate, newtonian_slit_flow_rate),
    ),
    ViscosityModel(
        "power_law", "Power law (Ostwald-de Waele)", "tau = K * gamma_dot^n",
        (_K, _index("n", 3.0, "power-law index (<1 shear-thinning, >1 shear-thickening)")),
        power_law_stress, _power_law_guess,
        "Ostwald, W. (1925) Kolloid-Z. 36, 99-117; de Waele, A. (1923) J. Oil Colour Chem. Assoc. 6, 33-88",
        extras=_flow_extras(power_law_tube_flow_rate, power_law_slit_flow_rate),
    ),
    ViscosityModel(
        "carreau", "Carreau",
        "eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)^2)^((n-1)/2)",
        (_ETA0, _ETA_INF, _LAM, _index("n", 1.5, "power-law index of the shear-thinning region")),
        carreau_stress, _carreau_guess,
        "Carreau, P.J. (1972) Trans. Soc. Rheol. 16, 99-127",
        zero_shear_viscosity_function=_eta0,
    ),
    ViscosityModel(
        "carreau_yasuda", "Carreau-Yasuda",
        "eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)^a)^((n-1)/a)",
        (_ETA0, _ETA_INF, _LAM, _index("n", 1.5, "power-law index of the shear-thinning region"),
         Parameter("a", "1", 0.1, 10.0, "Yasuda transition sharpness", positive_scale=True)),
        carreau_yasuda_stress, _carreau_yasuda_guess,
        "Yasuda, K., Armstrong, R.C. & Cohen, R.E. (1981) Rheol. Acta 20, 163-178",
        zero_shear_viscosity_function=_eta0,
    ),
    ViscosityModel(
        "cross", "Cross", "eta = eta_inf + (eta0 - eta_inf) / (1 + (lam*gamma_dot)^m)",
        (_ETA0, _ETA_INF, _LAM, _index("m", 1.0, "Cross rate constant (1 - m is the power-law index)")),
        cross_stress, _cross_guess,
        "Cross, M.M. (1965) J. Colloid Sci. 20, 417-437",
        zero_shear_viscosity_function=_eta0,
    ),
    ViscosityModel(
        "sisko", "Sisko", "eta = eta_inf + K * gamma_dot^(n-1)",
        (_ETA_INF, _K, _index("n", 1.5, "power-law index")),
        sisko_stress, _sisko_guess,
        "Sisko, A.W. (1958) Ind. Eng. Chem. 50, 1789-1792",
    ),
    ViscosityModel(
        "bingham", "Bingham plastic", "tau = tau_y + mu_p * gamma_dot",
        (_TAU_Y, _viscosity_param("mu_p", "plastic viscosity")),
        bingham_stress, _bingham_guess,
        "Bingham, E.C. (1916) Bull. Bur. Standards 13, 309-353",
        yield_stress_function=_tau_y,
        extras=_flow_extras(bingham_tube_flow_rate, bingham_slit_flow_rate),
    ),
    ViscosityModel(
        "herschel_bulkley", "Herschel-Bulkley", "tau = tau_y + K * gamma_dot^n",
        (_TAU_Y, _K, _index("n", 3.0, "power-law index")),
        herschel_bulkley_stress, _herschel_bulkley_guess,
        "Herschel, W.H. & Bulkley, R. (1926) Kolloid-Z. 39, 291-300",
        yield_stress_function=_tau_y,
        extras=_flow_extras(herschel_bulkley_tube_flow_rate, herschel_bulkley_slit_flow_rate),
    ),
    ViscosityModel(
        "casson", "Casson", "sqrt(tau) = sqrt(tau_y) + sqrt(mu_c * gamma_dot)",
        (_TAU_Y, _viscosity_param("mu_c", "Casson viscosity")),
        casson_stress, _casson_guess,
        "Casson, N. (1959) in Rheology of Disperse Systems (C.C. Mill, ed.), Pergamon, 84-104",
        yield_stress_function=_tau_y,
        extras=_flow_extras(casson_tube_flow_rate, casson_slit_flow_rate),
    ),
)

#: name -> declaration, in a fixed order
MODELS: dict[str, ViscosityModel] = {m.name: m for m in _MODELS}


def get_model(name) -> ViscosityModel:
    """Look a model up by name (a declaration passes through unchanged).

    Raises ModelNameError listing the valid names and the nearest one.
    """
    if isinstance(name, ViscosityModel):
        return name
    key = str(name).strip().lower().replace("-", "_").replace(" ", "_")
    try:
        return MODELS[key]
    except KeyError:
        raise ModelNameError(choice_message("model", str(name), MODELS)) from None
