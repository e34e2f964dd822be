"""The model registry: one table of parameters drives checks for every model."""

import math

import numpy as np
import pytest

from rheofit.errors import ModelNameError, ParameterError
from rheofit.fluid import as_fluid, fluid
from rheofit.models import MODELS, get_model

#: a physically sensible parameter set per model (registry-wide table)
TYPICAL = {
    "newtonian": dict(mu=0.01),
    "power_law": dict(K=2.0, n=0.5),
    "carreau": dict(eta0=1.0, eta_inf=0.001, lam=1.0, n=0.4),
    "carreau_yasuda": dict(eta0=1.0, eta_inf=0.001, lam=1.0, n=0.4, a=1.5),
    "cross": dict(eta0=1.0, eta_inf=0.001, lam=1.0, m=0.7),
    "sisko": dict(eta_inf=0.01, K=1.0, n=0.3),
    "bingham": dict(tau_y=1.0, mu_p=0.01),
    "herschel_bulkley": dict(tau_y=1.0, K=0.5, n=0.6),
    "casson": dict(tau_y=0.5, mu_c=0.004),
}


def test_table_covers_registry():
    assert set(TYPICAL) == set(MODELS)


@pytest.mark.parametrize("name", MODELS)
def test_declaration_is_complete(name):
    m = MODELS[name]
    assert m.reference and m.equation and m.title
    assert m.stress_function.__doc__, "the stress function documents its equation"
    for p in m.parameters:
        assert p.lower < p.upper and p.unit and p.meaning


@pytest.mark.parametrize("name", MODELS)
def test_stress_is_positive_and_increasing(name):
    # common practice, no source: a steady flow curve of a stable fluid is monotone
    rate = np.logspace(-4, 5, 200)
    stress = MODELS[name].stress(rate, **TYPICAL[name])
    assert np.all(stress > 0) and np.all(np.diff(stress) > 0)


@pytest.mark.parametrize("name", MODELS)
def test_guess_recovers_noise_free_parameters_roughly(name):
    rate = np.logspace(-1, 3, 30)
    m = MODELS[name]
    guess = m.guess(rate, m.stress(rate, **TYPICAL[name]))
    assert set(guess) == set(m.parameter_names)
    model_eta = m.viscosity(rate, **guess)
    true_eta = m.viscosity(rate, **TYPICAL[name])
    # a starting point within a factor 3 everywhere on the data is good enough
    assert np.max(np.abs(np.log(model_eta / true_eta))) < math.log(3.0)


# Newtonian limits follow from each published equation (sources in models.py)
NEWTONIAN_LIMITS = [
    ("power_law", dict(K=0.02, n=1.0)),
    ("carreau", dict(eta0=0.02, eta_inf=0.02, lam=3.0, n=0.3)),
    ("carreau", dict(eta0=0.02, eta_inf=0.0, lam=3.0, n=1.0)),
    ("carreau_yasuda", dict(eta0=0.02, eta_inf=0.0, lam=3.0, n=1.0, a=0.7)),
    ("cross", dict(eta0=0.02, eta_inf=0.02, lam=3.0, m=0.5)),
    ("sisko", dict(eta_inf=0.01, K=0.01, n=1.0)),
    ("bingham", dict(tau_y=0.0, mu_p=0.02)),
    ("herschel_bulkley", dict(tau_y=0.0, K=0.02, n=1.0)),
    ("casson", dict(tau_y=0.0, mu_c=0.02)),
]


@pytest.mark.parametrize("name,params", NEWTONIAN_LIMITS)
def test_newtonian_limits(name, params):
    rate = np.logspace(-3, 4, 20)
    np.testing.assert_allclose(MODELS[name].viscosity(rate, **params), 0.02, rtol=1e-12)


def test_cross_half_way_at_inverse_time_constant():
    # Cross (1965): at lam*gamma_dot = 1 the viscosity is half-way between the plateaus
    eta = MODELS["cross"].viscosity(1 / 0.25, eta0=2.0, eta_inf=0.2, lam=0.25, m=0.8)
    assert eta == pytest.approx(1.1, rel=1e-12)


def test_carreau_power_law_asymptote():
    # Carreau (1972): for lam*gamma_dot >> 1 and eta_inf = 0, eta -> eta0 (lam*gamma_dot)^(n-1)
    rate = 1e6
    eta = MODELS["carreau"].viscosity(rate, eta0=5.0, eta_inf=0.0, lam=2.0, n=0.4)
    assert eta == pytest.approx(5.0 * (2.0 * rate) ** (0.4 - 1.0), rel=1e-9)


def test_casson_square_root_form():
    # Casson (1959): sqrt(tau) = sqrt(tau_y) + sqrt(mu_c * gamma_dot)
    tau = MODELS["casson"].stress(16.0, tau_y=4.0, mu_c=0.25)
    assert tau == pytest.approx((2.0 + 2.0) ** 2, rel=1e-12)


@pytest.mark.parametrize("name", MODELS)
def test_yield_stress_and_plateau(name):
    m = MODELS[name]
    params = TYPICAL[name]
    assert m.yield_stress(**params) == params.get("tau_y", 0.0)
    eta0 = m.zero_shear_viscosity(**params)
    if eta0 is not None:  # the low-rate limit of the viscosity is the declared plateau
        assert m.viscosity(1e-9, **params) == pytest.approx(eta0, rel=1e-6)


def test_get_model_accepts_spellings_and_declarations():
    assert get_model("Herschel-Bulkley").name == "herschel_bulkley"
    assert get_model(MODELS["cross"]) is MODELS["cross"]


def test_unknown_model_lists_choices_and_suggests():
    with pytest.raises(ModelNameError) as info:
        get_model("carreu")
    message = str(info.value)
    assert "'carreau'" in message and "power_law" in message and "Did you mean" in message


def test_fluid_behaves_like_its_model():
    f = fluid("power_law", K=2.0, n=0.5)
    assert f.model == "power_law" and f.shear_rate_range is None
    assert f.viscosity(4.0) == pytest.approx(1.0)
    assert as_fluid(f) is f
    assert f.to_dict()["params"]["K"]["value"] == 2.0


def test_fluid_unknown_parameter_suggests_nearest():
    with pytest.raises(ParameterError, match="Did you mean 'tau_y'"):
        fluid("bingham", tauy=1.0, mu_p=0.1)


def test_fluid_missing_parameter_is_named():
    with pytest.raises(ParameterError, match="missing: n"):
        fluid("power_law", K=1.0)


def test_fluid_out_of_range_value():
    with pytest.raises(ParameterError, match="outside its physical range"):
        fluid("power_law", K=-1.0, n=0.5)


def test_as_fluid_rejects_other_objects():
    with pytest.raises(ParameterError, match="Expected a fluid"):
        as_fluid(42)


def test_check_rejects_unknown_parameter_name():
    with pytest.raises(ParameterError, match="Unknown cross parameter 'n'; choose one of: eta0, eta_inf, lam, m"):
        MODELS["cross"].parameter("n")
