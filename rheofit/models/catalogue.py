"""The registry of viscosity models: each model is declared exactly once.

A declaration holds the SI stress function tau(gamma_dot; params), the
parameter specs (symbol, SI unit, bounds, meaning), a data-driven initial
guess, the yield stress, the equation as text and its published source.
Fitting, the flow engine, plots, reports, the CLI and the tests iterate over
:data:`MODELS`; adding a model means adding one declaration here, with its
example values and a shear-rate range that resolves them (the registry-wide
tests are built from these).  A model given by its inverse, gamma_dot(tau),
declares ``shear_rate_function`` and no stress function (Ellis).

Bounds follow physics.  A parameter's box is where the law keeps its
meaning (eta0 a low-shear plateau, an exponent that thins, ...); it is not
narrowed to keep the flow curve monotone at every shear rate.  Where a law
can turn down (Cross with m > 1 and eta_inf = 0, the stress, scaled by
eta0/lam, is x / (1 + x^m) with x = lam*gamma_dot, rising only below
x = (1/(m-1))^(1/m); Williamson with n < 0 likewise), the rule is:

- a fit must rise over the measured range: the fitter rejects any trial
  whose stress falls anywhere between the lowest and highest measured
  shear rate (:mod:`rheofit.fitting.problem`, generic, no model named);
- the flow engine works on the rising branch of the flow curve and refuses,
  in one sentence, an operating point beyond its top.

The exponents' boxes end where even the defining point lam*gamma_dot = 1
(half-way between the plateaus) is past the top: Cross m <= 2
(x = (1/(m-1))^(1/m) >= 1 exactly when m <= 2) and Williamson n >= -1.
One box is numerical, and says so: Ellis alpha <= 10 (high-stress index
1/alpha >= 0.1, about the most strongly thinning fluids; from memory).
Beyond it the Ellis curve bends so sharply in log-log that the flow
engine's fixed quadrature loses digits (measured on a slit: centre-line
velocity off by 2e-8 at alpha = 15 and 6e-7 at 26, against 2e-11 at 10).

A published Cross fit of blood has m = 1.028 (Cho & Kensey 1991, Biorheology
28, 241-262; from memory), inside this box.  Joint limits (eta_inf <= eta0)
are a declaration's ``constraint``, not a box.

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


def _williamson_guess(rate, stress):
    eta0, _, lam, n = _plateau_guess(rate, stress)
    return {"eta0": eta0, "lam": lam, "n": n}


def _ellis_guess(rate, stress):
    """tau_half is the stress where eta = eta0/2 (near 1/lam); the high-stress slope is 1/alpha."""
    eta0, _, lam, n = _plateau_guess(rate, stress)
    return {"eta0": eta0, "tau_half": 0.5 * eta0 / lam, "alpha": float(np.clip(1.0 / n, 1.05, 10.0))}


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


def williamson_stress(rate, eta0, lam, n):
    """eta = eta0 / (1 + (lam*gamma_dot)^(1-n)).

    The three-parameter form in use today (from memory; e.g. Bird, Armstrong
    & Hassager 1987, Dynamics of Polymeric Liquids vol. 1, 2nd ed., Wiley,
    ch. 4, list it among the generalized-Newtonian models).  Williamson (1929)
    Ind. Eng. Chem. 21, 1108-1111 wrote tau = A gamma_dot / (B + gamma_dot)
    + mu_inf gamma_dot (from memory), the case n = 0, mu_inf = 0 with
    A = eta0/lam, B = 1/lam.  It is Cross with eta_inf = 0 and m = 1 - n.
    """
    return eta0 * rate / (1.0 + (lam * rate) ** (1.0 - n))


def ellis_shear_rate(stress, eta0, tau_half, alpha):
    """gamma_dot = (tau / eta0) * (1 + (tau / tau_half)^(alpha - 1)), i.e. eta0/eta = 1 + (tau/tau_half)^(alpha-1).

    The Ellis model, defined by its inverse: tau_half is the stress at which
    eta = eta0/2, and 1/alpha the power-law index at high stress.  Bird,
    Armstrong & Hassager (1987) Dynamics of Polymeric Liquids vol. 1, 2nd
    ed., Wiley, ch. 4; Bird, Stewart & Lightfoot (2002) Transport
    Phenomena, 2nd ed., Wiley, ch. 8, with its tube flow rate (from
    memory; chapters not checked against the books).
    """
    return stress / eta0 * (1.0 + (stress / tau_half) ** (alpha - 1.0))


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


def _williamson_eta0(eta0, n, **_):
    """At n = 1 the law is Newtonian with eta0/2: (lam*gamma_dot)^0 = 1 at every rate."""
    return eta0 if n < 1.0 else 0.5 * eta0


def _ellis_eta0(eta0, alpha, **_):
    """At alpha = 1 the law is Newtonian with eta0/2: (tau/tau_half)^0 = 1 at every stress."""
    return eta0 if alpha > 1.0 else 0.5 * eta0


def _plateaus_in_order(eta0, eta_inf, **_):
    """eta_inf <= eta0: the high-shear plateau does not lie above the low-shear one."""
    if eta_inf <= eta0:
        return None
    return (f"eta_inf = {eta_inf:g} Pa*s is above eta0 = {eta0:g} Pa*s; the high-shear plateau "
            "cannot lie above the zero-shear plateau, so give eta_inf <= eta0.")


_MODELS = (
    ViscosityModel(
        "newtonian", "Newtonian", "tau = mu * gamma_dot",
        (_viscosity_param("mu", "dynamic viscosity"),),
        newtonian_stress, _newtonian_guess,
        "Newton (1687) Principia, Book II, Sect. IX; Stokes (1845) Trans. Camb. Phil. Soc. 8, 287",
        zero_shear_viscosity_function=lambda mu: mu,
        extras={**_flow_extras(cf.newtonian_tube_flow_rate, cf.newtonian_slit_flow_rate),
                "rectangle_flow_rate": cf.newtonian_rectangle_flow_rate},
        example={"mu": 0.05}, example_range=(0.1, 1e3),
    ),
    ViscosityModel(
        "power_law", "Power law (Ostwald-de Waele)", "tau = K * gamma_dot^n",
        (_K, _index("n", 3.0, "power-law index (<1 shear-thinning, >1 shear-thickening)")),
        power_law_stress, _power_law_guess,
        "Ostwald, W. (1925) Kolloid-Z. 36, 99-117; de Waele, A. (1923) J. Oil Colour Chem. Assoc. 6, 33-88",
        extras=_flow_extras(cf.power_law_tube_flow_rate, cf.power_law_slit_flow_rate),
        example={"K": 2.0, "n": 0.45}, example_range=(0.1, 1e3),
    ),
    ViscosityModel(
        "carreau", "Carreau",
        "eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)^2)^((n-1)/2)",
        (_ETA0, _ETA_INF, _LAM, _index("n", 1.5, "power-law index of the shear-thinning region")),
        carreau_stress, _carreau_guess,
        "Carreau, P.J. (1972) Trans. Soc. Rheol. 16, 99-127",
        zero_shear_viscosity_function=_eta0, constraint=_plateaus_in_order,
        example={"eta0": 10.0, "eta_inf": 0.01, "lam": 2.0, "n": 0.35}, example_range=(1e-3, 1e6),
    ),
    ViscosityModel(
        "carreau_yasuda", "Carreau-Yasuda",
        "eta = eta_inf + (eta0 - eta_inf) * (1 + (lam*gamma_dot)^a)^((n-1)/a)",
        (_ETA0, _ETA_INF, _LAM, _index("n", 1.5, "power-law index of the shear-thinning region"),
         Parameter("a", "1", 0.1, 10.0, "Yasuda transition sharpness", positive_scale=True)),
        carreau_yasuda_stress, _carreau_yasuda_guess,
        "Yasuda, K., Armstrong, R.C. & Cohen, R.E. (1981) Rheol. Acta 20, 163-178",
        zero_shear_viscosity_function=_eta0, constraint=_plateaus_in_order,
        example={"eta0": 5.0, "eta_inf": 0.005, "lam": 0.5, "n": 0.3, "a": 0.7},
        example_range=(1e-4, 1e6),
    ),
    ViscosityModel(
        "cross", "Cross", "eta = eta_inf + (eta0 - eta_inf) / (1 + (lam*gamma_dot)^m)",
        (_ETA0, _ETA_INF, _LAM,
         _index("m", 2.0, "Cross rate constant (1 - m is the power-law index; above 1 the curve "
                          "may turn down at high shear, see the module notes)")),
        cross_stress, _cross_guess,
        "Cross, M.M. (1965) J. Colloid Sci. 20, 417-437",
        zero_shear_viscosity_function=_eta0, constraint=_plateaus_in_order,
        example={"eta0": 20.0, "eta_inf": 0.02, "lam": 0.3, "m": 0.75}, example_range=(1e-3, 1e6),
    ),
    ViscosityModel(
        "sisko", "Sisko", "eta = eta_inf + K * gamma_dot^(n-1)",
        (_ETA_INF, _K, _index("n", 1.5, "power-law index")),
        sisko_stress, _sisko_guess,
        "Sisko, A.W. (1958) Ind. Eng. Chem. 50, 1789-1792",
        example={"eta_inf": 0.05, "K": 3.0, "n": 0.25}, example_range=(0.1, 1e5),
    ),
    ViscosityModel(
        "bingham", "Bingham plastic", "tau = tau_y + mu_p * gamma_dot",
        (_TAU_Y, _viscosity_param("mu_p", "plastic viscosity")),
        bingham_stress, _bingham_guess,
        "Bingham, E.C. (1916) Bull. Bur. Standards 13, 309-353",
        yield_stress_function=_tau_y,
        extras=_flow_extras(cf.bingham_tube_flow_rate, cf.bingham_slit_flow_rate),
        example={"tau_y": 5.0, "mu_p": 0.1}, example_range=(0.1, 1e3),
    ),
    ViscosityModel(
        "herschel_bulkley", "Herschel-Bulkley", "tau = tau_y + K * gamma_dot^n",
        (_TAU_Y, _K, _index("n", 3.0, "power-law index")),
        herschel_bulkley_stress, _herschel_bulkley_guess,
        "Herschel, W.H. & Bulkley, R. (1926) Kolloid-Z. 39, 291-300",
        yield_stress_function=_tau_y,
        extras=_flow_extras(cf.herschel_bulkley_tube_flow_rate, cf.herschel_bulkley_slit_flow_rate),
        example={"tau_y": 10.0, "K": 2.0, "n": 0.5}, example_range=(0.01, 1e3),
    ),
    ViscosityModel(
        "casson", "Casson", "sqrt(tau) = sqrt(tau_y) + sqrt(mu_c * gamma_dot)",
        (_TAU_Y, _viscosity_param("mu_c", "Casson viscosity")),
        casson_stress, _casson_guess,
        "Casson, N. (1959) in Rheology of Disperse Systems (C.C. Mill, ed.), Pergamon, 84-104",
        yield_stress_function=_tau_y,
        extras=_flow_extras(cf.casson_tube_flow_rate, cf.casson_slit_flow_rate),
        example={"tau_y": 0.5, "mu_c": 0.004}, example_range=(0.01, 1e3),
    ),
    ViscosityModel(
        "williamson", "Williamson", "eta = eta0 / (1 + (lam*gamma_dot)^(1-n))",
        (_ETA0, _LAM,
         Parameter("n", "1", -1.0, 1.0, "power-law index of the shear-thinning region (below 0 "
                   "the stress peaks, see the module notes)", positive_scale=False)),
        williamson_stress, _williamson_guess,
        "Williamson, R.V. (1929) Ind. Eng. Chem. 21, 1108-1111 (the original two-constant law); "
        "the three-parameter form as in Bird, Armstrong & Hassager (1987), Dynamics of Polymeric "
        "Liquids vol. 1, ch. 4 (from memory)",
        zero_shear_viscosity_function=_williamson_eta0,
        example={"eta0": 10.0, "lam": 0.5, "n": 0.3}, example_range=(1e-3, 1e4),
    ),
    ViscosityModel(
        "ellis", "Ellis", "gamma_dot = (tau/eta0) * (1 + (tau/tau_half)^(alpha-1))",
        (_ETA0, Parameter("tau_half", "Pa", 1e-9, 1e9, "stress at which eta = eta0/2"),
         Parameter("alpha", "1", 1.0, 10.0, "Ellis exponent (1/alpha is the power-law "
                   "index at high stress; 1 is Newtonian)", positive_scale=False)),
        None, _ellis_guess,
        "Ellis model as given in Bird, Armstrong & Hassager (1987) Dynamics of Polymeric Liquids "
        "vol. 1, 2nd ed., ch. 4, and Bird, Stewart & Lightfoot (2002) Transport Phenomena, "
        "2nd ed., ch. 8 (from memory)",
        zero_shear_viscosity_function=_ellis_eta0,
        extras=_flow_extras(cf.ellis_tube_flow_rate, cf.ellis_slit_flow_rate),
        shear_rate_function=ellis_shear_rate,
        example={"eta0": 1.0, "tau_half": 5.0, "alpha": 2.5}, example_range=(1e-2, 1e4),
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
