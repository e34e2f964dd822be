"""Coverage of the 95 % intervals over many synthetic replicates.

For each replicate, invented true parameters plus fresh log-normal noise
give a new curve; the fraction of 95 % intervals that contain the true value
is the coverage.  It must lie within 3 binomial standard deviations of 0.95,
sqrt(0.95 * 0.05 / replicates), computed below (normal approximation to the
binomial; common practice, no source).  An open end counts as covering on
that side.  Measured figures are printed (run with ``-s``) and recorded as
test properties.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from rheofit.curve import FlowCurve
from rheofit.fitting import fit
from rheofit.models import MODELS

#: statistical calibrations over hundreds of fits: run by default, skipped with -m "not slow"
pytestmark = pytest.mark.slow

NOMINAL = 0.95

CASES = {
    # model: (true parameters, shear-rate range [1/s], points, noise, replicates, seed)
    "power_law": ({"K": 2.0, "n": 0.6}, (0.1, 1e3), 12, 0.03, 400, 11),
    "carreau": ({"eta0": 10.0, "eta_inf": 0.01, "lam": 2.0, "n": 0.35}, (1e-3, 1e6), 20, 0.03,
                200, 12),
}


def coverage(model, true, rate_range, n_points, noise, replicates, seed):
    rng = np.random.default_rng(seed)
    rate = np.logspace(*np.log10(rate_range), n_points)
    clean = MODELS[model].stress(rate, **true)
    hits = dict.fromkeys(true, 0)
    for _ in range(replicates):
        noisy = clean * np.exp(noise * rng.standard_normal(n_points))
        result = fit(FlowCurve.from_arrays(rate, stress=noisy), model)
        for name, value in true.items():
            low, high = result.params[name].ci95
            hits[name] += (low is None or low <= value) and (high is None or value <= high)
    return {name: count / replicates for name, count in hits.items()}


@pytest.mark.parametrize("model", list(CASES))
def test_interval_coverage(model, record_property):
    true, rate_range, n_points, noise, replicates, seed = CASES[model]
    measured = coverage(model, true, rate_range, n_points, noise, replicates, seed)
    band = 3.0 * math.sqrt(NOMINAL * (1.0 - NOMINAL) / replicates)
    for name, value in measured.items():
        print(f"coverage {model}.{name}: {value:.4f} over {replicates} replicates "
              f"(accepted {NOMINAL - band:.4f} to {NOMINAL + band:.4f})")
        record_property(f"coverage_{model}_{name}", value)
    for name, value in measured.items():
        assert abs(value - NOMINAL) <= band, (name, value, band)
