"""The generic flow engine against closed forms coded here, independently of it.

Every closed form below is written out in this file (not imported from the
package), with its source beside it.  Accuracy target of the engine:
relative error <= 1e-8 for power-law index 0.15-1.5 and tau_y/tau_w <= 0.98.
"""

import math

import numpy as np
import pytest
from scipy import integrate, optimize

from rheofit.fluid import fluid
from rheofit.flow import Slit, Tube, engine
from rheofit.models import MODELS

RTOL = 1e-8  # the engine's stated accuracy
TUBE = Tube(diameter=2e-3, length=0.5)
SLIT = Slit(gap=2e-4, width=2e-2, length=0.05)
METHODS = ("generic", "auto")
N_VALUES = (0.15, 0.2, 0.3, 0.5, 0.75, 1.0, 1.25, 1.5)
PHI_VALUES = (0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.95, 0.98)


def rel(a, b):
    return np.max(np.abs(np.asarray(a) / np.asarray(b) - 1.0))


# --- closed forms, coded here ----------------------------------------------

def hagen_poiseuille_tube(dp, mu, R, L):
    # Source: Hagen (1839); Poiseuille (1840): Q = pi R^4 dP / (8 mu L)
    return math.pi * R**4 * dp / (8.0 * mu * L)


def plane_poiseuille_slit(dp, mu, W, H, L):
    # Source: Bird, Stewart & Lightfoot (2002), ch. 2 (flow between parallel plates): Q = W H^3 dP / (12 mu L)
    return W * H**3 * dp / (12.0 * mu * L)


def power_law_tube(tau_w, K, n, R):
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3: Q = (pi n R^3/(3n+1)) (tau_w/K)^(1/n)
    return math.pi * n * R**3 / (3 * n + 1) * (tau_w / K) ** (1 / n)


def power_law_slit(tau_w, K, n, W, h):
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3: Q = (2 n W h^2/(2n+1)) (tau_w/K)^(1/n)
    return 2 * n * W * h**2 / (2 * n + 1) * (tau_w / K) ** (1 / n)


def buckingham_reiner_tube(tau_w, tau_y, mu_p, R):
    # Source: Buckingham (1921); Reiner (1926): Q = (pi R^3 tau_w/(4 mu_p)) (1 - 4/3 phi + 1/3 phi^4)
    phi = tau_y / tau_w
    return math.pi * R**3 * tau_w / (4 * mu_p) * (1 - 4 / 3 * phi + phi**4 / 3)


def bingham_slit(tau_w, tau_y, mu_p, W, h):
    # Source: Buckingham (1921), slit form: Q = (2 W h^2 tau_w/(3 mu_p)) (1 - 3/2 phi + 1/2 phi^3)
    phi = tau_y / tau_w
    return 2 * W * h**2 * tau_w / (3 * mu_p) * (1 - 1.5 * phi + 0.5 * phi**3)


def herschel_bulkley_tube(tau_w, tau_y, K, n, R):
    # Source: Chhabra & Richardson (2008), ch. 3, Herschel-Bulkley fluid in a pipe:
    # Q = pi R^3 (tau_w/K)^(1/n) (1-phi)^((n+1)/n) [(1-phi)^2/(3+1/n) + 2 phi (1-phi)/(2+1/n) + phi^2/(1+1/n)]
    phi, m = tau_y / tau_w, 1 / n
    bracket = (1 - phi) ** 2 / (3 + m) + 2 * phi * (1 - phi) / (2 + m) + phi**2 / (1 + m)
    return math.pi * R**3 * (tau_w / K) ** m * (1 - phi) ** ((n + 1) / n) * bracket


def herschel_bulkley_slit(tau_w, tau_y, K, n, W, h):
    # Derived here from Q = 2 W h^2/tau_w^2 int_{tau_y}^{tau_w} tau ((tau - tau_y)/K)^(1/n) dtau
    # with t = tau - tau_y: Q = 2 W h^2 (tau_w/K)^(1/n) (1-phi)^(1+1/n) [(1-phi)/(2+1/n) + phi/(1+1/n)]
    phi, m = tau_y / tau_w, 1 / n
    return 2 * W * h**2 * (tau_w / K) ** m * (1 - phi) ** (1 + m) * ((1 - phi) / (2 + m) + phi / (1 + m))


def casson_tube(tau_w, tau_y, mu_c, R):
    # from memory (Casson 1959 pipe flow): Q = (pi R^3 tau_w/(4 mu_c)) (1 - 16/7 sqrt(phi) + 4/3 phi - 1/21 phi^4);
    # checked against the integral in test_casson_closed_form_matches_integral before use
    phi = tau_y / tau_w
    return math.pi * R**3 * tau_w / (4 * mu_c) * (1 - 16 / 7 * math.sqrt(phi) + 4 / 3 * phi - phi**4 / 21)


def ellis_tube(tau_w, eta0, tau_half, alpha, R):
    # Source: Bird, Stewart & Lightfoot (2002), ch. 8 (from memory):
    # Q = (pi R^3 tau_w/(4 eta0)) [1 + (4/(alpha+3)) (tau_w/tau_half)^(alpha-1)];
    # checked against the integral in test_ellis_closed_forms_match_the_integral before use
    return math.pi * R**3 * tau_w / (4 * eta0) * (1 + 4 / (alpha + 3) * (tau_w / tau_half) ** (alpha - 1))


def ellis_slit(tau_w, eta0, tau_half, alpha, W, h):
    # Derived here from Q = 2 W h^2/tau_w^2 int_0^tau_w tau gd dtau with
    # gd = (tau/eta0)(1 + (tau/tau_half)^(alpha-1)):
    # Q = (2 W h^2 tau_w/(3 eta0)) [1 + (3/(alpha+2)) (tau_w/tau_half)^(alpha-1)]
    return 2 * W * h**2 * tau_w / (3 * eta0) * (1 + 3 / (alpha + 2) * (tau_w / tau_half) ** (alpha - 1))


def rabinowitsch_mooney_tube(inverse, tau_w, tau_y, R):
    """Q = pi R^3/tau_w^3 int_{tau_y}^{tau_w} tau^2 gd(tau) dtau by adaptive quadrature.

    Source: Rabinowitsch (1929); Mooney (1931).
    """
    value, _ = integrate.quad(lambda t: t**2 * inverse(t), tau_y, tau_w, epsabs=0, epsrel=1e-13, limit=200)
    return math.pi * R**3 / tau_w**3 * value


def rabinowitsch_mooney_slit(inverse, tau_w, tau_y, W, h):
    """Q = 2 W h^2/tau_w^2 int_{tau_y}^{tau_w} tau gd(tau) dtau (Rabinowitsch 1929; Mooney 1931)."""
    value, _ = integrate.quad(lambda t: t * inverse(t), tau_y, tau_w, epsabs=0, epsrel=1e-13, limit=200)
    return 2 * W * h**2 / tau_w**2 * value


# --- Newtonian ------------------------------------------------------------------

@pytest.mark.parametrize("method", METHODS)
def test_hagen_poiseuille_tube_both_directions(method):
    mu, dp = 1.3e-3, np.geomspace(1.0, 1e6, 13)
    water = fluid("newtonian", mu=mu)
    expected = hagen_poiseuille_tube(dp, mu, TUBE.radius, TUBE.length)
    assert rel(engine.flow_rate(water, TUBE, dp, method), expected) < RTOL
    assert rel(engine.pressure_drop(water, TUBE, expected, method), dp) < RTOL


@pytest.mark.parametrize("method", METHODS)
def test_plane_poiseuille_slit_both_directions(method):
    mu, dp = 0.2, np.geomspace(1.0, 1e6, 13)
    oil = fluid("newtonian", mu=mu)
    expected = plane_poiseuille_slit(dp, mu, SLIT.width, SLIT.gap, SLIT.length)
    assert rel(engine.flow_rate(oil, SLIT, dp, method), expected) < RTOL
    assert rel(engine.pressure_drop(oil, SLIT, expected, method), dp) < RTOL


def test_newtonian_tube_profile_is_parabolic():
    # Source: Hagen (1839); Poiseuille (1840): u = dP (R^2 - r^2) / (4 mu L)
    mu, dp = 1e-3, 500.0
    r = np.linspace(0, TUBE.radius, 21)
    u = engine.velocity_profile(fluid("newtonian", mu=mu), TUBE, TUBE.wall_shear_stress(dp), r)
    expected = dp * (TUBE.radius**2 - r**2) / (4 * mu * TUBE.length)
    assert np.allclose(u, expected, rtol=RTOL, atol=RTOL * expected[0])


# --- power law -----------------------------------------------------------------

@pytest.mark.parametrize("n", N_VALUES)
def test_power_law_tube_both_directions(n):
    K = 3.0
    tau_w = np.geomspace(0.1, 1e4, 9)
    expected = power_law_tube(tau_w, K, n, TUBE.radius)
    f = fluid("power_law", K=K, n=n)
    dp = TUBE.pressure_drop(tau_w)
    assert rel(engine.flow_rate(f, TUBE, dp, "generic"), expected) < RTOL
    assert rel(engine.pressure_drop(f, TUBE, expected, "generic"), dp) < RTOL


@pytest.mark.parametrize("n", N_VALUES)
def test_power_law_slit_both_directions(n):
    K = 0.4
    tau_w = np.geomspace(0.1, 1e4, 9)
    expected = power_law_slit(tau_w, K, n, SLIT.width, SLIT.half_gap)
    f = fluid("power_law", K=K, n=n)
    dp = SLIT.pressure_drop(tau_w)
    assert rel(engine.flow_rate(f, SLIT, dp, "generic"), expected) < RTOL
    assert rel(engine.pressure_drop(f, SLIT, expected, "generic"), dp) < RTOL


@pytest.mark.parametrize("n", (0.15, 0.4, 1.0, 1.5))
def test_power_law_tube_velocity_profile(n):
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3:
    # u(r) = (n/(n+1)) (dP/(2 K L))^(1/n) (R^((n+1)/n) - r^((n+1)/n))
    K, dp, R, L = 2.0, 3e4, TUBE.radius, TUBE.length
    r = np.linspace(0, R, 31)
    expected = n / (n + 1) * (dp / (2 * K * L)) ** (1 / n) * (R ** ((n + 1) / n) - r ** ((n + 1) / n))
    u = engine.velocity_profile(fluid("power_law", K=K, n=n), TUBE, TUBE.wall_shear_stress(dp), r)
    assert np.allclose(u, expected, rtol=RTOL, atol=RTOL * expected[0])


@pytest.mark.parametrize("n", (0.15, 0.6, 1.5))
def test_power_law_slit_velocity_profile(n):
    # Derived here like the tube form, with tau(y) = dP y / L:
    # u(y) = (n/(n+1)) (dP/(K L))^(1/n) (h^((n+1)/n) - y^((n+1)/n))
    K, dp, h, L = 0.7, 2e4, SLIT.half_gap, SLIT.length
    y = np.linspace(0, h, 31)
    expected = n / (n + 1) * (dp / (K * L)) ** (1 / n) * (h ** ((n + 1) / n) - y ** ((n + 1) / n))
    u = engine.velocity_profile(fluid("power_law", K=K, n=n), SLIT, SLIT.wall_shear_stress(dp), y)
    assert np.allclose(u, expected, rtol=RTOL, atol=RTOL * expected[0])


# --- Bingham ---------------------------------------------------------------------

@pytest.mark.parametrize("method", METHODS)
def test_buckingham_reiner_tube(method):
    tau_y, mu_p = 12.0, 0.05
    tau_w = tau_y / np.array(PHI_VALUES)
    expected = buckingham_reiner_tube(tau_w, tau_y, mu_p, TUBE.radius)
    f = fluid("bingham", tau_y=tau_y, mu_p=mu_p)
    dp = TUBE.pressure_drop(tau_w)
    assert rel(engine.flow_rate(f, TUBE, dp, method), expected) < RTOL
    assert rel(engine.pressure_drop(f, TUBE, expected, method), dp) < RTOL


@pytest.mark.parametrize("method", METHODS)
def test_bingham_slit(method):
    tau_y, mu_p = 3.0, 0.8
    tau_w = tau_y / np.array(PHI_VALUES)
    expected = bingham_slit(tau_w, tau_y, mu_p, SLIT.width, SLIT.half_gap)
    f = fluid("bingham", tau_y=tau_y, mu_p=mu_p)
    dp = SLIT.pressure_drop(tau_w)
    assert rel(engine.flow_rate(f, SLIT, dp, method), expected) < RTOL
    assert rel(engine.pressure_drop(f, SLIT, expected, method), dp) < RTOL


@pytest.mark.parametrize("phi", (0.2, 0.7, 0.98))
def test_bingham_tube_profile_plug_and_sheared_layer(phi):
    # Derived here by integrating du/dr = -(tau_w r/R - tau_y)/mu_p from the wall (Buckingham 1921):
    # u(r) = (tau_w R/(2 mu_p)) [(1 - (r/R)^2) - 2 phi (1 - r/R)] outside the plug r >= phi R,
    # and the plug velocity u_p = (tau_w R/(2 mu_p)) (1 - phi)^2 inside it.
    tau_y, mu_p, R = 5.0, 0.1, TUBE.radius
    tau_w = tau_y / phi
    x = np.linspace(0, 1, 41)
    sheared = (1 - x**2) - 2 * phi * (1 - x)
    expected = tau_w * R / (2 * mu_p) * np.where(x >= phi, sheared, (1 - phi) ** 2)
    f = fluid("bingham", tau_y=tau_y, mu_p=mu_p)
    u = engine.velocity_profile(f, TUBE, tau_w, x * R)
    assert np.allclose(u, expected, rtol=RTOL, atol=RTOL * expected[0])
    state = engine.solve_pressure_drop(f, TUBE, TUBE.pressure_drop(tau_w))
    assert state.plug_fraction[0] == pytest.approx(phi, rel=1e-14)  # plug radius R tau_y / tau_w
    assert state.max_velocity[0] == pytest.approx(expected[0], rel=RTOL)


# --- Herschel-Bulkley ------------------------------------------------------------

def test_herschel_bulkley_closed_forms_match_the_integral():
    # The closed forms above, checked against the Rabinowitsch-Mooney integral with the
    # explicit inverse gd = ((tau - tau_y)/K)^(1/n) before they are trusted.
    tau_y, K = 4.0, 1.5
    for n in (0.15, 0.5, 1.0, 1.5):
        inverse = lambda t, n=n: ((t - tau_y) / K) ** (1 / n)  # noqa: E731
        for phi in (0.1, 0.5, 0.98):
            tau_w = tau_y / phi
            assert herschel_bulkley_tube(tau_w, tau_y, K, n, 1.0) == pytest.approx(
                rabinowitsch_mooney_tube(inverse, tau_w, tau_y, 1.0), rel=1e-10)
            assert herschel_bulkley_slit(tau_w, tau_y, K, n, 1.0, 1.0) == pytest.approx(
                rabinowitsch_mooney_slit(inverse, tau_w, tau_y, 1.0, 1.0), rel=1e-10)


@pytest.mark.parametrize("n", N_VALUES)
@pytest.mark.parametrize("method", METHODS)
def test_herschel_bulkley_tube_and_slit(n, method):
    tau_y, K = 4.0, 1.5
    tau_w = tau_y / np.array(PHI_VALUES)
    f = fluid("herschel_bulkley", tau_y=tau_y, K=K, n=n)
    for geometry, expected in (
        (TUBE, herschel_bulkley_tube(tau_w, tau_y, K, n, TUBE.radius)),
        (SLIT, herschel_bulkley_slit(tau_w, tau_y, K, n, SLIT.width, SLIT.half_gap)),
    ):
        dp = geometry.pressure_drop(tau_w)
        assert rel(engine.flow_rate(f, geometry, dp, method), expected) < RTOL
        assert rel(engine.pressure_drop(f, geometry, expected, method), dp) < RTOL


# --- Casson ----------------------------------------------------------------------------

def test_casson_closed_form_matches_integral():
    tau_y, mu_c = 2.0, 0.004
    inverse = lambda t: (math.sqrt(t) - math.sqrt(tau_y)) ** 2 / mu_c  # noqa: E731  Casson (1959) inverted
    for phi in (0.05, 0.5, 0.98):
        tau_w = tau_y / phi
        assert casson_tube(tau_w, tau_y, mu_c, 1.0) == pytest.approx(
            rabinowitsch_mooney_tube(inverse, tau_w, tau_y, 1.0), rel=1e-10)


@pytest.mark.parametrize("method", METHODS)
def test_casson_tube(method):
    tau_y, mu_c = 2.0, 0.004
    f = fluid("casson", tau_y=tau_y, mu_c=mu_c)
    for phi in PHI_VALUES:
        tau_w = tau_y / phi
        expected = casson_tube(tau_w, tau_y, mu_c, TUBE.radius)
        assert engine.flow_rate(f, TUBE, TUBE.pressure_drop(tau_w), method) == pytest.approx(expected, rel=RTOL)


# --- Ellis: a model given by its inverse, against its closed forms ----------------------

ELLIS_CASES = [  # (eta0 [Pa*s], tau_half [Pa], alpha [-]); invented values
    (1.0, 5.0, 2.5), (0.05, 0.3, 1.3), (10.0, 50.0, 6.0), (2.0, 1.0, 1.0), (3e-3, 2.0, 1.8)]


def test_ellis_closed_forms_match_the_integral():
    # the forms above against the Rabinowitsch-Mooney integrals of the Ellis inverse (coded here)
    for eta0, tau_half, alpha in ELLIS_CASES:
        def inverse(t):
            return t / eta0 * (1 + (t / tau_half) ** (alpha - 1))
        for tau_w in (0.2, 5.0, 300.0):
            assert ellis_tube(tau_w, eta0, tau_half, alpha, TUBE.radius) == pytest.approx(
                rabinowitsch_mooney_tube(inverse, tau_w, 0.0, TUBE.radius), rel=1e-12)
            assert ellis_slit(tau_w, eta0, tau_half, alpha, SLIT.width, SLIT.half_gap) == pytest.approx(
                rabinowitsch_mooney_slit(inverse, tau_w, 0.0, SLIT.width, SLIT.half_gap), rel=1e-12)


ELLIS_RTOL = 1e-9  # tighter than the engine's stated accuracy: the target set for this model


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("case", ELLIS_CASES, ids=lambda c: f"alpha={c[2]}")
def test_ellis_tube_and_slit_both_directions(case, method):
    eta0, tau_half, alpha = case
    f = fluid("ellis", eta0=eta0, tau_half=tau_half, alpha=alpha)
    tau_w = np.geomspace(1e-2, 1e4, 13)
    for geometry, expected in (
            (TUBE, ellis_tube(tau_w, eta0, tau_half, alpha, TUBE.radius)),
            (SLIT, ellis_slit(tau_w, eta0, tau_half, alpha, SLIT.width, SLIT.half_gap))):
        dp = geometry.pressure_drop(tau_w)
        assert rel(engine.flow_rate(f, geometry, dp, method), expected) < ELLIS_RTOL
        assert rel(engine.pressure_drop(f, geometry, expected, method), dp) < ELLIS_RTOL


# --- no model needs a closed form: Carreau against the direct integral ----------------

@pytest.mark.parametrize("geometry", (TUBE, SLIT), ids=("tube", "slit"))
def test_carreau_against_direct_rabinowitsch_mooney_integral(geometry):
    params = dict(eta0=5.0, eta_inf=1e-3, lam=0.5, n=0.35)
    f = fluid("carreau", **params)

    def inverse(tau):  # gd(tau) by root finding on the Carreau flow curve (Carreau 1972)
        return optimize.brentq(lambda s: float(f.stress(s)) - tau, 0.0, 1e9, xtol=1e-300, rtol=1e-15)

    for tau_w in (0.5, 30.0, 400.0):
        if geometry is TUBE:
            expected = rabinowitsch_mooney_tube(inverse, tau_w, 0.0, geometry.radius)
        else:
            expected = rabinowitsch_mooney_slit(inverse, tau_w, 0.0, geometry.width, geometry.half_gap)
        got = engine.flow_rate(f, geometry, geometry.pressure_drop(tau_w))
        assert got == pytest.approx(expected, rel=RTOL)


# --- the declared fast paths agree with the generic path -------------------------------

@pytest.mark.parametrize("name", [m for m in MODELS if MODELS[m].extras])
def test_declared_closed_forms_agree_with_generic_path(name):
    declaration = MODELS[name]
    f = fluid(name, **declaration.example)
    # wall stresses over the declaration's example shear rates, above any yield stress
    tau_w = f.stress(np.geomspace(*declaration.example_range, 7))
    for geometry in (TUBE, SLIT):
        dp = geometry.pressure_drop(tau_w)
        assert geometry.closed_form_key in declaration.extras
        fast = engine.flow_rate(f, geometry, dp, "auto")
        slow = engine.flow_rate(f, geometry, dp, "generic")
        assert rel(fast, slow) < RTOL


# --- yield stress: no flow below it, the pressure needed above it ---------------------

@pytest.mark.parametrize("name", [m for m in MODELS if "tau_y" in MODELS[m].parameter_names])
def test_yield_stress_fluid_below_yield_does_not_flow(name):
    # common practice, no source: a plug at rest while tau_w <= tau_y (Bingham 1916)
    values = {**MODELS[name].example, "tau_y": 10.0}
    f = fluid(name, **values)
    dp = TUBE.pressure_drop(np.array([0.0, 5.0, 10.0, 10.5]))
    state = engine.solve_pressure_drop(f, TUBE, dp)
    assert list(state.flowing) == [False, False, False, True]
    assert list(state.flow_rate[:3]) == [0.0, 0.0, 0.0] and state.flow_rate[3] > 0
    assert list(state.plug_fraction[:3]) == [1.0, 1.0, 1.0]
    needed = engine.pressure_drop(f, TUBE, 1e-12)
    assert needed > TUBE.pressure_drop(10.0)
