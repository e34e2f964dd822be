"""Speed of the prediction intervals and of predict() (prints figures; asserts nothing).

For fits of invented sweeps (fixed seed) of several models, in a tube:

1. One 95 % interval with 400 draws at one operating point (and at 100):
   the parameter draws alone (Monte Carlo draws plus the profile sweep of
   any unresolved parameter); the flow solves of those draws, before (one
   engine call per draw, as rheofit.flow.intervals did until the engine
   took parameter sets) and now (all draws in one vectorised call,
   rheofit.flow.engine.solve_sets), with the worst relative difference of
   the interval ends between the two; and the whole predict() with its
   interval.  The viscosity band (2000 draws, 200 shear rates) for reference.
2. predict() without an interval, at 1 and at 100 operating points, with
   the per-fluid caches emptied before every call (the flow curve's start-up
   table and the laminar check's stability values, as every call computed
   them before) and with them kept (repeated calls for the same fluid).

Each figure is the best of ``--repeat`` runs, in ms.

Measured on 2 shared cores (load about 1), ms, best of 3:

    one interval, 1 point     draws   solves: per draw -> vectorised   predict with it: before -> now
    power law                   0.1            91.8 ->  3.7                 78.3 ->  5.3
    Carreau                    13.3           209.0 ->  6.9                176.8 -> 22.8
    Cross                      16.1           196.0 -> 15.2                166.6 -> 21.6
    Herschel-Bulkley            0.1           228.7 ->  3.4                133.5 -> 5.7

("before" for predict: the code before this change, same session; the
per-draw column re-enacts the old method on today's engine.)  The interval
ends agree to 2e-15.  Of the Carreau and Cross intervals 13-16 ms are the
parameter draws (the profile sweep of an unresolved parameter,
rheofit.fitting.draws), untouched here.  At 100 points: 143-847 -> 75-372
ms for the solves.  predict() without an interval, 1 / 100 points: 1.6-2.2
/ 8-10 ms with the caches emptied, 0.8-1.5 / 1.2-2.6 ms for a fluid seen
before (the code before: 2.0-3.5 / 16.5-21 ms).

Run:  python benchmarks/interval_speed.py [--repeat 5] [--samples 400]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from rheofit.curve import FlowCurve
from rheofit.errors import RheofitError
from rheofit.fitting import fit
from rheofit.fitting.draws import interval_from, parameter_draws, viscosity_band
from rheofit.flow import Tube, engine, predict, regime
from rheofit.flow.intervals import flow_intervals
from rheofit.models import MODELS

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
QUANTITIES = ("pressure_drop", "wall_shear_stress", "wall_shear_rate")


def best_of(repeat, function, before=None):
    times = []
    for _ in range(repeat):
        if before is not None:
            before()
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


def per_draw(result, draws, flow_rate):
    """The intervals as before: one engine call per draw, a failed draw caught and left out."""
    central = engine.solve_flow_rate(result.fluid, TUBE, flow_rate)

    def solve_all(rows):
        out = []
        for fluid in draws.fluids(rows) if len(rows) else ():
            try:
                state = engine.solve_flow_rate(fluid, TUBE, flow_rate)
            except RheofitError:
                continue
            solved = np.stack([getattr(state, name) for name in QUANTITIES])
            if np.all(np.isfinite(solved) & (solved >= 0)):
                out.append(solved)
        return np.array(out).reshape(len(out), len(QUANTITIES), flow_rate.size)

    mc, ridge = solve_all(draws.draws), solve_all(draws.ridge)
    return {name: interval_from(getattr(central, name), mc[:, i], ridge[:, i], 0.95)
            for i, name in enumerate(QUANTITIES)}


def worst_difference(before, now) -> float:
    worst = 0.0
    for name in QUANTITIES:
        for a, b in zip(before[name], now.intervals[name]):
            worst = max(worst, float(np.max(np.abs(np.asarray(b) / np.asarray(a) - 1.0))))
    return worst


def clear_caches() -> None:
    engine.RHEOLOGIES.clear()
    regime.SHAPES.clear()


def interval_table(results, repeat, samples, flow_rate):
    print(f"{'model':<34}{'draws':>8}{'solves: per draw':>18}{'vectorised':>12}{'(max diff)':>12}"
          f"{'predict':>10}{'visc. band':>12}")
    for label, result in results.items():
        draws = parameter_draws(result, samples)
        draw_time = best_of(repeat, lambda: parameter_draws(result, samples))
        before = per_draw(result, draws, flow_rate)
        now = flow_intervals(result, TUBE, flow_rate=flow_rate, draws=draws)
        old = best_of(repeat, lambda: per_draw(result, draws, flow_rate))
        new = best_of(repeat, lambda: flow_intervals(result, TUBE, flow_rate=flow_rate, draws=draws))
        whole = best_of(repeat, lambda: predict(result, TUBE, flow_rate=flow_rate, samples=samples))
        band = best_of(repeat, lambda: viscosity_band(result, np.geomspace(1e-2, 1e3, 200)))
        print(f"{label:<34}{1e3 * draw_time:>8.1f}{1e3 * old:>18.1f}{1e3 * new:>12.1f}"
              f"{worst_difference(before, now):>12.1e}{1e3 * whole:>10.1f}{1e3 * band:>12.1f}")


def predict_table(results, repeat):
    one, many = 1e-8, np.geomspace(1e-10, 1e-7, 100)
    print(f"{'model':<34}{'1 point: no cache':>19}{'cached':>8}{'100 points: no cache':>22}{'cached':>8}")
    for label, result in results.items():
        cells = []
        for q in (one, many):
            def call():
                return predict(result, TUBE, flow_rate=q, uncertainty=False)
            cells += [best_of(repeat, call, before=clear_caches), best_of(repeat, call)]
        print(f"{label:<34}{1e3 * cells[0]:>19.2f}{1e3 * cells[1]:>8.2f}{1e3 * cells[2]:>22.2f}"
              f"{1e3 * cells[3]:>8.2f}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--samples", type=int, default=400)
    args = parser.parse_args()
    rng = np.random.default_rng(2026)
    results = {label: make_fit(label, rng) for label in CASES}
    print(f"One 95 % interval ({args.samples} draws) at one operating point, tube; best of "
          f"{args.repeat}; ms; max diff = worst relative difference of the interval ends")
    interval_table(results, args.repeat, args.samples, np.array([1e-8]))
    print("\nThe same at 100 operating points")
    interval_table(results, args.repeat, args.samples, np.geomspace(1e-10, 1e-7, 100))
    print("\npredict() without an interval; ms; 'no cache': per-fluid caches emptied before each call")
    predict_table(results, args.repeat)


if __name__ == "__main__":
    main()
