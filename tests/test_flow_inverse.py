"""The engine's inverse hook: a model that declares gd(tau) gets gd_w from tau_w directly.

A throwaway model is declared twice in this file, once with its flow curve
alone and once with its inverse as well (``shear_rate_function``); the two
must give the same flow, both directions, tube and slit, and agree with the
closed forms coded here; a counter shows that the hook is what the engine
used.  The declaration is built so that it works whether or not
ViscosityModel declares ``shear_rate_function`` itself.
"""

import dataclasses
import functools
import math

import numpy as np
import pytest

from rheofit.fluid import Fluid
from rheofit.flow import Slit, Tube, engine, predict
from rheofit.models import ViscosityModel

TUBE = Tube(diameter=2e-3, length=0.5)
SLIT = Slit(gap=2e-4, width=2e-2, length=0.05)


def power_law_tube(tau_w, K, n, R):
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3: Q = (pi n R^3/(3n+1)) (tau_w/K)^(1/n)
    return math.pi * n * R**3 / (3 * n + 1) * (tau_w / K) ** (1 / n)


def herschel_bulkley_slit(tau_w, tau_y, K, n, W, h):
    # Derived from Q = 2 W h^2/tau_w^2 int_{tau_y}^{tau_w} tau ((tau - tau_y)/K)^(1/n) dtau
    # (Rabinowitsch 1929; Mooney 1931) with t = tau - tau_y
    phi, m = tau_y / tau_w, 1 / n
    return 2 * W * h**2 * (tau_w / K) ** m * (1 - phi) ** (1 + m) * ((1 - phi) / (2 + m) + phi / (1 + m))


def Counted(function):
    """``function`` with a count of its calls in ``.calls`` (its signature kept, for declaration checks)."""

    @functools.wraps(function)
    def counted(*args, **kwargs):
        counted.calls += 1
        return function(*args, **kwargs)

    counted.calls = 0
    return counted


def declare(name, parameters, stress, inverse=None, yield_stress=None, example=None, rates=(1e-2, 1e3)):
    """A throwaway declaration; ``inverse`` as its shear_rate_function (a field or, before the
    declaration has that field, an attribute of the instance)."""
    fields = {f.name for f in dataclasses.fields(ViscosityModel)}
    optional = {"example": example, "example_range": rates}
    extra = {k: v for k, v in optional.items() if k in fields}
    if inverse is not None and "shear_rate_function" in fields:
        extra["shear_rate_function"] = inverse
    declaration = ViscosityModel(
        name, name, "test model", parameters, stress, lambda rate, tau: dict(example), "this test",
        yield_stress_function=yield_stress, **extra)
    if inverse is not None and "shear_rate_function" not in fields:
        object.__setattr__(declaration, "shear_rate_function", inverse)
    return declaration


def _parameter(name, unit, lower, upper, positive_scale=True):
    from rheofit.models.declaration import Parameter
    return Parameter(name, unit, lower, upper, "test", positive_scale=positive_scale)


POWER = (_parameter("K", "Pa*s^n", 1e-12, 1e9), _parameter("n", "1", 0.01, 3.0, False))
BINGHAM_LIKE = (_parameter("tau_y", "Pa", 0.0, 1e7, False),) + POWER


def power_stress(rate, K, n):
    return K * rate**n


def power_rate(stress, K, n):
    return (stress / K) ** (1.0 / n)


def hb_stress(rate, tau_y, K, n):
    return tau_y + K * rate**n


def hb_rate(stress, tau_y, K, n):
    return (np.maximum(stress - tau_y, 0.0) / K) ** (1.0 / n)


def hb_yield(tau_y, K, n):
    return tau_y


def pair(kind):
    """(plain fluid, hooked fluid, the counted hook) of a throwaway model given both ways."""
    if kind == "power":
        values = {"K": 2.0, "n": 0.4}
        hook = Counted(power_rate)
        plain = declare("test_power", POWER, power_stress, example=values)
        hooked = declare("test_power_inverse", POWER, power_stress, hook, example=values)
    else:
        values = {"tau_y": 3.0, "K": 0.5, "n": 0.6}
        hook = Counted(hb_rate)
        plain = declare("test_hb", BINGHAM_LIKE, hb_stress, yield_stress=hb_yield, example=values)
        hooked = declare("test_hb_inverse", BINGHAM_LIKE, hb_stress, hook, yield_stress=hb_yield,
                         example=values)
    return Fluid(plain, dict(values)), Fluid(hooked, dict(values)), hook


@pytest.mark.parametrize("kind", ["power", "yield"])
@pytest.mark.parametrize("geometry", [TUBE, SLIT], ids=["tube", "slit"])
def test_hook_gives_the_same_flow_both_ways(kind, geometry):
    plain, hooked, hook = pair(kind)
    dp = np.geomspace(1e2, 1e6, 25)
    forward = engine.solve_pressure_drop(plain, geometry, dp)
    calls = hook.calls
    forward_hook = engine.solve_pressure_drop(hooked, geometry, dp)
    assert hook.calls > calls  # the wall shear rate came from the hook
    assert not np.any(forward.flowing != forward_hook.flowing)
    for name in ("flow_rate", "wall_shear_rate", "max_velocity", "plug_fraction"):
        np.testing.assert_allclose(getattr(forward_hook, name), getattr(forward, name), rtol=1e-12, atol=0)
    q = forward.flow_rate[forward.flowing]
    back = engine.solve_flow_rate(plain, geometry, q)
    calls = hook.calls
    back_hook = engine.solve_flow_rate(hooked, geometry, q)
    assert hook.calls > calls
    for name in ("pressure_drop", "wall_shear_stress", "wall_shear_rate", "max_velocity"):
        np.testing.assert_allclose(getattr(back_hook, name), getattr(back, name), rtol=1e-10, atol=0)
    np.testing.assert_allclose(back_hook.pressure_drop, dp[forward.flowing], rtol=1e-8)


def test_hook_against_closed_forms():
    _, hooked, _ = pair("power")
    tau_w = np.geomspace(0.5, 800.0, 9)
    expected = power_law_tube(tau_w, 2.0, 0.4, TUBE.radius)
    assert np.max(np.abs(engine.flow_rate(hooked, TUBE, TUBE.pressure_drop(tau_w)) / expected - 1)) < 1e-8
    assert np.max(np.abs(engine.pressure_drop(hooked, TUBE, expected) / TUBE.pressure_drop(tau_w) - 1)) < 1e-8
    _, hooked, _ = pair("yield")
    tau_w = 3.0 / np.array([0.1, 0.5, 0.9, 0.98])
    expected = herschel_bulkley_slit(tau_w, 3.0, 0.5, 0.6, SLIT.width, SLIT.half_gap)
    assert np.max(np.abs(engine.flow_rate(hooked, SLIT, SLIT.pressure_drop(tau_w)) / expected - 1)) < 1e-8
    assert np.max(np.abs(engine.pressure_drop(hooked, SLIT, expected) / SLIT.pressure_drop(tau_w) - 1)) < 1e-8
    # below the yield stress the fluid rests, hook or not
    assert engine.flow_rate(hooked, SLIT, SLIT.pressure_drop(2.9)) == 0.0


def test_hook_in_parameter_sets_and_predict():
    plain, hooked, hook = pair("yield")
    values = {"tau_y": np.array([1.0, 3.0, 5.0]), "K": np.array([0.5, 0.4, 0.6]), "n": np.array([0.6, 0.5, 0.8])}
    q = np.array([1e-10, 1e-8])
    calls = hook.calls
    with_hook = engine.solve_sets(hooked.declaration, values, TUBE, "flow_rate", q)
    assert hook.calls > calls
    without = engine.solve_sets(plain.declaration, values, TUBE, "flow_rate", q)
    np.testing.assert_allclose(with_hook.pressure_drop, without.pressure_drop, rtol=1e-10)
    a, b = predict(plain, TUBE, flow_rate=1e-8), predict(hooked, TUBE, flow_rate=1e-8)
    for name in ("pressure_drop", "critical_reynolds", "max_velocity"):
        assert getattr(b, name) == pytest.approx(getattr(a, name), rel=1e-9)
    np.testing.assert_allclose(b.profile["velocity"], a.profile["velocity"], rtol=1e-9, atol=1e-15)
