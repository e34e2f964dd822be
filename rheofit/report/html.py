"""The self-contained HTML report.

One file: inline CSS, figures as inline SVG, no script, no link, no outside
address - it opens offline in any browser and prints.  Every string that
came from the user (sample names, file names, labels) is escaped.

Contents: the samples and files; per sample the model ranking (AICc), the
chosen model's parameters with 95 % intervals, the flags in plain words,
the flow curve and residuals; per flow case the prediction with its
intervals, the Newtonian comparison, the velocity profile and the
pressure-flow curve; the lot comparison when there are several samples; the
method and its assumptions; the safety caution.

Python use::

    from rheofit.jobs.analysis import analyse
    from rheofit.report.html import build_report, write_report
    text = build_report(analyse(curves))          # str
    write_report("report.html", analyse(curves), figures_dir="figures")
"""

from __future__ import annotations

from pathlib import Path

from rheofit.report.html_parts import Raw, bullets, esc, figure, join, page, tag
from rheofit.report.html_sections import (
    comparison_section, contents, method_section, sample_section, summary_section,
)
from rheofit.progress import Steps, quiet

__all__ = ["build_report", "write_report", "report_files"]


def _caution(anchor: str | None = None) -> Raw:
    from rheofit.flow.predict import SAFETY_CAUTION

    return tag("div", join(tag("strong", "Safety. "), SAFETY_CAUTION), class_="caution", id=anchor)


def _render(plan, steps: Steps, keep) -> dict:
    """{place: [figure HTML]}: draw every planned figure as inline SVG (and hand it to ``keep``)."""
    from rheofit.report import plots

    placed: dict[tuple, list[Raw]] = {}
    steps.begin("drawing the figures", len(plan))
    for n, planned in enumerate(plan):
        fig = planned.make()
        svg = plots.svg_text(fig, prefix=f"f{n}-")
        if keep is not None:
            keep(planned.key, fig, svg)
        plots.close(fig)
        placed.setdefault(planned.place, []).append(figure(svg, planned.caption, planned.key))
        steps.advance()
    return placed


def _header(analysis) -> Raw:
    from datetime import date

    from rheofit.version import VERSION

    parts = [tag("h1", analysis.title),
             tag("p", f"Made with rheofit {VERSION} on {date.today().isoformat()}.", class_="meta")]
    if analysis.notice:
        parts.append(tag("p", analysis.notice, class_="notice"))
    return join(*parts)


def build_report(analysis, *, steps: Steps | None = None, keep=None) -> str:
    """The report of an :class:`~rheofit.jobs.analysis.Analysis` as one HTML document (str).

    ``keep(key, figure, svg)`` is called with each figure (and its SVG text)
    before it is closed; :func:`write_report` uses it to save the figures.
    """
    from rheofit.report.figureset import figure_plan

    steps = quiet(steps)
    placed = _render(figure_plan(analysis), steps, keep)
    body = [_header(analysis), summary_section(analysis), _caution("caution"), contents(analysis)]
    for i, sample in enumerate(analysis.samples):
        body.append(sample_section(i, sample, placed))
    body.append(comparison_section(analysis, placed.get(("compare",), [])))
    body.append(method_section(analysis))
    body.append(_caution())
    body.append(tag("footer", "rheofit estimates rest on the assumptions above; check them before "
                              "they feed real hardware or living samples."))
    return page(analysis.title, "\n".join(b for b in body if b))


def report_files(path, analysis, figures_dir=None) -> list[Path]:
    """Every file :func:`write_report` would write (the report, then the figures)."""
    from rheofit.report.figureset import figure_plan

    files = [Path(path)]
    if figures_dir is not None:
        for planned in figure_plan(analysis):
            files += [Path(figures_dir) / f"{planned.key}.png", Path(figures_dir) / f"{planned.key}.svg"]
    return files


def write_report(path, analysis, *, figures_dir=None, force: bool = False,
                 steps: Steps | None = None, inputs=()) -> Path:
    """Write the report to ``path`` (atomically), and each figure as PNG and SVG into ``figures_dir``.

    Nothing is overwritten without ``force``, no input, link or non-regular
    file ever (see :func:`rheofit.output.check_target`), and no missing folder
    is made for the report: the checks run before any work, and raise
    OutputExistsError or OutputPathError naming the path.  Every file is
    renamed into place only once all are written, so a stopped run leaves none.
    """
    from rheofit.output import check_target, make_folder, refuse_existing, staged, write_atomic
    from rheofit.report import plots

    files = report_files(path, analysis, figures_dir)
    if figures_dir is not None:
        make_folder(figures_dir)  # before any drawing: a file in the way is refused at once
    for file in files:
        check_target(file, force=force, inputs=inputs)
    if not force:
        refuse_existing(*files)

    def keep(key, fig, svg):
        plots.save_figure(fig, figures_dir, key, force=force, svg=svg)

    with staged():
        text = build_report(analysis, steps=steps, keep=keep if figures_dir is not None else None)
        write_atomic(path, text, force=force, inputs=inputs)
    return Path(path)


# re-exported for callers that assemble their own pages
__all__ += ["Raw", "esc", "bullets"]
