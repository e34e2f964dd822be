"""The rectangular-channel solver against outside values, each with its source beside it.

The outside formulas (White's series and its velocity field, the slit
closed forms, the Cheeger constant) are written out in this file,
independently of the package.  Section: -a <= y <= a (depth 2a),
-b <= z <= b (width 2b); G = dP/L.
"""

import math

import numpy as np
import pytest

from rheofit.errors import GeometryError, ParameterError
from rheofit.flow.rectangle import (RectangleSolver, cheeger_constant, solve_rectangle,
                                    threshold_pressure_gradient)
from rheofit.flow.rectangle.law import FlowLaw
from rheofit.flow.rectangle.mesh import mesh_hierarchy
from rheofit.flow.rectangle.plastic import solve_plastic
from rheofit.models import MODELS
from rheofit.models.closed_forms import newtonian_rectangle_flow_rate

DEPTH, WIDTH = 100e-6, 500e-6  # a 100 um x 500 um microchannel
ASPECTS = (1.0, 0.5, 0.2, 0.1, 0.05, 0.02)  # depth / width
NEWTONIAN = MODELS["newtonian"]
POWER_LAW = MODELS["power_law"]
BINGHAM = MODELS["bingham"]


def rel(a, b):
    return abs(a / b - 1.0)


# --- outside formulas, coded here ---------------------------------------------

def white_flow_rate(a, b, G, mu, terms=200_000):
    # Source: White, F.M. (1991) Viscous Fluid Flow, 2nd ed., eq. 3-48 (a <= b), summed term by term:
    # Q = (4 b a^3 G / (3 mu)) [1 - (192 a / (pi^5 b)) sum_{i odd} tanh(i pi b / 2a) / i^5]
    i = np.arange(1, 2 * terms, 2, dtype=float)
    series = np.sum(np.tanh(i * math.pi * b / (2 * a)) / i**5)  # tail below 1e-22
    return 4 * b * a**3 * G / (3 * mu) * (1 - 192 * a / (math.pi**5 * b) * series)


def white_wall_stress_middle(a, b, G, terms=20_000):
    # Source: White (1991) eq. 3-47, u = (16 a^2 G / (mu pi^3)) sum_{i odd} (-1)^((i-1)/2)
    # [1 - cosh(i pi z / 2a) / cosh(i pi b / 2a)] cos(i pi y / 2a) / i^3, differentiated at y = a, z = 0:
    # tau_w = (8 a G / pi^2) sum_{i odd} [1 - 1/cosh(i pi b / 2a)] / i^2
    i = np.arange(1, 2 * terms, 2, dtype=float)
    sech = 1.0 / np.cosh(np.minimum(i * math.pi * b / (2 * a), 700.0))
    return 8 * a * G / math.pi**2 * np.sum((1 - sech) / i**2)


def power_law_slit(G, h, W, K, n):
    # Source: Skelland (1967); Chhabra & Richardson (2008), ch. 3: Q = (2 n W h^2 / (2n + 1)) (tau_w / K)^(1/n),
    # tau_w = G h (force balance on the slab)
    return 2 * n * W * h**2 / (2 * n + 1) * (G * h / K) ** (1 / n)


def bingham_slit(G, h, W, tau_y, mu_p):
    # Source: Buckingham (1921), slit form: Q = (2 W h^2 tau_w / (3 mu_p)) (1 - 3/2 phi + 1/2 phi^3), phi = tau_y / tau_w
    tau_w = G * h
    phi = tau_y / tau_w
    return 2 * W * h**2 * tau_w / (3 * mu_p) * (1 - 1.5 * phi + 0.5 * phi**3)


# --- White's Newtonian series --------------------------------------------------

@pytest.mark.parametrize("aspect", ASPECTS)
def test_series_is_summed_to_convergence(aspect):
    # Source: White (1991) eq. 3-48, summed term by term above (200,000 terms)
    a, b = 0.5 * aspect * WIDTH, 0.5 * WIDTH
    exact = white_flow_rate(a, b, 1e5, 1e-3)
    assert rel(newtonian_rectangle_flow_rate(1e5, a, b, 1e-3), exact) < 1e-12
    assert rel(newtonian_rectangle_flow_rate(1e5, b, a, 1e-3), exact) < 1e-12  # turned section


@pytest.mark.parametrize("aspect, f_re", [
    (1.0, 14.22708), (0.5, 15.54806), (0.25, 18.23278), (0.2, 19.07050),
    (0.125, 20.58464), (0.1, 21.16888), (0.05, 22.47701),
])
def test_series_matches_shah_london_table(aspect, f_re):
    # Source: Shah & London (1978) Laminar Flow Forced Convection in Ducts, rectangular ducts,
    # f Re (Fanning, hydraulic diameter); from memory.  f Re = 2 tau_w D_h / (mu V), tau_w = G D_h / 4.
    a, b = 0.5 * aspect, 0.5
    area, perimeter = 4 * a * b, 4 * (a + b)
    d_h = 4 * area / perimeter
    velocity = newtonian_rectangle_flow_rate(1.0, a, b, 1.0) / area
    assert rel(d_h**2 / (2 * velocity), f_re) < 1e-6


@pytest.mark.parametrize("aspect", ASPECTS)
def test_two_dimensional_path_reproduces_white(aspect):
    # Source: White (1991) eq. 3-48 (coded above); stated accuracy 1e-4 for fluids without a yield stress
    depth = aspect * WIDTH
    flow = solve_rectangle(NEWTONIAN, {"mu": 1e-3}, depth, WIDTH, pressure_gradient=1e5, method="generic")
    exact = white_flow_rate(0.5 * depth, 0.5 * WIDTH, 1e5, 1e-3)
    error = rel(flow.flow_rate, exact)
    assert flow.relative_error < 1e-4
    assert error < 1e-4
    assert error <= flow.relative_error  # the estimate is honest
    fast = solve_rectangle(NEWTONIAN, {"mu": 1e-3}, depth, WIDTH, pressure_gradient=1e5)
    assert rel(fast.flow_rate, exact) < 1e-12 and "White" in fast.method


def test_newtonian_wall_shear_stress():
    # Source: White (1991) eq. 3-47 differentiated (coded above): the largest wall shear stress is at the
    # middle of the long wall; the perimeter mean is G A / P (force balance)
    G = 1e5
    flow = solve_rectangle(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, pressure_gradient=G)
    middle = white_wall_stress_middle(0.5 * DEPTH, 0.5 * WIDTH, G)
    assert rel(flow.max_wall_shear_stress, middle) < 1e-4
    y, z = flow.max_wall_shear_stress_at
    assert y == pytest.approx(0.5 * DEPTH) and z < 0.1 * WIDTH  # on the long wall, near its middle
    assert flow.mean_wall_shear_stress == pytest.approx(G * DEPTH * WIDTH / (2 * (DEPTH + WIDTH)))
    ends = np.diff(flow.wall_position)
    lengths = np.zeros(flow.wall_position.size)
    lengths[:-1] += 0.5 * ends
    lengths[1:] += 0.5 * ends
    assert np.sum(flow.wall_shear_stress * lengths) / flow.wall_position[-1] == pytest.approx(
        flow.mean_wall_shear_stress, rel=1e-12)


def test_power_law_square_f_re_at_n_one():
    # Source: Shah & London (1978): square duct f Re = 14.227 (Fanning, D_h); from memory.
    # At n = 1 the power law is Newtonian (mu = K) and takes the generic 2-D path (no series).
    side, G, K = 1e-3, 1e3, 0.1
    flow = solve_rectangle(POWER_LAW, {"K": K, "n": 1.0}, side, side, pressure_gradient=G)
    f_re = G * side**2 / (2 * K * flow.mean_velocity)  # D_h = side; f Re = 2 tau_w D_h / (K V)
    assert f_re == pytest.approx(14.227, abs=2e-3)
    assert flow.relative_error < 1e-4


# --- symmetry and limits -------------------------------------------------------

@pytest.mark.parametrize("model, params", [
    (POWER_LAW, {"K": 0.1, "n": 0.5}), (BINGHAM, {"tau_y": 0.5, "mu_p": 1e-2}),
])
def test_swapping_depth_and_width_gives_the_same_flow(model, params):
    # common practice, no source: the section turned by 90 degrees carries the same flow
    one = solve_rectangle(model, params, DEPTH, WIDTH, pressure_gradient=1e5, cells=24)
    other = solve_rectangle(model, params, WIDTH, DEPTH, pressure_gradient=1e5, cells=24)
    assert rel(one.flow_rate, other.flow_rate) < 1e-6
    assert one.max_wall_shear_stress_at == pytest.approx(other.max_wall_shear_stress_at[::-1])


@pytest.mark.parametrize("model, params, slit, tolerance", [
    (POWER_LAW, {"K": 0.1, "n": 0.5}, lambda G, h, W: power_law_slit(G, h, W, 0.1, 0.5), 1e-4),
    (BINGHAM, {"tau_y": 1.0, "mu_p": 1e-2}, lambda G, h, W: bingham_slit(G, h, W, 1.0, 1e-2), 2e-3),
])
def test_wide_channel_approaches_the_slit(model, params, slit, tolerance):
    # Source: the slit closed forms above (Skelland 1967; Buckingham 1921).  Each side wall removes a fixed
    # amount of flow, so Q/Q_slit = 1 - c H/W + O((H/W)^2) (for a Newtonian fluid c = 0.630, White 1991
    # eq. 3-48); the linear extrapolation of W/H = 25 and 50 to H/W = 0 must give the slit.
    G, H = 1e5, 100e-6
    ratios = []
    for wide in (25.0, 50.0):
        flow = solve_rectangle(model, params, H, wide * H, pressure_gradient=G)
        ratios.append(flow.flow_rate / slit(G, 0.5 * H, wide * H))
    assert ratios[0] < ratios[1] < 1.0
    assert abs(2 * ratios[1] - ratios[0] - 1.0) < tolerance


# --- accuracy against a much finer mesh (our own second reference) --------------

@pytest.mark.parametrize("model, params, aspect", [
    (POWER_LAW, {"K": 0.1, "n": 0.3}, 1.0),
    (POWER_LAW, {"K": 0.1, "n": 0.3}, 0.2),
    (MODELS["carreau"], {"eta0": 1.0, "eta_inf": 1e-3, "lam": 0.1, "n": 0.4}, 0.5),
])
def test_default_mesh_against_a_much_finer_one(model, params, aspect):
    # own reference: the same elements on a mesh of 4x the cells per direction (16x the unknowns),
    # extrapolated; the default mesh must be within its own estimate, and that below 1e-4
    depth = aspect * WIDTH
    default = solve_rectangle(model, params, depth, WIDTH, pressure_gradient=1e5)
    fine = solve_rectangle(model, params, depth, WIDTH, pressure_gradient=1e5, cells=192)
    assert default.relative_error < 1e-4
    assert rel(default.flow_rate, fine.flow_rate) <= max(default.relative_error, 1e-6)
    assert fine.relative_error < 0.1 * default.relative_error + 1e-7


def test_bingham_default_mesh_against_a_much_finer_one():
    # own reference: a mesh of 2x the cells per direction; stated accuracy 5e-3 with a yield stress
    params = {"tau_y": 2.0, "mu_p": 1e-2}  # tau_y / tau_mean = 0.48
    default = solve_rectangle(BINGHAM, params, DEPTH, WIDTH, pressure_gradient=1e5)
    fine = solve_rectangle(BINGHAM, params, DEPTH, WIDTH, pressure_gradient=1e5, cells=128)
    assert default.relative_error < 5e-3
    assert rel(default.flow_rate, fine.flow_rate) < max(default.relative_error, 1e-3)
    assert 0.0 < default.unyielded_fraction < 1.0 and default.plug_fraction > 0.0


# --- yield stress: threshold, plug and dead zones -------------------------------

def test_cheeger_constant_of_rectangles():
    # Source: Kawohl & Lachand-Robert (2006) Pacific J. Math. 225, 103-118; Leonardi, Neumayer & Saracco
    # (2017) Calc. Var. PDE 56: h = (4 - pi) / (D + W - sqrt((D - W)^2 + pi D W)); unit square
    # h = (4 - pi) / (2 - sqrt(pi))
    assert cheeger_constant(1.0, 1.0) == pytest.approx((4 - math.pi) / (2 - math.sqrt(math.pi)), rel=1e-14)
    D, W = 1.0, 3.0
    assert cheeger_constant(D, W) == pytest.approx(
        (4 - math.pi) / (D + W - math.sqrt((D - W) ** 2 + math.pi * D * W)), rel=1e-12)
    # slit limit: G_c = 2 tau_y / D (force balance on a plug filling the gap)
    assert cheeger_constant(1.0, 1e6) == pytest.approx(2.0, rel=1e-5)


def test_bingham_square_duct_threshold():
    # Source: Mosolov & Miasnikov (1965, 1967): no flow for G <= tau_y h(Omega); square of side L:
    # tau_y / (G_c L/2) = 2 / (2 + sqrt(pi)) = 0.5301 (critical yield number on the half-side; from memory)
    side, tau_y = 1e-3, 1.0
    law = FlowLaw(BINGHAM, {"tau_y": tau_y, "mu_p": 1e-2})
    g_c = threshold_pressure_gradient(tau_y, side, side)
    assert tau_y / (g_c * side / 2) == pytest.approx(0.5301, abs=1e-4)
    below = solve_rectangle(BINGHAM, law.params, side, side, pressure_gradient=0.98 * g_c)
    assert not below.flowing and below.flow_rate == 0.0 and below.unyielded_fraction == 1.0
    assert below.threshold_pressure_gradient == pytest.approx(g_c)
    # the augmented Lagrangian itself, without the short cut: essentially at rest below G_c ...
    mesh = mesh_hierarchy(side / 2, side / 2, 24)[0]
    scale = g_c * side**2 / 1e-2  # velocity scale G L^2 / mu_p
    rest = solve_plastic(mesh, law, 0.9 * g_c)
    assert np.max(np.abs(rest.u)) < 1e-6 * scale and rest.unyielded.mean() > 0.99
    # ... and flowing, with a plug and dead corners, above it
    above = solve_rectangle(BINGHAM, law.params, side, side, pressure_gradient=1.5 * g_c)
    assert above.flowing and above.flow_rate > 0.0
    assert above.plug_fraction > 0.05 and above.dead_fraction > 0.0


# --- both directions and many points ---------------------------------------------

@pytest.mark.parametrize("model, params, tolerance", [
    (POWER_LAW, {"K": 0.1, "n": 0.5}, 1e-8),
    (BINGHAM, {"tau_y": 1.0, "mu_p": 1e-2}, 2e-3),
])
def test_flow_rate_given_recovers_the_pressure_gradient(model, params, tolerance):
    # common practice, no source: the inverse problem is the monotone root of Q(G)
    forward = solve_rectangle(model, params, DEPTH, WIDTH, pressure_gradient=1e5)
    back = solve_rectangle(model, params, DEPTH, WIDTH, flow_rate=forward.flow_rate)
    assert back.computed == "pressure_gradient"
    assert rel(back.pressure_gradient, 1e5) < max(tolerance, 2 * forward.relative_error)


def test_operating_curve_is_monotone():
    # common practice, no source: Q rises with G; an array gives one result per point
    curve = solve_rectangle(POWER_LAW, {"K": 0.1, "n": 0.5}, DEPTH, WIDTH,
                            pressure_gradient=np.geomspace(1e4, 1e6, 5), cells=24)
    assert isinstance(curve, tuple) and len(curve) == 5
    q = [f.flow_rate for f in curve]
    assert all(b > a for a, b in zip(q, q[1:]))
    # power law: Q ~ G^(1/n) exactly (the equations scale)
    assert q[-1] / q[0] == pytest.approx(100.0**2, rel=1e-8)


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
# every other declared model with its own example values, so a new model is covered unasked
TYPICAL = {**{name: dict(model.example) for name, model in MODELS.items()}, **TYPICAL}


def test_every_model_is_tabled():
    assert set(TYPICAL) == set(MODELS)


@pytest.mark.parametrize("name", sorted(TYPICAL))
def test_every_declared_model_solves(name):
    # common practice, no source: the mean wall stress is G A / P whatever the model, Q > 0 above any
    # threshold, and the wall shear stress is largest on the long wall
    G = 1e5
    flow = solve_rectangle(MODELS[name], TYPICAL[name], DEPTH, WIDTH, pressure_gradient=G, cells=16)
    assert flow.flowing and flow.flow_rate > 0 and flow.converged
    assert flow.mean_wall_shear_stress == pytest.approx(G * DEPTH * WIDTH / (2 * (DEPTH + WIDTH)))
    assert flow.max_wall_shear_stress_at[0] == pytest.approx(0.5 * DEPTH)
    assert flow.max_wall_shear_stress > flow.mean_wall_shear_stress
    low, high = flow.shear_rate_range
    assert 0 <= low < high <= flow.max_shear_rate * (1 + 1e-12)
    assert flow.velocity.shape == (flow.grid_y.size, flow.grid_z.size)
    assert flow.max_velocity > flow.mean_velocity
    assert set(flow.to_dict()) >= {"flow_rate", "pressure_gradient", "relative_error", "wall_shear_stress"}


# --- bad input -------------------------------------------------------------------

def test_bad_input_is_refused_in_one_sentence():
    with pytest.raises(GeometryError, match="depth"):
        solve_rectangle(NEWTONIAN, {"mu": 1e-3}, -1.0, WIDTH, pressure_gradient=1.0)
    with pytest.raises(GeometryError, match="exactly one"):
        solve_rectangle(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH)
    with pytest.raises(GeometryError, match="exactly one"):
        solve_rectangle(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, pressure_gradient=1.0, flow_rate=1.0)
    with pytest.raises(GeometryError, match="non-negative"):
        solve_rectangle(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, pressure_gradient=-5.0)
    with pytest.raises(GeometryError, match="too coarse"):
        RectangleSolver(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, cells=2)
    with pytest.raises(ParameterError, match="method"):
        RectangleSolver(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, method="fast")
    with pytest.raises(ParameterError):
        solve_rectangle(NEWTONIAN, {"viscosity": 1e-3}, DEPTH, WIDTH, pressure_gradient=1.0)


def test_at_rest_results():
    # common practice, no source: no pressure gradient, no flow; no flow, no pressure gradient
    still = solve_rectangle(NEWTONIAN, {"mu": 1e-3}, DEPTH, WIDTH, pressure_gradient=0.0)
    assert not still.flowing and still.flow_rate == 0.0
    none = solve_rectangle(BINGHAM, {"tau_y": 1.0, "mu_p": 1e-2}, DEPTH, WIDTH, flow_rate=0.0)
    assert none.pressure_gradient == 0.0 and not none.flowing


def test_parameter_draws_on_the_medium_mesh():
    # own reference: full default-mesh solves of the same parameter sets; the draws are solved on the
    # medium mesh and scaled by the nominal fine/medium ratio, which must reproduce them to the 1e-4 tolerance
    params = {"K": 0.1, "n": 0.5}
    solver = RectangleSolver(POWER_LAW, params, DEPTH, WIDTH)
    nominal = solver.at_pressure_gradient(1e5)
    sets = [params, {"K": 0.11, "n": 0.47}, {"K": 0.09, "n": 0.53}]
    values = solver.draws(sets, nominal)
    assert values[0] == pytest.approx(nominal.flow_rate, rel=1e-10)
    for p, value in zip(sets[1:], values[1:]):
        full = solve_rectangle(POWER_LAW, p, DEPTH, WIDTH, pressure_gradient=1e5).flow_rate
        assert rel(value, full) < 1e-4
    back = RectangleSolver(POWER_LAW, params, DEPTH, WIDTH)
    given_q = back.at_flow_rate(nominal.flow_rate)
    gradients = back.draws(sets[1:], given_q)
    for p, value in zip(sets[1:], gradients):
        full = solve_rectangle(POWER_LAW, p, DEPTH, WIDTH, flow_rate=nominal.flow_rate).pressure_gradient
        assert rel(value, full) < 1e-4
