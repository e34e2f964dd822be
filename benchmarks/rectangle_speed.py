"""Speed and accuracy of the rectangular-channel solver (prints figures; asserts nothing).

For a shear-thinning fluid (Carreau and power law) and a yield-stress fluid
(Herschel-Bulkley and Bingham) in channels 100 um deep with depth/width 1,
0.2 and 0.05:

1. one operating point from the pressure gradient, and one from the flow
   rate (targets: < 1 s shear-thinning, < 10 s yield stress);
2. an operating curve of 50 pressure gradients from G/2 to 50 G, each
   point warm-started from the one before (target < 15 s);
3. accuracy: the default mesh against a much finer one (4x the cells per
   direction without a yield stress, 2x with one), beside the stated
   estimate (targets: 1e-4 and 5e-3);
4. parameter draws (for 95 % intervals): 20 draws with the parameters
   spread by +-10 %, each solved on the medium mesh and scaled by the
   nominal fine/medium ratio, timed, and 3 of them against full solves.

BLAS is limited to one thread before numpy is imported (``--threads`` to
keep the default): the dense products of the fast Poisson solver are
small, and on a shared two-core machine threaded BLAS made them 4-9 times
slower.

Run:  python benchmarks/rectangle_speed.py [--quick] [--threads] [--fluid N ...]
"""

from __future__ import annotations

import argparse
import os
import sys
import time

if "--threads" not in sys.argv:
    for variable in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(variable, "1")

import numpy as np  # noqa: E402

from rheofit.flow.rectangle import RectangleSolver, solve_rectangle  # noqa: E402
from rheofit.models import MODELS  # noqa: E402

DEPTH = 100e-6
ASPECTS = (1.0, 0.2, 0.05)
#: (model, parameters, pressure gradient [Pa/m]); G = 2e5 Pa/m gives a mean wall stress of 2.5-4.8 Pa
FLUIDS = (
    ("carreau", dict(eta0=1.0, eta_inf=1e-3, lam=0.5, n=0.4), 2e5),
    ("power_law", dict(K=0.1, n=0.4), 2e5),
    ("herschel_bulkley", dict(tau_y=1.5, K=0.05, n=0.5), 2e5),
    ("bingham", dict(tau_y=1.5, mu_p=0.01), 2e5),
    ("bingham", dict(tau_y=3.5, mu_p=0.01), 2e5),  # nearer the threshold: G/G_c = 1.5 in the square
)


def timed(function, *args, **kwargs):
    start = time.perf_counter()
    out = function(*args, **kwargs)
    return out, time.perf_counter() - start


def one_point(name, params, width, G):
    flow, t_g = timed(solve_rectangle, MODELS[name], params, DEPTH, width, pressure_gradient=G)
    back, t_q = timed(solve_rectangle, MODELS[name], params, DEPTH, width, flow_rate=flow.flow_rate)
    if flow.threshold_pressure_gradient > 0:
        print(f"    no-flow threshold G_c = {flow.threshold_pressure_gradient:.4g} Pa/m (G/G_c = "
              f"{G / flow.threshold_pressure_gradient:.2f}); unyielded {flow.unyielded_fraction:.3f} "
              f"(plug {flow.plug_fraction:.3f}, dead {flow.dead_fraction:.4f})")
    print(f"    one point from G: {t_g:6.2f} s  (Q = {flow.flow_rate:.6e} m^3/s, estimate "
          f"{flow.relative_error:.1e}, mesh {flow.cells}, iterations {flow.iterations})")
    print(f"    one point from Q: {t_q:6.2f} s  (G = {back.pressure_gradient:.6e} Pa/m, "
          f"{abs(back.pressure_gradient / G - 1):.1e} from the G solved forward)")
    return flow


def curve(name, params, width, G):
    points = np.geomspace(0.5 * G, 50 * G, 50)
    flows, t = timed(solve_rectangle, MODELS[name], params, DEPTH, width, pressure_gradient=points)
    worst = max(f.relative_error for f in flows)
    print(f"    curve of 50 points: {t:6.2f} s  (worst estimate {worst:.1e})")


def accuracy(name, params, width, G, flow):
    cells = 2 * flow.cells[0] if MODELS[name].yield_stress(**params) > 0 else 4 * flow.cells[0]
    solver = RectangleSolver(MODELS[name], params, DEPTH, width, cells=min(cells, 192))
    reference, t = timed(solver.at_pressure_gradient, G)
    error = abs(flow.flow_rate / reference.flow_rate - 1)
    print(f"    against a finer mesh {reference.cells}: {error:.1e} (stated {flow.relative_error:.1e}; "
          f"reference estimate {reference.relative_error:.1e}; {t:.0f} s)")


def draws(name, params, width, G, flow):
    rng = np.random.default_rng(12)
    sets = [{k: v * (1 + 0.1 * rng.uniform(-1, 1)) if k != "n" else v * (1 + 0.03 * rng.uniform(-1, 1))
             for k, v in params.items()} for _ in range(20)]
    solver = RectangleSolver(MODELS[name], params, DEPTH, width)
    nominal = solver.at_pressure_gradient(G)
    values, t = timed(solver.draws, sets, nominal)
    full = [solve_rectangle(MODELS[name], p, DEPTH, width, pressure_gradient=G).flow_rate for p in sets[:3]]
    worst = max(abs(v / f - 1) for v, f in zip(values[:3], full))
    print(f"    20 draws on the medium mesh: {t:6.2f} s; 3 of them against full solves: worst {worst:.1e}")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="skip the fine-mesh references and draws")
    parser.add_argument("--threads", action="store_true", help="keep the default BLAS threads")
    parser.add_argument("--fluid", type=int, action="append", help="run only these fluids (0-based index)")
    args = parser.parse_args(argv)
    print(f"BLAS threads: {os.environ.get('OPENBLAS_NUM_THREADS', 'default')}")
    for index, (name, params, G) in enumerate(FLUIDS):
        if args.fluid and index not in args.fluid:
            continue
        for aspect in ASPECTS:
            width = DEPTH / aspect
            print(f"{name} {params}, depth/width = {aspect:g} ({DEPTH * 1e6:.0f} x {width * 1e6:.0f} um), "
                  f"G = {G:.3g} Pa/m")
            flow = one_point(name, params, width, G)
            curve(name, params, width, G)
            if not args.quick:
                accuracy(name, params, width, G, flow)
                draws(name, params, width, G, flow)


if __name__ == "__main__":
    main()
