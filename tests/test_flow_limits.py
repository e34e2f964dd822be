"""Flow curves that stop rising: the engine refuses, it does not return nonsense."""

import pytest

from rheofit.errors import GeometryError
from rheofit.flow import Tube, engine
from rheofit.fluid import fluid

# eta_inf > eta0 with n > 1: the Carreau viscosity falls through zero at high rate,
# so the stress rises, peaks and falls (Carreau 1972 form; unphysical parameters)
PEAKED = fluid("carreau", eta0=1.0048, eta_inf=1.0277, lam=2.70, n=1.5)
TUBE = Tube("0.8 mm", "0.3 m")


def test_flow_rate_beyond_the_peak_is_refused():
    with pytest.raises(GeometryError, match="beyond this fluid's flow curve"):
        engine.pressure_drop(PEAKED, TUBE, 1e-6)


def test_flow_rate_below_the_peak_round_trips():
    dp = engine.pressure_drop(PEAKED, TUBE, 1e-9)
    assert dp > 0
    assert engine.flow_rate(PEAKED, TUBE, dp) == pytest.approx(1e-9, rel=1e-8)
