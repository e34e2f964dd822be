"""How long read_flow_curve takes on a large export (prints figures; asserts nothing).

Writes temporary files of 200,000 invented rows in a few dialects (comma,
semicolon with decimal commas in cp1252, tab with a units row and missing
values, whitespace-aligned) and times the import of each.

    python benchmarks/import_speed.py [rows]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from rheofit.ingest import read_flow_curve


def invented_sweep(rows: int) -> tuple[np.ndarray, np.ndarray]:
    """A shear-thinning sweep (invented power-law numbers with 1 % scatter)."""
    rng = np.random.default_rng(7)
    shear_rate = np.logspace(-2, 3, rows)
    viscosity = 2.0 * shear_rate ** -0.4 * (1 + 0.01 * rng.standard_normal(rows))
    return shear_rate, viscosity


def write(path: Path, dialect: str, shear_rate, viscosity) -> None:
    stress = (viscosity * shear_rate).tolist()
    shear_rate, viscosity = shear_rate.tolist(), viscosity.tolist()
    if dialect == "comma":
        head = "Point,Shear rate [1/s],Viscosity [Pa s],Shear stress [Pa]\n"
        body = "\n".join(f"{i},{g!r},{e!r},{s!r}" for i, (g, e, s) in enumerate(zip(shear_rate, viscosity, stress), 1))
        path.write_text(head + body + "\n", encoding="utf-8")
    elif dialect == "semicolon, decimal comma, cp1252":
        head = "Sample: invented\nShear rate [s-1];Viscosity [mPa·s]\n"
        body = "\n".join(f"{g!r};{e * 1e3!r}".replace(".", ",") for g, e in zip(shear_rate, viscosity))
        path.write_bytes((head + body + "\n").encode("cp1252"))
    elif dialect == "tab, units row, missing values":
        rows = [f"{g!r}\t{e!r}" if i % 1000 else f"{g!r}\tNaN" for i, (g, e) in enumerate(zip(shear_rate, viscosity))]
        path.write_text("Shear rate\tViscosity\n1/s\tPa·s\n" + "\n".join(rows) + "\n", encoding="utf-8")
    else:
        rows = [f"{g:>24.17g}  {e:>24.17g}" for g, e in zip(shear_rate, viscosity)]
        path.write_text("Shear rate [1/s]    Viscosity [Pa s]\n" + "\n".join(rows) + "\n", encoding="utf-8")


def main(rows: int = 200_000) -> None:
    shear_rate, viscosity = invented_sweep(rows)
    print(f"read_flow_curve on {rows:,} rows (best of 3; the first call also loads pint's unit registry):")
    with tempfile.TemporaryDirectory() as folder:
        for dialect in ("comma", "semicolon, decimal comma, cp1252", "tab, units row, missing values", "whitespace"):
            path = Path(folder) / "sweep.txt"
            write(path, dialect, shear_rate, viscosity)
            times = []
            for _ in range(3):
                start = time.perf_counter()
                curve = read_flow_curve(path)
                times.append(time.perf_counter() - start)
            size = path.stat().st_size / 1e6
            print(f"  {dialect:<34} {min(times):6.2f} s  (first call {times[0]:.2f} s; {size:.1f} MB, {len(curve):,} points)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 200_000)
