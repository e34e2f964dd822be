"""The laminar check computed once per fluid: the kept values, the lattice and the size invariance."""

import numpy as np
import pytest

from rheofit.fluid import fluid
from rheofit.flow import Slit, Tube, engine, predict, regime
from rheofit.models import ViscosityModel

TUBE = Tube("1 mm", "0.2 m")


def ryan_johnson(n):
    # Source: Ryan & Johnson (1959), AIChE J. 5, 433: Re_crit = 6464 n (2+n)^((2+n)/(1+n)) / (1+3n)^2
    return 6464 * n * (2 + n) ** ((2 + n) / (1 + n)) / (1 + 3 * n) ** 2


@pytest.mark.parametrize("n", (0.2, 0.6, 1.4))
def test_ryan_johnson_on_many_points(n):
    # more than 48 points: the values come from the fluid's lattice, exact for a power law
    p = predict(fluid("power_law", K=0.1, n=n), TUBE, flow_rate=np.geomspace(1e-10, 1e-5, 200))
    np.testing.assert_allclose(p.critical_reynolds, ryan_johnson(n), rtol=1e-6)


def test_many_points_agree_with_each_point_alone():
    # a Carreau (1972) and a Bingham (1916) fluid: the lattice (step 1/8 in ln gd_w) against the
    # exact evaluation of single points; its measured worst case here is 5e-6
    q = np.geomspace(1e-10, 1e-7, 60)
    for f in (fluid("carreau", eta0=10.0, eta_inf=1e-3, lam=1.0, n=0.3), fluid("bingham", tau_y=5.0, mu_p=0.1)):
        regime.SHAPES.clear()
        many = predict(f, TUBE, flow_rate=q).critical_reynolds
        alone = [predict(f, TUBE, flow_rate=x).critical_reynolds for x in q[::7]]
        np.testing.assert_allclose(many[::7], alone, rtol=2e-5)


def test_kept_values_are_reused_and_equal_a_fresh_evaluation():
    f = fluid("cross", eta0=2.0, eta_inf=1e-3, lam=0.5, m=0.7)
    regime.SHAPES.clear()
    engine.RHEOLOGIES.clear()
    fresh = predict(f, TUBE, flow_rate=3e-8).critical_reynolds
    again = predict(f, TUBE, flow_rate=3e-8).critical_reynolds
    assert again == fresh
    # the table is kept per fluid: one entry for the tube's k, whatever the call
    assert len(regime.SHAPES) == 1


def test_critical_reynolds_depends_on_the_kind_not_the_size():
    # Derived here: u and V scale with the half size R at a fixed wall shear rate, gd_app does not,
    # so Z_max/Re = R max(u |du/dr|) / (V D_h gd_app) is the same for any tube (slit: any gap and
    # width, with the threshold 2100 h/(sqrt(3) D_h)); this is what lets one table serve them all.
    # The per-point value is compared (critical_reynolds): the value a prediction SHOWS for a
    # yield-stress fluid is Hanks' single one, Re where Z_max reaches 808, and Re depends on the size.
    f = fluid("herschel_bulkley", tau_y=1.0, K=0.5, n=0.5)
    for small, large in ((Tube("1 mm", "0.2 m"), Tube("3 mm", "0.6 m")),
                         (Slit("0.2 mm", "5 mm", "0.05 m"), Slit("0.6 mm", "40 mm", "0.15 m"))):
        dp = small.pressure_drop(np.array([3.0, 30.0]))  # the same wall stresses in both
        regime.SHAPES.clear()
        a = predict(f, small, pressure_drop=dp)
        regime.SHAPES.clear()
        b = predict(f, large, pressure_drop=dp)
        np.testing.assert_allclose(a.wall_shear_rate, b.wall_shear_rate, rtol=1e-14)
        regime.SHAPES.clear()
        per_a = regime.critical_reynolds(f, small, a.wall_shear_stress, a.wall_shear_rate, a.flow_rate)
        regime.SHAPES.clear()
        per_b = regime.critical_reynolds(f, large, b.wall_shear_stress, b.wall_shear_rate, b.flow_rate)
        np.testing.assert_allclose(per_a, per_b, rtol=1e-12)


def test_a_different_declaration_of_the_same_name_is_not_taken_for_the_first():
    first = fluid("power_law", K=1.0, n=0.5)
    twin = ViscosityModel(**{**first.declaration.__dict__, "stress_function": lambda rate, K, n: 2 * K * rate**n})
    memo, made = engine.FluidMemo(), []
    memo.get(first, None, lambda: made.append("first"))
    memo.get(type(first)(twin, dict(first.values)), None, lambda: made.append("twin"))
    memo.get(first, None, lambda: made.append("first again"))
    assert made == ["first", "twin", "first again"]
    # and the engine's kept flow curves follow the declaration, not its name
    twice = type(first)(twin, dict(first.values))
    assert engine.rheology_of(twice).stress(np.array([4.0]))[0] == pytest.approx(4.0)
    assert engine.rheology_of(first).stress(np.array([4.0]))[0] == pytest.approx(2.0)
