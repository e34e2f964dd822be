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

import numpy as np

from rheofit.errors import ModelNameError, choice_message
from rheofit.models import closed_forms as cf
from rheofit.models.declaration import Parameter, ViscosityModel


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
        extras={**_flow_extras(cf.newtonian_tube_flow_rate, cf.newtonian_slit_flow_rate),
                "rectangle_flow_rate": cf.newtonian_rectangle_flow_rate},
    ),
    ViscosityModel(
        "power_law", "Power law (Ostwald-de Waele)", "tau = K * gamma_dot^n",
        (_K, _index("n", 3.0, "power-law index (<1 shear-thinning, >1 shear-thickening)")),
        power_law_stress, _power_law_guess,
        "Ostwald, W. (1925) Kolloid-Z. 36, 99-117; de Waele, A. (1923) J. Oil Colour Chem. Assoc. 6, 33-88",
        extras=_flow_extras(cf.power_law_tube_flow_rate, cf.power_law_slit_flow_rate),
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
        extras=_flow_extras(cf.bingham_tube_flow_rate, cf.bingham_slit_flow_rate),
    ),
    ViscosityModel(
        "herschel_bulkley", "Herschel-Bulkley", "tau = tau_y + K * gamma_dot^n",
        (_TAU_Y, _K, _index("n", 3.0, "power-law index")),
        herschel_bulkley_stress, _herschel_bulkley_guess,
        "Herschel, W.H. & Bulkley, R. (1926) Kolloid-Z. 39, 291-300",
        yield_stress_function=_tau_y,
        extras=_flow_extras(cf.herschel_bulkley_tube_flow_rate, cf.herschel_bulkley_slit_flow_rate),
    ),
    ViscosityModel(
        "casson", "Casson", "sqrt(tau) = sqrt(tau_y) + sqrt(mu_c * gamma_dot)",
        (_TAU_Y, _viscosity_param("mu_c", "Casson viscosity")),
        casson_stress, _casson_guess,
        "Casson, N. (1959) in Rheology of Disperse Systems (C.C. Mill, ed.), Pergamon, 84-104",
        yield_stress_function=_tau_y,
        extras=_flow_extras(cf.casson_tube_flow_rate, cf.casson_slit_flow_rate),
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
