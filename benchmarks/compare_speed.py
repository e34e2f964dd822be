"""How long a lot comparison takes (prints figures; asserts nothing).

Thirty invented lots of a shear-thinning medium (Carreau, lot-to-lot scatter
of the parameters, 2 % noise, 30 points each, fixed seed) are compared in a
tube at one flow rate, once with the model chosen by summed AICc and once
with ``model="carreau"`` given; and once for a yield-stress sweep
(Herschel-Bulkley lots), where the plateau models leave interval ends open.

    python benchmarks/compare_speed.py [lots] [repeats]
"""

from __future__ import annotations

import sys

import numpy as np

from timing import repeat, summary

from rheofit.curve import FlowCurve
from rheofit.flow import Tube
from rheofit.lots import compare
from rheofit.models import MODELS

TUBE = Tube("0.8 mm", "30 cm")
FLOW_RATE = "50 uL/min"
KINDS = {
    "carreau": ({"eta0": 0.25, "eta_inf": 0.002, "lam": 0.8, "n": 0.45}, (0.1, 1e3)),
    "herschel_bulkley": ({"tau_y": 2.0, "K": 0.4, "n": 0.55}, (0.05, 500.0)),
}


def lots(kind: str, count: int, seed: int = 3) -> list[FlowCurve]:
    """``count`` invented lots: parameters scattered by 5 %, 2 % noise, 30 points."""
    params, rate_range = KINDS[kind]
    rng = np.random.default_rng(seed)
    rate = np.geomspace(*rate_range, 30)
    curves = []
    for i in range(count):
        p = {k: v * (1 + 0.05 * rng.standard_normal()) for k, v in params.items()}
        stress = MODELS[kind].stress(rate, **p) * np.exp(0.02 * rng.standard_normal(rate.size))
        curves.append(FlowCurve.from_arrays(rate, stress=stress, name=f"lot {i + 1}"))
    return curves


def main(count: int = 30, repeats: int = 3) -> None:
    compare(lots("carreau", 2), TUBE, flow_rate=FLOW_RATE, model="power_law")  # imports
    print(f"compare {count} lots (30 points each) in a tube at {FLOW_RATE}, {repeats} repeats:")
    for kind in KINDS:
        curves = lots(kind, count)
        for model in (None, kind):
            label = f"{kind} lots, model {'chosen by summed AICc' if model is None else 'given'}"
            times = repeat(compare, repeats, curves, TUBE, flow_rate=FLOW_RATE, model=model)
            print(f"  {label:52s} {summary(times)}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
