"""How long fit_all takes on a 30-point sweep over every declared model.

Run:  python benchmarks/fit_speed.py
Prints the wall time per fit_all call (median and worst of several repeats)
for a few kinds of synthetic curve (invented parameters, 2 % noise), and the
time per model on the first one.  Includes 95 % profile-likelihood
intervals for every parameter.  No pass/fail: figures only.
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from rheofit.curve import FlowCurve
from rheofit.fitting import fit, fit_all
from rheofit.models import MODELS

CURVES = {
    "carreau with both plateaus": ("carreau", {"eta0": 10.0, "eta_inf": 0.01, "lam": 2.0,
                                               "n": 0.35}, (1e-3, 1e6)),
    "carreau, no zero-shear plateau": ("carreau", {"eta0": 100.0, "eta_inf": 0.0, "lam": 10.0,
                                                   "n": 0.4}, (1.0, 1e3)),
    "herschel-bulkley": ("herschel_bulkley", {"tau_y": 10.0, "K": 2.0, "n": 0.5}, (0.01, 1e3)),
    "power law": ("power_law", {"K": 2.0, "n": 0.45}, (0.1, 1e3)),
}
REPEATS = 5


def sweep(model, params, rate_range, seed=0):
    rng = np.random.default_rng(seed)
    rate = np.logspace(*np.log10(rate_range), 30)
    stress = MODELS[model].stress(rate, **params) * np.exp(0.02 * rng.standard_normal(30))
    return FlowCurve.from_arrays(rate, stress=stress, name=model)


def main() -> None:
    fit(sweep("power_law", {"K": 1.0, "n": 0.5}, (1.0, 10.0)), "power_law")  # imports, warm-up
    print(f"fit_all over {len(MODELS)} models, 30 points, {REPEATS} repeats each")
    for label, (model, params, rate_range) in CURVES.items():
        curve = sweep(model, params, rate_range)
        times = []
        for _ in range(REPEATS):
            start = time.perf_counter()
            ranking = fit_all(curve)
            times.append(time.perf_counter() - start)
        print(f"  {label:32s} median {statistics.median(times):.3f} s, "
              f"worst {max(times):.3f} s, best model {ranking[0].model}")
    curve = sweep(*CURVES["carreau with both plateaus"])
    print("per model on 'carreau with both plateaus':")
    for name in MODELS:
        start = time.perf_counter()
        fit(curve, name)
        print(f"  {name:18s} {1e3 * (time.perf_counter() - start):7.1f} ms")


if __name__ == "__main__":
    main()
