"""How long fitting takes: fit_all on 30-point sweeps, and one fit of a long sweep.

Run:  python benchmarks/fit_speed.py            (30-point sweeps, every model)
      python benchmarks/fit_speed.py --large    (one fit of 1,000 to 200,000 points)

The first part prints the wall time per fit_all call (median and worst of
several repeats) for a few kinds of synthetic curve (invented parameters,
2 % noise), and the time per model on the first one.  Includes 95 %
profile-likelihood intervals for every parameter.

``--large`` times one ``fit`` (with intervals and the runs test) of long
invented sweeps, each size in a fresh interpreter with a time limit (a size
that does not finish is reported as such), then the runs test alone, and the
cost per point (linear cost: a flat column).  No pass/fail: figures only.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
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
#: long sweeps: points, and the model fitted to each (invented parameters, 2 % noise)
LARGE_SIZES = (1_000, 10_000, 20_000, 200_000)
LARGE_MODELS = {"power_law": ({"K": 2.0, "n": 0.45}, (0.1, 1e3)),
                "carreau": ({"eta0": 10.0, "eta_inf": 0.01, "lam": 2.0, "n": 0.35}, (1e-3, 1e4))}
#: seconds one size may take before it counts as not finished
LARGE_TIMEOUT = 90.0


def sweep(model, params, rate_range, seed=0, points=30):
    rng = np.random.default_rng(seed)
    rate = np.logspace(*np.log10(rate_range), points)
    stress = MODELS[model].stress(rate, **params) * np.exp(0.02 * rng.standard_normal(points))
    return FlowCurve.from_arrays(rate, stress=stress, name=model)


def time_one_large(what: str, points: int, repeats: int = 3) -> None:
    """Print best and median wall time of fit(...) on one long sweep, or of the runs test alone."""
    if what == "runs_test":
        from rheofit.fitting.statistics import runs_test

        residuals = np.random.default_rng(1).standard_normal(points)
        runs_test(residuals[:10])  # imports
        call = lambda: runs_test(residuals)  # noqa: E731
    else:
        curve = sweep(what, *LARGE_MODELS[what], points=points)
        fit(sweep(what, *LARGE_MODELS[what]), what)  # imports, warm-up
        call = lambda: fit(curve, what)  # noqa: E731
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        call()
        times.append(time.perf_counter() - start)
    print(f"{min(times):.6f} {statistics.median(times):.6f}")


def _child(what: str, points: int) -> tuple[float, float] | None:
    """(best, median) seconds from a fresh interpreter, None past LARGE_TIMEOUT."""
    command = [sys.executable, __file__, "--one", what, str(points)]
    try:
        out = subprocess.run(command, capture_output=True, text=True, check=True,
                             timeout=LARGE_TIMEOUT).stdout.split()
    except subprocess.TimeoutExpired:
        return None
    return float(out[-2]), float(out[-1])


def large() -> None:
    """One fit of long sweeps, and the runs test alone, each size in a fresh interpreter."""
    print(f"long sweeps; best and median of 3, each size in a fresh interpreter, "
          f"limit {LARGE_TIMEOUT:.0f} s per size")
    for what in (*LARGE_MODELS, "runs_test"):
        label = "runs test alone (random signs)" if what == "runs_test" else f"fit {what}"
        for points in LARGE_SIZES:
            found = _child(what, points)
            if found is None:
                print(f"  {label:31s} {points:>8,} points: did not finish in {LARGE_TIMEOUT:.0f} s")
                continue
            best, median = found
            print(f"  {label:31s} {points:>8,} points: best {1e3 * best:9.1f} ms, "
                  f"median {1e3 * median:9.1f} ms, {1e6 * best / points:6.2f} us per point")


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
    if sys.argv[1:2] == ["--one"]:
        time_one_large(sys.argv[2], int(sys.argv[3]))
    elif sys.argv[1:2] == ["--large"]:
        large()
    else:
        main()
