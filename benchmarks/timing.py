"""Timing helpers shared by the benchmark scripts (figures only, no pass/fail).

The machine is shared, so every figure is the best and the median of several
repeats: the best shows what the code costs, the median what a user waits.
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time

#: how a script calls the command line without an installed entry point
CLI = (sys.executable, "-c", "from rheofit.cli import app; app()")


def timed(function, *args, **kwargs) -> tuple[float, object]:
    """(wall seconds, result) of one call."""
    start = time.perf_counter()
    result = function(*args, **kwargs)
    return time.perf_counter() - start, result


def repeat(function, repeats: int, *args, **kwargs) -> list[float]:
    """Wall seconds of ``repeats`` calls."""
    return [timed(function, *args, **kwargs)[0] for _ in range(repeats)]


def run_command(args, *, timeout: float | None = None, cwd=None, env=None) -> float:
    """Wall seconds of one ``rheofit ARGS`` run in a fresh interpreter (inf on time-out).

    Raises RuntimeError with the command's stderr when it fails.
    """
    start = time.perf_counter()
    try:
        done = subprocess.run([*CLI, *map(str, args)], capture_output=True, text=True,
                              timeout=timeout, cwd=cwd, env={**os.environ, **(env or {})})
    except subprocess.TimeoutExpired:
        return float("inf")
    if done.returncode != 0:
        raise RuntimeError(f"rheofit {' '.join(map(str, args))} failed: {done.stderr.strip()}")
    return time.perf_counter() - start


def summary(times, unit: str = "s") -> str:
    """'best 0.123 s, median 0.130 s (5 runs)' (ms when ``unit`` is 'ms')."""
    scale = 1e3 if unit == "ms" else 1.0
    best, median = min(times) * scale, statistics.median(times) * scale
    digits = 1 if unit == "ms" else 3
    return f"best {best:.{digits}f} {unit}, median {median:.{digits}f} {unit} ({len(times)} runs)"
