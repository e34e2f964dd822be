"""Ellis (a model given by its inverse) against Carreau: time per operating point and per fit.

Prints figures; asserts nothing.  Ellis has no stress function of its own:
its flow curve tau(gamma_dot) is the declared inverse gamma_dot(tau) solved
by :func:`rheofit.models.declaration.monotone_inverse`, so every stress the
generic engine asks for costs a vectorised root solve.  Also printed: the
worst relative error of the generic engine against the Ellis closed forms
(tube and slit, coded here: Bird, Stewart & Lightfoot 2002, ch. 8, from
memory, and derived from the Rabinowitsch-Mooney integrals).

Run:  python benchmarks/ellis_speed.py [--repeat 5]
"""

from __future__ import annotations

import argparse
import math
import time

import numpy as np

from rheofit.curve import FlowCurve
from rheofit.fitting import fit
from rheofit.flow import Slit, Tube, engine
from rheofit.fluid import fluid
from rheofit.models import MODELS

TUBE = Tube("1 mm", "0.1 m")
SLIT = Slit("0.2 mm", "10 mm", "0.05 m")


def best_of(repeat, call):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        call()
        times.append(time.perf_counter() - start)
    return min(times)


def per_point(repeat):
    print("time per operating point, tube, generic engine (best of", repeat, "runs)")
    print(f"{'model':<10}{'points':>8}{'dP -> Q [ms/pt]':>18}{'Q -> dP [ms/pt]':>18}")
    for name in ("carreau", "ellis"):
        f = fluid(name, **MODELS[name].example)
        for points in (1, 100, 10_000):
            tau_w = f.stress(np.geomspace(*MODELS[name].example_range, points))
            dp = TUBE.pressure_drop(tau_w)
            q = engine.flow_rate(f, TUBE, dp, "generic")
            forward = best_of(repeat, lambda: engine.flow_rate(f, TUBE, dp, "generic"))
            backward = best_of(repeat, lambda: engine.pressure_drop(f, TUBE, q, "generic"))
            print(f"{name:<10}{points:>8}{1e3 * forward / points:>18.4f}{1e3 * backward / points:>18.4f}")


def per_fit(repeat):
    print("\ntime per fit (profile-likelihood intervals), the example sweep, 32 points, 2 % noise")
    for name in ("carreau", "ellis"):
        m = MODELS[name]
        rate = np.geomspace(*m.example_range, 32)
        noise = np.exp(0.02 * np.random.default_rng(1).standard_normal(rate.size))
        curve = FlowCurve.from_arrays(rate, stress=m.stress(rate, **m.example) * noise, name="invented")
        print(f"{name:<10}{best_of(repeat, lambda: fit(curve, name)):.3f} s")


def ellis_accuracy():
    worst = 0.0
    for eta0, tau_half, alpha in ((1.0, 5.0, 2.5), (0.05, 0.3, 1.3), (10.0, 50.0, 6.0), (3e-3, 2.0, 1.8)):
        f = fluid("ellis", eta0=eta0, tau_half=tau_half, alpha=alpha)
        tau_w = np.geomspace(1e-2, 1e4, 25)
        bracket_t = 1 + 4 / (alpha + 3) * (tau_w / tau_half) ** (alpha - 1)
        bracket_s = 1 + 3 / (alpha + 2) * (tau_w / tau_half) ** (alpha - 1)
        tube = math.pi * TUBE.radius**3 * tau_w / (4 * eta0) * bracket_t
        slit = 2 * SLIT.width * SLIT.half_gap**2 * tau_w / (3 * eta0) * bracket_s
        for geometry, expected in ((TUBE, tube), (SLIT, slit)):
            got = engine.flow_rate(f, geometry, geometry.pressure_drop(tau_w), "generic")
            back = engine.pressure_drop(f, geometry, expected, "generic")
            worst = max(worst, float(np.max(np.abs(got / expected - 1))),
                        float(np.max(np.abs(back / geometry.pressure_drop(tau_w) - 1))))
    print(f"\nEllis, generic engine against the closed forms: worst relative error {worst:.2e}")


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    per_point(args.repeat)
    per_fit(max(1, args.repeat // 2))
    ellis_accuracy()


if __name__ == "__main__":
    main()
