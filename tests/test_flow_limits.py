"""Flow curves that stop rising: the engine refuses, it does not return nonsense."""

import math
import re

import pytest

from rheofit.errors import GeometryError
from rheofit.flow import Slit, Tube, engine
from rheofit.fluid import fluid

# Cross (1965) with eta_inf = 0 and m > 1: tau = eta0 x / lam / (1 + x^m), x = lam gamma_dot,
# rises, peaks at x = (1/(m - 1))^(1/m) and falls (derivative of the Cross form)
PEAKED = fluid("cross", eta0=1.0, eta_inf=0.0, lam=1.0, m=1.5)
TUBE = Tube("0.8 mm", "0.3 m")


def test_flow_rate_beyond_the_peak_is_refused():
    with pytest.raises(GeometryError, match="beyond this fluid's flow curve"):
        engine.pressure_drop(PEAKED, TUBE, 1e-9)


def test_flow_rate_below_the_peak_round_trips():
    dp = engine.pressure_drop(PEAKED, TUBE, 1e-11)
    assert dp > 0
    assert engine.flow_rate(PEAKED, TUBE, dp) == pytest.approx(1e-11, rel=1e-8)


# Cross (1965) with eta_inf = 0 and m = 1: tau = eta0 s / (1 + lam s) rises towards eta0 / lam and
# levels off there.  A property test found this fluid (eta0 = 1 Pa s, lam = 10 s: 0.1 Pa), for
# which the refusal of a large flow rate once quoted "at most -1.134e+281 m^3/s".
LEVELLING = fluid("cross", eta0=1.0, eta_inf=0.0, lam=10.0, m=1.0)
SHAPES = {"tube": TUBE, "slit": Slit("0.2 mm", "5 mm", "0.05 m")}


def levelling_flow_rate(shape, shear_rate):
    """Q [m^3/s] of LEVELLING at a wall shear rate [1/s], in closed form.

    Rabinowitsch (1929) / Mooney (1931): Q = C / T^k int_0^T t^k / (a - b t) dt with the inverse
    flow curve gd(t) = t / (a - b t) (a = eta0, b = lam), C = pi R^3, k = 3 (tube) or
    C = 2 W h^2, k = 2 (slit).  With x = b T / a the integral is
    a^k / b^(k+1) * (-ln(1 - x) - sum_{j=1..k} x^j / j) (series of -ln(1 - x); derived here),
    and -ln(1 - x) = ln(1 + b gd_w) since T = a gd_w / (1 + b gd_w).
    """
    a, b = 1.0, 10.0
    geometry = SHAPES[shape]
    scale, k = ((math.pi * geometry.radius**3, 3) if shape == "tube"
                else (2.0 * geometry.width * (geometry.gap / 2) ** 2, 2))
    x = b * shear_rate / (1.0 + b * shear_rate)
    integral = a**k / b ** (k + 1) * (math.log1p(b * shear_rate) - sum(x**j / j for j in range(1, k + 1)))
    return scale * integral / (a * x / b) ** k


@pytest.mark.parametrize("shape", list(SHAPES))
def test_flow_rate_beyond_a_levelling_flow_curve_is_refused_with_a_positive_maximum(shape):
    geometry = SHAPES[shape]
    asked = 100.0 * levelling_flow_rate(shape, 1.0)  # a hundred times the flow at 1 1/s at the wall
    with pytest.raises(GeometryError, match=r"levels off at a shear stress of 0\.1 Pa") as refused:
        engine.pressure_drop(LEVELLING, geometry, asked)
    most = float(re.search(r"at most (\S+) m\^3/s", str(refused.value)).group(1))
    assert 0.0 < most < asked
    # up to that maximum the engine solves, below the plateau stress and on the closed form
    # (to 1e-6 near the maximum, the engine's own test of a solution; its integral keeps about
    # 7 digits that close to the plateau)
    for share, rel in ((0.5, 1e-9), (0.99, 1e-6)):
        state = engine.solve_flow_rate(LEVELLING, geometry, share * most)
        assert state.wall_shear_stress[0] < 0.1
        assert levelling_flow_rate(shape, state.wall_shear_rate[0]) == pytest.approx(share * most, rel=rel)
