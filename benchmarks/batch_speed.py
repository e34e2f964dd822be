"""How long `rheofit fit` takes over many small files, on one core and fanned out (figures only).

Writes ``files`` invented 30-point sweeps (shear-thinning, fixed seed) into a
temporary folder, then times ``rheofit fit *.csv --json`` in a fresh
interpreter with each ``--jobs`` value (``none``: without the option, for
a version that does not have it).

    python benchmarks/batch_speed.py [files] [jobs,jobs,...] [repeats]
    python benchmarks/batch_speed.py 200 1,2 1
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import numpy as np

from timing import run_command, summary


def write_sweeps(folder: Path, count: int) -> list[Path]:
    """``count`` invented Carreau sweeps, 30 points, 2 % noise (fixed seed)."""
    rng = np.random.default_rng(5)
    rate = np.geomspace(0.1, 1e3, 30)
    paths = []
    for i in range(count):
        eta0, lam, n = 0.25 * (1 + 0.1 * rng.standard_normal()), 0.8, 0.45
        eta = 0.002 + (eta0 - 0.002) * (1 + (lam * rate) ** 2) ** ((n - 1) / 2)
        eta *= np.exp(0.02 * rng.standard_normal(rate.size))
        path = folder / f"sweep_{i:03d}.csv"
        path.write_text("Shear rate [1/s],Viscosity [Pa s]\n"
                        + "".join(f"{g:.6g},{e:.6g}\n" for g, e in zip(rate, eta)), encoding="utf-8")
        paths.append(path)
    return paths


def main(count: int = 200, jobs: str = "1,2", repeats: int = 1) -> None:
    with tempfile.TemporaryDirectory() as folder:
        paths = write_sweeps(Path(folder), count)
        print(f"rheofit fit over {count} files of 30 points (every model, intervals), "
              f"{repeats} run(s) each:")
        for value in jobs.split(","):
            option = [] if value == "none" else ["--jobs", value]
            times = [run_command(["fit", *paths, "--json", *option]) for _ in range(repeats)]
            label = "without --jobs" if value == "none" else f"--jobs {value}"
            print(f"  {label:16s} {summary(times)}, {1e3 * min(times) / count:.0f} ms per file")


if __name__ == "__main__":
    args = sys.argv[1:]
    main(int(args[0]) if args else 200, args[1] if len(args) > 1 else "1,2",
         int(args[2]) if len(args) > 2 else 1)
