"""The ``fit`` command: fit viscosity models to flow curves, with 95 % intervals and a ranking."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from rheofit.cli.common import console, emit_json, import_keywords, read_curves, user_errors
from rheofit.cli.options import COLUMN, CURVE, SEGMENT, UNIT


def fit_one_file(path, model: str, overrides: Optional[dict] = None) -> list:
    """Every curve of one file, fitted: [(curve, FitRanking or [FitResult])], best first; a model
    given by name is judged against the others (:func:`rheofit.fitting.fit_judged`).

    Runs in a worker process when several files are fitted at once.
    """
    from rheofit.fitting import fit_all, fit_judged
    from rheofit.models import get_model

    chosen = None if model == "all" else get_model(model).name
    return [(curve, fit_all(curve) if chosen is None else [fit_judged(curve, chosen)])
            for curve in read_curves(path, overrides or {})]


def _portable(groups) -> list:
    """Results as plain dicts, to cross from a worker process (a declaration holds lambdas)."""
    return [(curve, [r.to_dict() for r in results], getattr(results, "skipped", ()))
            for curve, results in groups]


def _fit_portable(path, model, overrides) -> list:
    return _portable(fit_one_file(path, model, overrides))


def _rebuilt(portable) -> list:
    from rheofit.fitting import FitRanking, FitResult

    return [(curve, FitRanking([FitResult.from_dict(d) for d in dicts], skipped))
            for curve, dicts, skipped in portable]


def worker_count(jobs: int, files: int) -> int:
    """Processes to use: ``jobs`` (0 = one per core this process may use), at most one per file."""
    import os

    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return max(1, min(jobs or cores or 1, files))


def fit_files(files, model: str, overrides: Optional[dict] = None, jobs: int = 1):
    """Read every curve of every file and fit it: [(curve, [FitResult best first])], in file order.

    With ``jobs`` > 1 the files are fitted in that many worker processes;
    the results keep the order of ``files``, and the error of the first bad
    file (in that order) is the one raised, as when fitting one by one.
    """
    from rheofit.report.display import markup_safe

    workers = worker_count(jobs, len(files))
    groups = []
    if workers == 1:
        with console(stderr=True).status("reading") as status:  # shown on a terminal only
            for path in files:
                status.update(f"fitting {markup_safe(Path(path).name)} ({len(groups)} curves so far)")
                groups += fit_one_file(path, model, overrides)
        return groups
    from concurrent.futures import ProcessPoolExecutor

    pool = ProcessPoolExecutor(max_workers=workers)
    try:  # the workers start (fork) here, before the status line starts its thread
        pending = [pool.submit(_fit_portable, path, model, overrides) for path in files]
        with console(stderr=True).status(f"fitting {len(files)} files on {workers} cores") as status:
            for done, future in enumerate(pending, 1):
                groups += _rebuilt(future.result())
                status.update(f"fitted {done} of {len(files)} files on {workers} cores")
    finally:
        pool.shutdown(wait=True, cancel_futures=True)
    return groups


@user_errors
def fit_command(
    files: list[Path] = typer.Argument(..., help="CSV export(s) of a shear-rate sweep."),
    model: str = typer.Option("all", "--model", "-m", help="A model name (see `rheofit models`) or 'all' to rank every model."),
    as_json: bool = typer.Option(False, "--json", help="Print the fits as JSON instead of tables."),
    out: Optional[Path] = typer.Option(None, "--out", "-o", help="Save the fits as JSON (read back by `rheofit flow`)."),
    force: bool = typer.Option(False, "--force", help="Overwrite --out if it exists."),
    column: Optional[list[str]] = COLUMN,
    unit: Optional[list[str]] = UNIT,
    curve: Optional[str] = CURVE,
    segment: str = SEGMENT,
    jobs: int = typer.Option(0, "--jobs", "-j", min=0, help="Files fitted at once, one process each (0: one per core)."),
):
    """Fit viscosity models to flow curves, with 95 % intervals and a ranking."""
    from rheofit.fitting.saved import fits_document

    from rheofit.output import check_target

    check_target(out, force=force, inputs=files)
    groups = fit_files(files, model, import_keywords(column, unit, curve, segment), jobs)
    document = fits_document(groups)
    if as_json:
        emit_json(document, out, force, files)
        return
    from rheofit.report.console import curve_block, summary_table

    screen = console()
    for curve, results in groups:
        screen.print(curve_block(curve, results, results[0]))
    if len(groups) > 1:
        screen.print(summary_table(groups))
    if out is not None:
        emit_json(document, out, force, files)
