"""Speed of the prediction intervals (prints figures; asserts nothing).

For fits of invented sweeps (fixed seed) of several models, times

1. the parameter draws alone (Monte Carlo draws plus the profile sweep of
   any unresolved parameter),
2. one 95 % interval at a scalar operating point (predict with the default
   400 draws; the draws are carried through the engine one vectorised solve
   per draw),
3. the same for an array of 100 operating points,
4. a viscosity band over 200 shear rates (2000 draws, fully vectorised),

each the best of ``--repeat`` runs, and the same predictions without the
interval for comparison.

Run:  python benchmarks/interval_speed.py [--repeat 3] [--samples 400]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from rheofit.curve import FlowCurve
from rheofit.fitting import fit
from rheofit.flow import Tube, predict
from rheofit.models import MODELS
from rheofit.uncertainty import parameter_draws, viscosity_band

TUBE = Tube("0.8 mm", "0.3 m")
CASES = {
    # model: (true parameters, shear-rate range [1/s], points)
    "power_law": ({"K": 2.0, "n": 0.6}, (0.1, 1e3), 20),
    "carreau": ({"eta0": 2.0, "eta_inf": 1e-3, "lam": 1.0, "n": 0.4}, (1e-2, 1e3), 25),
    "cross": ({"eta0": 2.0, "eta_inf": 1e-3, "lam": 0.5, "m": 0.7}, (1e-2, 1e3), 25),
    "herschel_bulkley": ({"tau_y": 1.0, "K": 0.5, "n": 0.5}, (0.1, 1e3), 20),
    "carreau (no plateau: eta0 swept)": ({"eta0": 50.0, "eta_inf": 1e-3, "lam": 100.0, "n": 0.5},
                                         (1.0, 1e3), 15),
}


def best_of(repeat, function):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return min(times)


def make_fit(label, rng):
    true, rate_range, points = CASES[label]
    model = label.split(" ")[0]
    rate = np.logspace(*np.log10(rate_range), points)
    stress = MODELS[model].stress(rate, **true) * np.exp(0.03 * rng.standard_normal(points))
    return fit(FlowCurve.from_arrays(rate, stress=stress, name=label), model)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--samples", type=int, default=400)
    args = parser.parse_args()
    rng = np.random.default_rng(2026)
    q_one = 1e-8
    q_many = np.geomspace(1e-10, 1e-7, 100)
    rates = np.geomspace(1e-2, 1e3, 200)
    print(f"draws per interval: {args.samples}; best of {args.repeat} runs; times in ms")
    print(f"{'model':<34}{'draws':>8}{'1 point':>10}{'(no CI)':>9}{'100 points':>12}"
          f"{'(no CI)':>9}{'visc. band':>12}")
    for label in CASES:
        result = make_fit(label, rng)
        draws = best_of(args.repeat, lambda: parameter_draws(result, args.samples))
        one = best_of(args.repeat, lambda: predict(result, TUBE, flow_rate=q_one, samples=args.samples))
        one_plain = best_of(args.repeat, lambda: predict(result, TUBE, flow_rate=q_one, uncertainty=False))
        many = best_of(args.repeat, lambda: predict(result, TUBE, flow_rate=q_many, samples=args.samples))
        many_plain = best_of(args.repeat, lambda: predict(result, TUBE, flow_rate=q_many, uncertainty=False))
        band = best_of(args.repeat, lambda: viscosity_band(result, rates))
        print(f"{label:<34}{1e3 * draws:>8.1f}{1e3 * one:>10.1f}{1e3 * one_plain:>9.1f}"
              f"{1e3 * many:>12.1f}{1e3 * many_plain:>9.1f}{1e3 * band:>12.1f}")


if __name__ == "__main__":
    main()
