"""How long the command line takes to start and to fit one small file (figures only).

Times, each in a fresh interpreter (best and median of ``repeats``):

* ``rheofit --help``;
* ``rheofit fit FILE`` on the bundled 30-point sweep (every model, intervals);
* ``rheofit fit FILE --model carreau``;

then lists the slowest imports of ``rheofit fit FILE`` (``python -X importtime``)
and whether lmfit, scipy.stats, pint, pandas and matplotlib were loaded.

    python benchmarks/startup_speed.py [repeats]
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

from timing import CLI, run_command, summary

SWEEP = Path(__file__).resolve().parent.parent / "sample_data" / "medium_lot_A.csv"
HEAVY = ("lmfit", "scipy.stats", "pint", "pandas", "matplotlib")


def import_times(args) -> dict[str, int]:
    """Cumulative import time [us] of every module imported by ``rheofit ARGS``."""
    done = subprocess.run([sys.executable, "-X", "importtime", *CLI[1:], *map(str, args)],
                          capture_output=True, text=True)
    times = {}
    for line in done.stderr.splitlines():
        match = re.match(r"import time:\s+\d+ \|\s+(\d+) \| (\s*)(\S+)", line)
        if match:
            times[match.group(3)] = int(match.group(1))
    return times


def loaded_heavy(args) -> list[str]:
    """Which of HEAVY are in sys.modules after ``rheofit ARGS``."""
    code = ("import sys\nfrom rheofit.cli import app\ntry:\n    app()\nexcept SystemExit:\n    pass\n"
            f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules), file=sys.stderr)")
    done = subprocess.run([sys.executable, "-c", code, *map(str, args)], capture_output=True, text=True)
    return done.stderr.split()


def main(repeats: int = 5) -> None:
    print(f"start-up, {repeats} runs each in a fresh interpreter:")
    for label, args in (("rheofit --help", ["--help"]),
                        (f"rheofit fit {SWEEP.name}", ["fit", SWEEP]),
                        (f"rheofit fit {SWEEP.name} --model carreau", ["fit", SWEEP, "--model", "carreau"])):
        times = [run_command(args) for _ in range(repeats)]
        print(f"  {label:45s} {summary(times)}")
    times = import_times(["fit", SWEEP])
    print(f"imports of `rheofit fit {SWEEP.name}` (cumulative):")
    for name in ("numpy", "typer", "rich", "scipy.optimize", "scipy.special", *HEAVY, "rheofit.fitting"):
        if name in times:
            print(f"  {name:24s} {times[name] / 1e3:7.1f} ms")
    loaded = loaded_heavy(["fit", SWEEP])
    print(f"  loaded: {', '.join(loaded) or 'none'} of {', '.join(HEAVY)}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 5)
