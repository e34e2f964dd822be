"""``rheofit demo``: the whole job on the bundled sample sweeps (INVENTED data).

The scenario (see ``rheofit/sample_data/README.md``): a cell-therapy process
team pumps a thickened perfusion medium to a bioreactor through 0.8 mm
tubing and a 200 µm perfusion slit; three lots were swept at 37 °C, lot C
mixed with too little water; a microgel carrier with a small yield stress
runs on the same line.  The demo

* fits every model to each sweep and ranks them by AICc;
* predicts each lot in the tube (0.8 mm ID, 30 cm) at 50 µL/min and in the
  slit (200 µm gap, 8 mm wide, 2 cm long) at 300 Pa - a gentle perfusion
  pressure, about 1.5 Pa of wall shear stress, that carries roughly the same
  50 µL/min - and lot A also at a 5 mL/min priming flush, where the wall
  shear rate lies beyond the measured sweep (extrapolation);
* compares lots A, B and C in the tube at 50 µL/min;
* runs the microgel carrier in the tube and the slit, and in the slit at
  100 Pa, below its threshold pressure drop, where it does not flow;
* writes ``report.html`` (self-contained) and ``fits.json`` (the saved fits,
  read back by ``rheofit flow``) into the output folder: by default a fresh
  folder under the system's temporary directory, never the current one.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from rheofit.progress import Steps, quiet

#: said wherever the demo's results appear
NOTICE = ("The data in this demo are INVENTED (bundled sample sweeps written with a fixed random "
          "seed); no real instrument, sample or lot stands behind them.")

LOTS = ("medium_lot_A", "medium_lot_B", "medium_lot_C")
CARRIER = "microgel_carrier"
#: prefix of the fresh folder under the temporary directory when no folder is given
FOLDER_PREFIX = "rheofit-demo-"
REPORT_NAME = "report.html"
FITS_NAME = "fits.json"


@dataclass(frozen=True)
class DemoResult:
    """Where the demo wrote its files, and what it found."""

    out: Path
    report: Path
    fits: Path
    analysis: object


def demo_cases() -> dict[str, tuple]:
    """The operating cases per sample (geometries and operating points of the scenario)."""
    from rheofit.flow import Slit, Tube
    from rheofit.jobs.analysis import OperatingCase
    from rheofit.units import parse_quantity

    tube = Tube("0.8 mm", "30 cm")
    slit = Slit("200 um", "8 mm", "2 cm")
    q = parse_quantity("50 uL/min", "flow_rate")
    perfusion = OperatingCase("tube, 50 µL/min", tube, flow_rate=q)
    gentle = OperatingCase("slit, 300 Pa", slit, pressure_drop=parse_quantity("300 Pa", "pressure"))
    priming = OperatingCase("tube, priming 5 mL/min", tube,
                            flow_rate=parse_quantity("5 mL/min", "flow_rate"))
    below = OperatingCase("slit, 100 Pa (below threshold)", slit,
                          pressure_drop=parse_quantity("100 Pa", "pressure"))
    return {
        "medium_lot_A": (perfusion, gentle, priming),
        "medium_lot_B": (perfusion, gentle),
        "medium_lot_C": (perfusion, gentle),
        CARRIER: (perfusion, gentle, below),
    }


def sample_curves() -> dict:
    """The bundled sweeps as FlowCurves, by file stem (from the package data)."""
    from importlib.resources import as_file, files

    from rheofit.ingest import read_flow_curve

    folder = files("rheofit.sample_data")
    curves = {}
    for stem in (*LOTS, CARRIER):
        with as_file(folder / f"{stem}.csv") as path:
            curve = read_flow_curve(path)
        curves[stem] = curve
    return curves


def _prepare(out: Path, force: bool) -> None:
    """Make the folder ``out`` (not missing ones above it); unless ``force``, refuse an earlier demo's files."""
    from rheofit.errors import OutputExistsError
    from rheofit.output import make_folder

    make_folder(out)
    taken = [name for name in (REPORT_NAME, FITS_NAME) if (out / name).exists()]
    if taken and not force:
        raise OutputExistsError(
            f"The folder '{out}' already holds {' and '.join(taken)} from an earlier demo; "
            "pass --force to overwrite them or choose another folder with --out."
        )


def analyse_demo(steps: Steps | None = None):
    """The demo's :class:`~rheofit.jobs.analysis.Analysis` (fits, flow cases, lot comparison)."""
    from rheofit.jobs.analysis import Analysis, analyse_sample, compare_samples

    steps = quiet(steps)
    curves, cases = sample_curves(), demo_cases()
    steps.begin("fitting every model to each sample", len(curves))
    samples = {}
    for stem, curve in curves.items():
        samples[stem] = analyse_sample(curve, cases=cases[stem])
        steps.advance(f"fitted {stem}")
    steps.begin("comparing lots A, B and C", 1)
    comparison, note = compare_samples([samples[s] for s in LOTS], cases[LOTS[0]][0], steps=steps)
    steps.advance()
    return Analysis(tuple(samples.values()), comparison, note, NOTICE,
                    "rheofit demo: a thickened perfusion medium and a microgel carrier")


def run_demo(out=None, *, force: bool = False, steps: Steps | None = None) -> DemoResult:
    """Run the whole job on the sample data and write the report into the folder ``out``.

    Without ``out``, a fresh folder under the system's temporary directory
    (``tempfile.gettempdir()``) is made.  Raises, before any work,
    OutputExistsError when ``out`` already holds the demo's files and
    ``force`` is false, or is a file; OutputPathError when the folder above
    ``out`` is missing (only ``out`` itself is made).
    """
    import json
    import tempfile

    from rheofit.output import staged, strict_json, write_atomic
    from rheofit.report.html import write_report
    from rheofit.fitting.saved import fits_document

    out = Path(tempfile.mkdtemp(prefix=FOLDER_PREFIX)) if out is None else Path(out)
    _prepare(out, force)
    analysis = analyse_demo(steps)
    document = fits_document([(s.curve, s.ranking) for s in analysis.samples])
    document["notice"] = NOTICE
    with staged():  # both files appear together, or neither (a stopped run blocks no rerun)
        fits = write_atomic(out / FITS_NAME, strict_json(document, indent=2) + "\n", force=force)
        report = write_report(out / REPORT_NAME, analysis, force=force, steps=steps)
    return DemoResult(out, report, fits, analysis)


# --- console summary --------------------------------------------------------------------

#: flags that the summary leaves to the report (they hold for every case here)
_QUIET_FLAGS = ("density_default", "newtonian_misleads", "no_flow")


def _case_text(result) -> str:
    """The solved quantity (pressure drop or flow rate), then any flag worth a word."""
    import numpy as np

    from rheofit.report.display import shown

    p = result.prediction
    if not bool(np.ravel(p.flowing)[0]):
        return f"no flow: needs > {shown(p.threshold_pressure_drop, 'pressure')}"
    solved = "pressure_drop" if result.case.flow_rate is not None else "flow_rate"
    kind = "pressure" if solved == "pressure_drop" else "flow_rate"
    text = f"{shown(float(np.ravel(getattr(p, solved))[0]), kind)}"
    words = [f.code.replace("_", " ") for f in p.flags if f.code not in _QUIET_FLAGS]
    return text + (f" ({', '.join(words)})" if words else "")


def summary(result: DemoResult):
    """A short rich summary: every sample's model and flow cases, the lot verdicts, the files."""
    from rich.console import Group
    from rich.panel import Panel
    from rich.table import Table
    from rich.text import Text

    from rheofit.flow.predict import SAFETY_CAUTION
    from rheofit.report.figures_compare import verdicts

    table = Table(title="Flow cases (model: the best by AICc)")
    for column in ("sample (model)", "case", "result"):
        table.add_column(column, overflow="fold")
    for sample in result.analysis.samples:
        for i, case in enumerate(sample.cases):
            who = sample.name if i == 0 else f"({sample.chosen.model})" if i == 1 else ""
            table.add_row(who, case.case.label, _case_text(case))
    parts = [Text(NOTICE, style="bold yellow"), table]
    comparison = result.analysis.comparison
    if comparison is not None:
        lines = [f"  {c.name}: {v}" for c, v in zip(comparison.curves, verdicts(comparison)) if v]
        p_value = getattr(comparison, "p_value", None)
        head = "Lot comparison (tube, 50 µL/min)" + (f", p = {p_value:.3g}" if p_value is not None else "")
        parts.append(Text(head + ":\n" + "\n".join(lines)))
    elif result.analysis.comparison_note:
        parts.append(Text(result.analysis.comparison_note))
    parts.append(Text(f"Written to {result.out}\nReport: {result.report}\nFits:   {result.fits}", style="bold"))
    parts.append(Panel(Text(SAFETY_CAUTION), border_style="yellow"))
    return Group(*parts)
