"""How long `rheofit demo` takes, and where the time goes (figures only).

Runs the demo into a temporary folder ``repeats`` times (best and median),
then once under cProfile and prints the share of the main stages: the
analysis (fits, flow cases with intervals, the lot comparison), the figures
drawn as SVG, the PNG renders, and the rest of the report.

    python benchmarks/demo_speed.py [repeats]
"""

from __future__ import annotations

import cProfile
import pstats
import sys
import tempfile

from timing import repeat, summary

from rheofit.jobs.demo import run_demo

#: (label, function name as pstats shows it) of the stages reported
STAGES = (("analysis (fits, flow cases, comparison)", "analyse_demo"),
          ("fits with intervals", "fit"),
          ("prediction intervals", "flow_intervals"),
          ("report", "write_report"),
          ("figures drawn (figure functions)", "wrapper"),
          ("SVG text of the figures", "svg_text"),
          ("PNG renders", "png_bytes"))


def once() -> None:
    with tempfile.TemporaryDirectory() as folder:
        run_demo(folder, force=True)


def main(repeats: int = 3) -> None:
    once()  # imports, caches
    print(f"rheofit demo (report and fits into a temporary folder): {summary(repeat(once, repeats))}")
    profile = cProfile.Profile()
    profile.runcall(once)
    stats = pstats.Stats(profile).stats
    total = max(entry[3] for entry in stats.values())
    print(f"one run under cProfile ({total:.1f} s there), cumulative time per stage:")
    for label, name in STAGES:
        spent = sum(entry[3] for (path, _, function), entry in stats.items()
                    if function == name and "rheofit" in path)
        print(f"  {label:42s} {spent:6.2f} s  {100 * spent / total:5.1f} %")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 3)
