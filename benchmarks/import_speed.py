"""How long read_flow_curve takes on a large export, and how much memory (prints figures; asserts nothing).

Writes temporary files of invented rows (200,000 and 2,000,000 by default) in
a few dialects (comma, semicolon with decimal commas in cp1252, tab with a
units row and missing values, whitespace-aligned) and measures, for each
file, ``read_flow_curve`` and, as the reference, ``pandas.read_csv`` told
the file's separator, decimal mark, encoding and header lines.

Each measurement runs in a fresh subprocess: after importing pandas (which
both readers use; loading it takes about 0.3 s once per process) and one
call on a small file (which loads pint's unit registry), the peak resident set
size is reset (Linux ``/proc/self/clear_refs``) and the first call on the
large file gives the peak memory above the resident size just before it;
the time is the best of three calls.  Where the peak cannot be reset, the
process's lifetime peak (``ru_maxrss``) is used instead and marked ``*``.
pandas 3 reads a large local file given by its path in several threads, so
on a machine with several cores the reference is a parallel reader; the
figures swing by tens of per cent when other work shares the machine.

    python benchmarks/import_speed.py [rows ...]
"""

from __future__ import annotations

import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

DIALECTS = ("comma", "semicolon, decimal comma, cp1252", "tab, units row, missing values", "whitespace")
GIB = 2.0 ** 30


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


def pandas_reader(dialect: str):
    """``pandas.read_csv`` told how the benchmark file of ``dialect`` is written (the reference)."""
    import pandas

    options = {
        "comma": {},
        "semicolon, decimal comma, cp1252": {"sep": ";", "decimal": ",", "skiprows": 1, "encoding": "cp1252"},
        "tab, units row, missing values": {"sep": "\t", "skiprows": [1]},
        "whitespace": {"sep": r"\s+", "skiprows": 1, "header": None},
    }[dialect]
    return lambda path: pandas.read_csv(path, **options)


def _resident() -> int:
    """Resident set size now [bytes] (Linux), or 0."""
    try:
        with open("/proc/self/statm") as handle:
            return int(handle.read().split()[1]) * resource.getpagesize()
    except OSError:
        return 0


def _reset_peak() -> bool:
    """Reset the peak resident size of this process (Linux >= 4.0); False where not possible."""
    try:
        with open("/proc/self/clear_refs", "w") as handle:
            handle.write("5")
        return True
    except OSError:
        return False


def _peak() -> int:
    """Peak resident set size [bytes] since the last reset (or the process start)."""
    try:
        with open("/proc/self/status") as handle:
            for line in handle:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024


def measure(reader: str, dialect: str, path: str, small: str) -> dict:
    """Peak memory of the first call and best time of three, in this (fresh) process."""
    import pandas  # noqa: F401  (loaded before the measurement for both readers)

    if reader == "rheofit":
        from rheofit.ingest import read_flow_curve as read
    else:
        read = pandas_reader(dialect)
    read(small)  # the reader's own imports, pint's registry
    reset = _reset_peak()
    before = _resident()
    times = []
    for _ in range(3):
        start = time.perf_counter()
        result = read(path)
        times.append(time.perf_counter() - start)
        if len(times) == 1:
            peak = _peak() - before
        del result
    return {"time": min(times), "peak": peak, "exact_peak": reset}


def _run(reader: str, dialect: str, path: Path, small: Path) -> dict:
    command = [sys.executable, __file__, "--measure", reader, dialect, str(path), str(small)]
    done = subprocess.run(command, capture_output=True, text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(sizes: list[int]) -> None:
    print("read_flow_curve against pandas.read_csv on the same file: best of 3 calls, peak memory of the first")
    print("(each in a fresh process, above its resident size before the call; * = lifetime peak)")
    with tempfile.TemporaryDirectory() as folder:
        for rows in sizes:
            shear_rate, viscosity = invented_sweep(rows)
            print(f"\n{rows:,} rows{'':27} {'rheofit':>17} {'pandas':>17}   {'ratio (time, memory)':>20}")
            for dialect in DIALECTS:
                path, small = Path(folder) / "sweep.txt", Path(folder) / "small.txt"
                write(path, dialect, shear_rate, viscosity)
                write(small, dialect, *invented_sweep(50))
                ours, theirs = (_run(reader, dialect, path, small) for reader in ("rheofit", "pandas"))
                size = path.stat().st_size / 1e6
                print(f"  {dialect:<32} {size:5.0f} MB  {_shown(ours)}  {_shown(theirs)}   "
                      f"{ours['time'] / theirs['time']:5.1f}x {ours['peak'] / max(theirs['peak'], 1):5.1f}x")


def _shown(figures: dict) -> str:
    mark = " " if figures["exact_peak"] else "*"
    return f"{figures['time']:5.2f} s {figures['peak'] / GIB:5.2f} GiB{mark}"


if __name__ == "__main__":
    if sys.argv[1:2] == ["--measure"]:
        print(json.dumps(measure(*sys.argv[2:6])))
    else:
        main([int(n) for n in sys.argv[1:]] or [200_000, 2_000_000])
