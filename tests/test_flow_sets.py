"""The flow engine over parameter sets (engine.solve_sets) against one call per fluid and closed forms.

solve_sets solves R parameter sets of one model at M operating points in one
vectorised call; it must give, row by row, what the engine gives for each
fluid alone (to rounding: 1e-12), agree with the closed forms coded here,
and mark a set without a laminar solution with NaN instead of raising.
"""

import math

import numpy as np
import pytest

from rheofit.errors import RheofitError
from rheofit.fluid import Fluid
from rheofit.flow import Slit, Tube, engine
from rheofit.models import MODELS

TUBE = Tube(diameter=1.6e-3, length=0.3)
SLIT = Slit(gap=2e-4, width=1e-2, length=0.05)
QUANTITIES = ("pressure_drop", "flow_rate", "wall_shear_stress", "wall_shear_rate", "max_velocity",
              "plug_fraction")

# parameter values for models whose declaration carries no example of its own (invented, physical)
EXAMPLES = {
    "newtonian": {"mu": 1e-3}, "power_law": {"K": 2.0, "n": 0.6},
    "carreau": {"eta0": 2.0, "eta_inf": 1e-3, "lam": 1.0, "n": 0.4},
    "carreau_yasuda": {"eta0": 5.0, "eta_inf": 1e-3, "lam": 2.0, "n": 0.4, "a": 1.5},
    "cross": {"eta0": 2.0, "eta_inf": 1e-3, "lam": 0.5, "m": 0.7},
    "sisko": {"eta_inf": 1e-3, "K": 1.0, "n": 0.4}, "bingham": {"tau_y": 5.0, "mu_p": 0.1},
    "herschel_bulkley": {"tau_y": 1.0, "K": 0.5, "n": 0.5}, "casson": {"tau_y": 2.0, "mu_c": 0.05},
}


def example(declaration):
    return dict(getattr(declaration, "example", None) or EXAMPLES.get(declaration.name, {}))


def spread(declaration, count=5, seed=0):
    """``count`` parameter sets around the example, inside the declared bounds."""
    rng = np.random.default_rng(seed)
    values = {}
    for name, value in example(declaration).items():
        p = declaration.parameter(name)
        drawn = value * np.exp(0.2 * rng.standard_normal(count)) if value > 0 else np.full(count, value)
        values[name] = np.clip(drawn, p.lower, p.upper)
    return values


def one_by_one(declaration, values, geometry, given, operating, method):
    """Each set solved alone: a list of FlowStates (None where the engine refuses)."""
    solve = engine.solve_flow_rate if given == "flow_rate" else engine.solve_pressure_drop
    out = []
    for i in range(len(next(iter(values.values())))):
        fluid = Fluid(declaration, {k: float(v[i]) for k, v in values.items()})
        try:
            out.append(solve(fluid, geometry, operating, method))
        except RheofitError:
            out.append(None)
    return out


@pytest.mark.parametrize("name", [m for m in MODELS if example(MODELS[m])])
@pytest.mark.parametrize("geometry", [TUBE, SLIT], ids=["tube", "slit"])
@pytest.mark.parametrize("method", ["auto", "generic"])
def test_sets_match_one_call_per_fluid(name, geometry, method):
    declaration = MODELS[name]
    values = spread(declaration)
    for given, operating in (("flow_rate", np.array([0.0, 1e-10, 1e-8, 1e-7])),
                             ("pressure_drop", np.array([0.0, 30.0, 3e3, 3e5]))):
        together = engine.solve_sets(declaration, values, geometry, given, operating, method)
        for i, alone in enumerate(one_by_one(declaration, values, geometry, given, operating, method)):
            assert alone is not None
            for quantity in QUANTITIES:
                np.testing.assert_allclose(getattr(together, quantity)[i], getattr(alone, quantity),
                                           rtol=1e-12, atol=0, err_msg=f"{quantity}, set {i}")
            assert np.array_equal(together.flowing[i], alone.flowing)


def test_sets_against_closed_forms():
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3: Q = (pi n R^3/(3n+1)) (tau_w/K)^(1/n)
    K, n = np.array([0.5, 2.0, 8.0]), np.array([0.2, 0.6, 1.3])
    tau_w = np.array([0.5, 20.0, 800.0])
    state = engine.solve_sets(MODELS["power_law"], {"K": K, "n": n}, TUBE, "pressure_drop",
                              TUBE.pressure_drop(tau_w), "generic")
    expected = math.pi * n[:, None] * TUBE.radius**3 / (3 * n[:, None] + 1) * (tau_w / K[:, None]) ** (1 / n[:, None])
    np.testing.assert_allclose(state.flow_rate, expected, rtol=1e-8)
    # Source: Buckingham (1921), slit form: Q = (2 W h^2 tau_w/(3 mu_p)) (1 - 3/2 phi + 1/2 phi^3)
    tau_y, mu_p = np.array([1.0, 5.0]), np.array([0.1, 0.02])
    tau_w = np.array([6.0, 60.0])
    phi = tau_y[:, None] / tau_w
    expected = 2 * SLIT.width * SLIT.half_gap**2 * tau_w / (3 * mu_p[:, None]) * (1 - 1.5 * phi + 0.5 * phi**3)
    state = engine.solve_sets(MODELS["bingham"], {"tau_y": tau_y, "mu_p": mu_p}, SLIT, "flow_rate",
                              np.array([1e-9, 1e-7]), "generic")
    back = engine.solve_sets(MODELS["bingham"], {"tau_y": tau_y, "mu_p": mu_p}, SLIT, "pressure_drop",
                             SLIT.pressure_drop(tau_w), "generic")
    np.testing.assert_allclose(back.flow_rate, expected, rtol=1e-8)
    assert np.all(state.wall_shear_stress > tau_y[:, None])


def test_sets_without_a_solution_are_nan_where_one_call_refuses():
    # eta_inf > eta0 with n > 1: the Carreau (1972) viscosity falls through zero at high shear, so the
    # stress rises, peaks and falls; beyond the peak there is no laminar solution
    declaration = MODELS["carreau"]
    values = {"eta0": np.array([1.0, 1.0048, 1.0, 2.0]), "eta_inf": np.array([10.0, 1.0277, 1.0277, 1e-3]),
              "lam": np.array([1.0, 2.7, 0.5, 1.0]), "n": np.array([1.5, 1.5, 1.2, 0.4])}
    for given, operating in (("flow_rate", np.array([1e-9, 1e-6])), ("pressure_drop", np.array([1e2, 3e4]))):
        together = engine.solve_sets(declaration, values, TUBE, given, operating)
        alone = one_by_one(declaration, values, TUBE, given, operating, "auto")
        refused = np.array([state is None for state in alone])
        assert refused.any() and not refused.all()
        assert np.array_equal(np.isnan(together.pressure_drop).any(axis=1), refused)
        assert np.array_equal(np.isnan(together.pressure_drop).all(axis=1), refused)
    # Cross (1965) with eta_inf = 0 and m = 1 levels off at eta0/lam; near the plateau the engine
    # refuses (its integral keeps too few digits there): the sets must be refused alike
    cross = MODELS["cross"]
    values = {"eta0": np.array([1.0, 1.0, 2.0]), "eta_inf": np.array([0.0, 1e-3, 0.0]),
              "lam": np.array([10.0, 10.0, 0.5]), "m": np.array([1.0, 0.7, 1.0])}
    operating = np.array([1e-12, 1e-9, 1e-6])
    together = engine.solve_sets(cross, values, TUBE, "flow_rate", operating)
    alone = one_by_one(cross, values, TUBE, "flow_rate", operating, "auto")
    assert [state is None for state in alone] == [True, False, True]
    assert np.array_equal(np.isnan(together.pressure_drop).all(axis=1), [True, False, True])
    np.testing.assert_allclose(together.pressure_drop[1], alone[1].pressure_drop, rtol=1e-12)
    # a set whose flow curve does not rise (n < 0, outside the declared bounds on purpose)
    state = engine.solve_sets(MODELS["power_law"], {"K": np.array([1.0, 1.0]), "n": np.array([-0.5, 0.5])},
                              TUBE, "flow_rate", np.array([1e-9]))
    assert np.isnan(state.pressure_drop[0, 0]) and state.pressure_drop[1, 0] > 0


def test_no_sets():
    state = engine.solve_sets(MODELS["power_law"], {"K": np.zeros(0), "n": np.zeros(0)}, TUBE,
                              "flow_rate", np.array([1e-9, 1e-8]))
    assert state.pressure_drop.shape == (0, 2)


def test_start_up_table_avoids_subnormal_shear_rates():
    # IEEE 754-2008: the smallest normal double is 2^-1022 (about 2.2e-308); below it the
    # numbers are subnormal, slow to compute with and short of digits
    assert np.exp(engine.Rheology._TABLE).min() >= 2.0**-1022
