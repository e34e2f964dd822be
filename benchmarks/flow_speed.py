"""Speed and accuracy of the flow engine (prints figures; asserts nothing).

1. Pressure drop for 10,000 flow rates of a Carreau fluid in a tube with the
   vectorised engine, against a naive reference on a subset in the same run:
   scipy.integrate.quad over the inverse flow curve gd(tau) (each value by
   brentq), inside a brentq on the flow rate
       Q(tau_w) = pi R^3 / tau_w^3 * int_0^tau_w tau^2 gd(tau) dtau
   (Rabinowitsch 1929; Mooney 1931).  The naive time per point is measured
   on the subset and scaled.
2. The block size of the engine (rows of operating points per vectorised
   block): Q -> dP and dP -> Q at the same 10,000 points for 32-4096 rows,
   each size in a fresh process (first call and best of ``--repeat``), and
   whether the results are bit-identical to those with 4096 rows (the size
   before; now 64).
3. Worst relative error of the generic engine against closed forms (power
   law, Bingham, Herschel-Bulkley; tube and slit; n 0.15-1.5, tau_y/tau_w up
   to 0.98; both directions), coded here independently of the package.

Measured on 2 shared cores (load about 1), Carreau, 10,000 points, generic
engine, each block size in a fresh process, first call / best of 5 [us per
point]; every size gave bit-identical results:

    rows    Q -> dP         dP -> Q
      32    7.45 / 7.27     3.47 / 3.33
      64    6.82 / 6.58     3.19 / 2.98    (now)
     128    6.61 / 6.61     3.13 / 3.01
     256   10.92 / 10.92    4.57 / 4.37
     512   12.46 / 11.80    5.70 / 5.51
    1024   13.78 / 12.35    6.25 / 6.08
    2048   15.11 / 14.09    6.89 / 6.89
    4096   14.93 / 11.20    6.74 / 5.48    (before)

The engine as it was (4096 rows), same session: 12.5 and 7.1 us per point.

Run:  python benchmarks/flow_speed.py [--points 10000] [--subset 20] [--repeat 3]
"""

from __future__ import annotations

import argparse
import hashlib
import math
import subprocess
import sys
import time

import numpy as np
from scipy import integrate, optimize

from rheofit.fluid import fluid
from rheofit.flow import Slit, Tube, engine

CARREAU = dict(eta0=10.0, eta_inf=1e-3, lam=1.0, n=0.3)
TUBE = Tube("1 mm", "0.1 m")
SLIT = Slit("0.2 mm", "10 mm", "0.05 m")


# --- naive reference -----------------------------------------------------------

def naive_pressure_drop(f, geometry, flow_rate, rtol=1e-12):
    """dP for Q by brentq on tau_w over quad over gd(tau) (each by brentq); tube only."""
    R = geometry.radius

    def inverse(tau):
        if tau <= 0.0:
            return 0.0
        hi = 1.0
        while float(f.stress(hi)) < tau:
            hi *= 10.0
        return optimize.brentq(lambda s: float(f.stress(s)) - tau, 0.0, hi, xtol=1e-300, rtol=1e-15)

    def q_of(tau_w):
        value, _ = integrate.quad(lambda t: t * t * inverse(t), 0.0, tau_w, epsabs=0.0, epsrel=rtol, limit=200)
        return math.pi * R**3 / tau_w**3 * value

    apparent = 4.0 * flow_rate / (math.pi * R**3)
    lo, hi = float(f.stress(apparent / 10.0)), float(f.stress(apparent * 10.0))
    tau_w = optimize.brentq(lambda t: q_of(t) - flow_rate, lo, hi, xtol=1e-300, rtol=1e-13)
    return float(geometry.pressure_drop(tau_w))


# --- closed forms, coded here ------------------------------------------------------

def power_law_q(tau_w, K, n, geometry):
    # Skelland (1967); Chhabra & Richardson (2008), ch. 3
    if geometry is TUBE:
        return math.pi * n * geometry.radius**3 / (3 * n + 1) * (tau_w / K) ** (1 / n)
    return 2 * n * geometry.width * geometry.half_gap**2 / (2 * n + 1) * (tau_w / K) ** (1 / n)


def bingham_q(tau_w, tau_y, mu_p, geometry):
    # Buckingham (1921); Reiner (1926); slit form
    phi = tau_y / tau_w
    if geometry is TUBE:
        return math.pi * geometry.radius**3 * tau_w / (4 * mu_p) * (1 - 4 / 3 * phi + phi**4 / 3)
    return 2 * geometry.width * geometry.half_gap**2 * tau_w / (3 * mu_p) * (1 - 1.5 * phi + 0.5 * phi**3)


def herschel_bulkley_q(tau_w, tau_y, K, n, geometry):
    # Chhabra & Richardson (2008), ch. 3 (tube); slit form from the same integral
    phi, m = tau_y / tau_w, 1 / n
    if geometry is TUBE:
        bracket = (1 - phi) ** 2 / (3 + m) + 2 * phi * (1 - phi) / (2 + m) + phi**2 / (1 + m)
        return math.pi * geometry.radius**3 * (tau_w / K) ** m * (1 - phi) ** (1 + m) * bracket
    bracket = (1 - phi) / (2 + m) + phi / (1 + m)
    return 2 * geometry.width * geometry.half_gap**2 * (tau_w / K) ** m * (1 - phi) ** (1 + m) * bracket


def closed_form_errors():
    """Worst relative error of the generic engine, per model and geometry, both directions."""
    n_values = np.linspace(0.15, 1.5, 10)
    phis = np.array([0.0, 0.1, 0.3, 0.5, 0.7, 0.9, 0.95, 0.98])
    rows = []
    for geometry in (TUBE, SLIT):
        cases = {
            "power law": [(fluid("power_law", K=2.0, n=n), tau_w, power_law_q(tau_w, 2.0, n, geometry))
                          for n in n_values for tau_w in (0.5, 20.0, 800.0)],
            "Bingham": [(fluid("bingham", tau_y=5.0, mu_p=0.1), 5.0 / p, bingham_q(5.0 / p, 5.0, 0.1, geometry))
                        for p in phis[1:]],
            "Herschel-Bulkley": [(fluid("herschel_bulkley", tau_y=5.0, K=2.0, n=n), 5.0 / p,
                                  herschel_bulkley_q(5.0 / p, 5.0, 2.0, n, geometry))
                                 for n in n_values for p in phis[1:]],
        }
        for name, items in cases.items():
            worst = 0.0
            for f, tau_w, q in items:
                dp = float(geometry.pressure_drop(tau_w))
                got_q = engine.flow_rate(f, geometry, dp, "generic")
                got_dp = engine.pressure_drop(f, geometry, q, "generic")
                worst = max(worst, abs(got_q / q - 1), abs(got_dp / dp - 1))
            rows.append((name, geometry.kind, len(items), worst))
    return rows


BLOCKS = (32, 64, 128, 256, 512, 1024, 2048, 4096)


def best_of(repeats, function):
    times, value = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        value = function()
        times.append(time.perf_counter() - start)
    return min(times), value


def one_block_size(size: int, points: int, repeats: int) -> None:
    """Print the first and the best Q -> dP and dP -> Q times [s] with ``size`` rows, and a digest."""
    engine.BLOCK_ROWS = size
    f, q = fluid("carreau", **CARREAU), np.geomspace(1e-12, 1e-6, points)
    first, dp = best_of(1, lambda: engine.pressure_drop(f, TUBE, q, "generic"))
    first_back, back = best_of(1, lambda: engine.flow_rate(f, TUBE, dp, "generic"))
    forward, _ = best_of(repeats, lambda: engine.pressure_drop(f, TUBE, q, "generic"))
    backward, _ = best_of(repeats, lambda: engine.flow_rate(f, TUBE, dp, "generic"))
    digest = hashlib.sha256(dp.tobytes() + back.tobytes()).hexdigest()
    print(first, min(first, forward), first_back, min(first_back, backward), digest)


def block_sizes(points, repeats):
    """(rows, times [s], bit-identical to 4096 rows) for each block size.

    times: Q -> dP first and best, dP -> Q first and best.  Each size runs
    in a fresh process, as a user's session would: the allocator's state
    after large blocks (glibc raises its mmap threshold when one is freed)
    makes the later calls of a session faster than its first.
    """
    rows = []
    for size in BLOCKS:
        out = subprocess.run([sys.executable, __file__, "--one-block", str(size), "--points", str(points),
                              "--repeat", str(repeats)], capture_output=True, text=True, check=True)
        *times, digest = out.stdout.split()
        rows.append((size, [float(t) for t in times], digest))
    reference = rows[-1][2]
    return [(size, times, digest == reference) for size, times, digest in rows]


def main(points: int, subset: int, repeats: int = 3) -> None:
    f = fluid("carreau", **CARREAU)
    q = np.geomspace(1e-12, 1e-6, points)

    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        dp = engine.pressure_drop(f, TUBE, q, "generic")
        times.append(time.perf_counter() - start)
    engine_total = min(times)
    start = time.perf_counter()
    engine.flow_rate(f, TUBE, dp, "generic")
    reverse_total = time.perf_counter() - start

    pick = np.linspace(0, points - 1, subset).astype(int)
    start = time.perf_counter()
    naive = np.array([naive_pressure_drop(f, TUBE, float(q[i])) for i in pick])
    naive_per_point = (time.perf_counter() - start) / subset
    naive_error = float(np.max(np.abs(dp[pick] / naive - 1)))

    per_point = engine_total / points
    print(f"Carreau {CARREAU} in a {TUBE.describe()}")
    print(f"flow rates: {points} from {q[0]:.1e} to {q[-1]:.1e} m^3/s (wall shear rates "
          f"{engine.wall_shear_rate(f, TUBE.wall_shear_stress(dp[0])):.3g} to "
          f"{engine.wall_shear_rate(f, TUBE.wall_shear_stress(dp[-1])):.3g} 1/s)")
    print(f"  engine, Q -> dP:      {engine_total:.3f} s in all, {1e6 * per_point:.2f} us per point "
          f"(best of {repeats})")
    print(f"  engine, dP -> Q:      {reverse_total:.3f} s in all, {1e6 * reverse_total / points:.2f} us per point")
    print(f"  naive reference:      {1e3 * naive_per_point:.1f} ms per point (on {subset} points; "
          f"{naive_per_point * points:.0f} s for all {points}, scaled)")
    print(f"  speed-up:             {naive_per_point / per_point:.0f} x")
    print(f"  worst relative error, engine vs naive reference: {naive_error:.2e}")
    print(f"block size (rows per vectorised block; {engine.BLOCK_ROWS} now, 4096 before), {points} "
          f"points, each size in a fresh process: first call, best of {repeats} [us per point]")
    print(f"  {'rows':>6}{'Q -> dP first':>15}{'best':>8}{'dP -> Q first':>15}{'best':>8}"
          "   bit-identical to 4096")
    for size, times, same in block_sizes(points, repeats):
        mark = "  <- now" if size == engine.BLOCK_ROWS else ("  <- before" if size == 4096 else "")
        cells = "".join(f"{1e6 * t / points:>{w}.2f}" for t, w in zip(times, (15, 8, 15, 8)))
        print(f"  {size:>6}{cells}   {'yes' if same else 'NO'}{mark}")
    print("worst relative error of the generic engine against closed forms (both directions):")
    for name, kind, count, worst in closed_form_errors():
        print(f"  {name:<17} {kind:<5} {count:>3} cases   {worst:.2e}")


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=10_000, help="flow rates timed with the engine")
    parser.add_argument("--subset", type=int, default=20, help="flow rates timed with the naive reference")
    parser.add_argument("--repeat", type=int, default=3, help="runs per timing (the best is shown)")
    parser.add_argument("--one-block", type=int, default=0, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.one_block:
        one_block_size(args.one_block, args.points, args.repeat)
    else:
        main(args.points, args.subset, args.repeat)
