"""Write the bundled sample sweeps.  The data are INVENTED (fixed seed).

Scenario (fictional): a cell-therapy process team pumps a methylcellulose-
thickened perfusion medium to a bioreactor through 0.8 mm silicone tubing and
a 200 um flat perfusion slit.  Three lots of the medium were swept on a
rotational rheometer at 37 °C; lot C was mixed with too little water.  A
microgel carrier suspension with a small yield stress is pumped on the same
line.  No real instrument, sample or lot stands behind these numbers.

Run ``python rheofit/sample_data/make_samples.py`` to regenerate the files.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SEED = 20261201


def carreau_viscosity(rate, eta0, eta_inf, lam, n):
    return eta_inf + (eta0 - eta_inf) * (1.0 + (lam * rate) ** 2) ** ((n - 1.0) / 2.0)


def noisy(values, rng, relative):
    return values * np.exp(rng.normal(0.0, relative, values.shape))


def write_medium_lot(path, rng, eta0, lam, n, points=30):
    rate = np.logspace(-1, 3, points)
    eta = noisy(carreau_viscosity(rate, eta0, 1.0e-3, lam, n), rng, 0.02)
    lines = [
        "# INVENTED sample data for the rheofit demo (fictional perfusion medium)",
        "# temperature: 37 C; steady shear sweep, low to high rate",
        "Shear rate (1/s),Viscosity (mPa·s),Shear stress (Pa)",
    ]
    lines += [f"{g:.5g},{e * 1e3:.5g},{e * g:.5g}" for g, e in zip(rate, eta)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def write_microgel(path, rng, tau_y=0.8, K=0.35, n=0.55, points=25):
    rate = np.logspace(-1, 3, points)
    stress = noisy(tau_y + K * rate**n, rng, 0.02)
    lines = [
        "# INVENTED sample data for the rheofit demo (fictional microgel carrier)",
        "shear rate [s-1];shear stress [Pa];viscosity [Pa s]",
    ]
    lines += [f"{g:.5g};{t:.5g};{t / g:.5g}".replace(".", ",") for g, t in zip(rate, stress)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def main() -> None:
    rng = np.random.default_rng(SEED)
    write_medium_lot(HERE / "medium_lot_A.csv", rng, eta0=0.25, lam=0.5, n=0.45)
    write_medium_lot(HERE / "medium_lot_B.csv", rng, eta0=0.25, lam=0.5, n=0.45)
    write_medium_lot(HERE / "medium_lot_C.csv", rng, eta0=0.36, lam=0.7, n=0.42)
    write_microgel(HERE / "microgel_carrier.csv", rng)


if __name__ == "__main__":
    main()
