"""Flow curves that stop rising: the engine refuses, it does not return nonsense."""

import pytest

from rheofit.errors import GeometryError
from rheofit.flow import Tube, engine
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
