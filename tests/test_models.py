"""The model registry: each declaration's example values drive checks for every model."""

import math

import numpy as np
import pytest

from rheofit.errors import DeclarationError, ModelNameError, ParameterError
from rheofit.fluid import as_fluid, fluid
from rheofit.models import MODELS, Parameter, ViscosityModel, get_model
from rheofit.models.declaration import monotone_inverse

#: a physically sensible parameter set per model (registry-wide table), from the declarations
TYPICAL = {name: dict(m.example) for name, m in MODELS.items()}


def test_table_covers_registry():
    assert set(TYPICAL) == set(MODELS)
    for m in MODELS.values():
        assert set(m.example) == set(m.parameter_names)
        low, high = m.example_range
        assert 0 < low < high


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
    # a common sweep of 0.1-1000 1/s: over a full example range, where both plateaus show, the
    # plateau guesses are rougher than this (the fit's restarts cope; see test_fitting)
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
    # (lam*gamma_dot)^0 = 1 and (tau/tau_half)^0 = 1: half of eta0 at every rate
    ("williamson", dict(eta0=0.04, lam=3.0, n=1.0)),
    ("ellis", dict(eta0=0.04, tau_half=3.0, alpha=1.0)),
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


# --- declarations check themselves -------------------------------------------------------

def _declare(stress, **overrides):
    """A throwaway one-parameter declaration (invented, for the self-checks)."""
    fields = dict(example={"c": 1.0}, example_range=(0.1, 10.0))
    fields.update(overrides)
    return ViscosityModel("toy", "Toy", "tau = c * gamma_dot",
                          (Parameter("c", "Pa*s", 1e-6, 1e6, "a constant"),),
                          stress, lambda rate, stress: {"c": 1.0}, "invented", **fields)


def test_a_stress_function_with_other_names_is_refused_when_declared():
    with pytest.raises(DeclarationError, match=r"model 'toy'.*needs k, not declared.*does not take c"):
        _declare(lambda rate, k: k * rate)


def test_a_stress_function_missing_a_declared_name_is_refused():
    with pytest.raises(DeclarationError, match="does not take c"):
        _declare(lambda rate: rate)


def test_every_hook_is_checked_against_the_declared_names():
    with pytest.raises(DeclarationError, match="constraint"):
        _declare(lambda rate, c: c * rate, constraint=lambda d: None)
    with pytest.raises(DeclarationError, match="shear-rate function"):
        _declare(lambda rate, c: c * rate, shear_rate_function=lambda tau, k: tau / k)
    with pytest.raises(DeclarationError, match="closed form 'tube_flow_rate'"):
        _declare(lambda rate, c: c * rate, extras={"tube_flow_rate": lambda tau_w, radius, k: 0})


def test_the_example_is_checked_when_declared():
    with pytest.raises(DeclarationError, match="example values for nothing"):
        _declare(lambda rate, c: c * rate, example={})
    with pytest.raises(DeclarationError, match="outside its physical range"):
        _declare(lambda rate, c: c * rate, example={"c": 1e9})
    with pytest.raises(DeclarationError, match="example shear-rate range"):
        _declare(lambda rate, c: c * rate, example_range=(10.0, 1.0))
    with pytest.raises(DeclarationError, match="c must stay below 0.5"):
        _declare(lambda rate, c: c * rate, constraint=lambda c: None if c < 0.5 else "c must stay below 0.5")


def test_a_declaration_needs_a_flow_curve_or_its_inverse():
    with pytest.raises(DeclarationError, match="neither a stress function nor a shear-rate function"):
        _declare(None)


def test_a_model_given_by_its_inverse_gets_its_flow_curve():
    toy = _declare(None, shear_rate_function=lambda stress, c: stress / c)
    assert toy.stress(np.array([2.0, 4.0]), c=0.5) == pytest.approx([1.0, 2.0], rel=1e-14)
    assert toy.stress_function.__doc__


@pytest.mark.parametrize("name", MODELS)
def test_shear_rate_inverts_the_flow_curve(name):
    m = MODELS[name]
    rate = np.geomspace(*m.example_range, 25)
    back = m.shear_rate(m.stress(rate, **m.example), **m.example)
    # a yield stress costs digits near it: the error of the rate is eps * tau / (tau - tau_y)
    np.testing.assert_allclose(back, rate, rtol=1e-9)


@pytest.mark.parametrize("name", [m for m in MODELS if MODELS[m].yield_stress_function])
def test_no_shear_rate_at_or_below_the_yield_stress(name):
    m = MODELS[name]
    tau_y = m.yield_stress(**m.example)
    assert list(m.shear_rate(np.array([0.0, 0.5 * tau_y, tau_y]), **m.example)) == [0.0, 0.0, 0.0]


def test_monotone_inverse_against_the_power_law_inverse():
    # Ostwald (1925): tau = K gd^n, so gd = (tau/K)^(1/n); over the whole double range, with
    # parameter arrays broadcast against the targets
    K, n = np.array([[0.5], [2.0], [1e4]]), np.array([[0.2], [1.0], [1.8]])
    tau = np.geomspace(1e-30, 1e30, 7)
    got = monotone_inverse(lambda s, K, n: K * s**n, tau, {"K": K, "n": n})
    np.testing.assert_allclose(got, (tau / K) ** (1 / n), rtol=1e-12)


def test_monotone_inverse_at_the_edges():
    at = monotone_inverse(lambda s, tau_y: tau_y + s, np.array([0.0, 0.5, 1.0, 1e309, -1.0]),
                          {"tau_y": 1.0})
    assert at[0] == 0.0 and at[1] == 0.0            # zero, and below the offset
    assert 0.0 <= at[2] <= 2.3e-16                    # at it: any s with 1 + s == 1 in doubles
    assert at[3] == np.inf and np.isnan(at[4])


# --- the joint constraint ----------------------------------------------------------------

@pytest.mark.parametrize("name", [m for m in MODELS if {"eta0", "eta_inf"} <= set(MODELS[m].parameter_names)])
def test_a_high_shear_plateau_above_the_zero_shear_one_is_refused(name):
    values = {**MODELS[name].example, "eta0": 0.01, "eta_inf": 0.1}
    assert "eta_inf" in MODELS[name].violation(values)
    with pytest.raises(ParameterError, match=r"eta_inf = 0.1 Pa\*s is above eta0 = 0.01 Pa\*s"):
        fluid(name, **values)
    fluid(name, **{**values, "eta_inf": 0.01})  # equal plateaus: a Newtonian fluid


# --- Williamson and Ellis: the published forms ---------------------------------------------

def test_williamson_with_n_zero_is_williamsons_1929_law():
    # Williamson (1929) Ind. Eng. Chem. 21, 1108 (from memory): tau = A gd/(B + gd) + mu_inf gd;
    # with mu_inf = 0 it is eta0/(1 + lam gd) for A = eta0/lam, B = 1/lam
    rate = np.geomspace(1e-3, 1e4, 15)
    eta0, lam = 3.0, 0.2
    expected = (eta0 / lam) * rate / (1 / lam + rate)
    np.testing.assert_allclose(MODELS["williamson"].stress(rate, eta0=eta0, lam=lam, n=0.0),
                               expected, rtol=1e-13)


def test_williamson_is_cross_without_eta_inf():
    # Cross (1965) with eta_inf = 0 and m = 1 - n has the same equation
    rate = np.geomspace(1e-3, 1e4, 15)
    np.testing.assert_allclose(
        MODELS["williamson"].viscosity(rate, eta0=2.0, lam=0.7, n=0.35),
        MODELS["cross"].viscosity(rate, eta0=2.0, eta_inf=0.0, lam=0.7, m=0.65), rtol=1e-13)


def test_ellis_viscosity_is_half_of_eta0_at_tau_half():
    # Bird, Armstrong & Hassager (1987), ch. 4 (from memory): eta0/eta = 1 + (tau/tau_half)^(alpha-1)
    ellis, p = MODELS["ellis"], dict(eta0=2.0, tau_half=7.0, alpha=2.2)
    rate = ellis.shear_rate(7.0, **p)
    assert rate == pytest.approx(7.0 / 1.0, rel=1e-14)          # eta = eta0/2 = 1 Pa*s
    assert ellis.viscosity(rate, **p) == pytest.approx(1.0, rel=1e-13)


def test_ellis_thins_as_a_power_law_of_index_one_over_alpha():
    # gd ~ tau^alpha / (eta0 tau_half^(alpha-1)) at high stress, so tau ~ gd^(1/alpha)
    ellis, p = MODELS["ellis"], dict(eta0=1.0, tau_half=1.0, alpha=4.0)
    rate = np.array([1e12, 1e13])
    slope = np.diff(np.log(ellis.stress(rate, **p))) / np.diff(np.log(rate))
    assert slope[0] == pytest.approx(0.25, rel=1e-3)


# --- bounds follow physics -------------------------------------------------------------------

def test_cross_above_m_one_rises_up_to_the_stated_peak():
    # Derived here from Cross (1965) with eta_inf = 0: d/dx [x/(1+x^m)] = (1 - (m-1) x^m)/(1+x^m)^2,
    # zero at x^m = 1/(m-1); m = 2 puts the peak at lam*gamma_dot = 1, the end of the box
    cross = MODELS["cross"]
    for m in (1.03, 1.5, 2.0):
        peak = (1.0 / (m - 1.0)) ** (1.0 / m)
        x = peak * np.array([0.999, 1.0, 1.001])
        tau = cross.stress(x, eta0=1.0, eta_inf=0.0, lam=1.0, m=m)
        assert tau[1] > tau[0] and tau[1] > tau[2]
    assert cross.parameter("m").upper == 2.0
    assert MODELS["williamson"].parameter("n").lower == 1.0 - 2.0
