"""Which figures a report holds, where they go, and what their files are called.

:func:`figure_plan` lists them before any is drawn (so that existing files
can be refused first); each :class:`PlannedFigure` draws its figure on
``make()``.

>>> slug("Lot <A> 37 °C")
'lot-a-37-c'
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class PlannedFigure:
    """A figure of the report: file stem, place, caption and how to draw it.

    ``place`` is ``("sample", i)``, ``("case", i, j)`` or ``("compare",)``.
    """

    key: str
    place: tuple
    caption: str
    make: Callable[[], object]


def slug(text: str) -> str:
    """A file-name-safe lower-case stem of ``text`` ('figure' when nothing is left)."""
    stem = re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-")
    return stem[:60] or "figure"


def _unique(stem: str, taken: set[str]) -> str:
    key, n = stem, 2
    while key in taken:
        key, n = f"{stem}-{n}", n + 1
    taken.add(key)
    return key


def _sample_figures(i, sample, taken):
    from rheofit.report import plots

    operating = [(c.case.label, c.prediction) for c in sample.cases]
    model = sample.chosen.declaration.title
    base = slug(sample.name)
    yield PlannedFigure(
        _unique(f"{base}-flow-curve", taken), ("sample", i),
        f"Flow curve of {sample.name}: measured viscosity, the best models by AICc and the 95 % "
        f"confidence band of the chosen {model} model. Shaded: the measured shear-rate range; a "
        "dashed line is the chosen model extrapolated beyond it; open markers on the curve: the "
        "wall shear rates of the flow cases.",
        lambda: plots.flow_curve_figure(sample.ranking, sample.band, curve=sample.curve,
                                        chosen=sample.chosen, operating=operating),
    )
    yield PlannedFigure(
        _unique(f"{base}-residuals", taken), ("sample", i),
        f"Residuals of {sample.name} in log space, ln(τ_model/τ_measured), against shear rate; a "
        "good model scatters about zero without long runs of one sign.",
        lambda: plots.residuals_figure(sample.ranking, chosen=sample.chosen),
    )


def _case_figures(i, sample, taken):
    from rheofit.report import plots

    base = slug(sample.name)
    for j, result in enumerate(sample.cases):
        p, case = result.prediction, result.case
        title = f"{sample.name}, {case.label}"
        stem = f"{base}-{slug(case.label)}"
        if bool(_first(p.flowing)):
            yield PlannedFigure(
                _unique(f"{stem}-profile", taken), ("case", i, j),
                f"Velocity across the channel ({case.describe()}): the {p.fluid.declaration.title} "
                "model against a Newtonian fluid carrying the same flow rate; hatched: the "
                "unsheared plug of a yield-stress fluid.",
                lambda p=p, r=result, title=title: plots.velocity_profile_figure(
                    p, r.velocity_profile, label=title),
            )
        yield PlannedFigure(
            _unique(f"{stem}-operating-curve", taken), ("case", i, j),
            f"Pressure drop against flow rate in the {case.geometry.describe()}: the "
            f"{p.fluid.declaration.title} model with its 95 % band from the parameter uncertainty, "
            "the Newtonian estimates and the operating point.",
            lambda p=p, r=result, title=title: plots.operating_curve_figure(
                p, r.operating_curve, label=title),
        )


def _first(value):
    import numpy as np

    return np.ravel(value)[0]


def figure_plan(analysis) -> list[PlannedFigure]:
    """Every figure of the report, in the order they appear."""
    from rheofit.report import plots

    taken: set[str] = set()
    plan = []
    for i, sample in enumerate(analysis.samples):
        plan += list(_sample_figures(i, sample, taken))
        plan += list(_case_figures(i, sample, taken))
    if analysis.comparison is not None:
        comparison = analysis.comparison
        plan.append(PlannedFigure(
            _unique("lot-comparison", taken), ("compare",),
            "Viscosity of each lot with its fit. Shaded: the shear-rate range all lots share, "
            "where they are compared; filled markers and the heavier line: the reference lot.",
            lambda: plots.lot_overlay_figure(comparison),
        ))
    return plan
