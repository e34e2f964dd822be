"""The job behind a report: fit every curve, predict its flow cases, compare the lots.

The results are plain frozen data (:class:`Analysis`), which
:mod:`rheofit.report.html` renders without computing anything but figures.

>>> from rheofit.flow import Tube
>>> case = OperatingCase("tube", Tube("0.8 mm", "30 cm"), flow_rate=50e-9 / 60)
>>> case.describe().endswith("at a flow rate of 50 µL/min")
True
"""

from __future__ import annotations

from dataclasses import dataclass, field

from rheofit.errors import GeometryError
from rheofit.progress import Steps, quiet

#: default title of a report
TITLE = "rheofit report"


@dataclass(frozen=True)
class OperatingCase:
    """One geometry and one operating condition (exactly one of the two, SI).

    Attributes: label (for people), geometry (Tube or Slit), flow_rate
    [m^3/s] or pressure_drop [Pa].
    """

    label: str
    geometry: object
    flow_rate: float | None = None
    pressure_drop: float | None = None

    def __post_init__(self):
        if (self.flow_rate is None) == (self.pressure_drop is None):
            raise GeometryError(
                f"Operating case '{self.label}' needs exactly one of flow_rate [m^3/s] or "
                "pressure_drop [Pa]; give one, not both or neither."
            )

    @property
    def point(self) -> dict:
        """The operating condition as keyword arguments for :func:`rheofit.flow.predict`."""
        if self.flow_rate is not None:
            return {"flow_rate": self.flow_rate}
        return {"pressure_drop": self.pressure_drop}

    def describe(self) -> str:
        """'<geometry> at a flow rate of 50 µL/min' (or 'at a pressure drop of ...')."""
        from rheofit.report.display import shown

        if self.flow_rate is not None:
            return f"{self.geometry.describe()} at a flow rate of {shown(self.flow_rate, 'flow_rate')}"
        return f"{self.geometry.describe()} at a pressure drop of {shown(self.pressure_drop, 'pressure')}"


@dataclass(frozen=True)
class CaseResult:
    """An operating case and the prediction for it."""

    case: OperatingCase
    prediction: object


@dataclass(frozen=True)
class SampleResult:
    """One flow curve: its fits (best first by AICc), the chosen fit and its flow cases."""

    curve: object
    ranking: list
    chosen: object
    cases: tuple[CaseResult, ...] = ()

    @property
    def name(self) -> str:
        return self.curve.name or "unnamed sample"


@dataclass(frozen=True)
class Analysis:
    """Everything a report shows.

    ``comparison`` is a :class:`rheofit.lots.Comparison` (or None) and
    ``comparison_note`` says why there is none when several samples were
    given; ``notice`` is shown at the top (e.g. that the data are invented).
    """

    samples: tuple[SampleResult, ...]
    comparison: object | None = None
    comparison_note: str = ""
    notice: str = ""
    title: str = TITLE
    extra: dict = field(default_factory=dict)


def fit_curve(curve, model: str | None = None):
    """(ranking best first, chosen fit): every model ranked; ``model`` picks the chosen one.

    A named model that could not be fitted raises FitError (with the reason).
    """
    from rheofit.errors import FitError
    from rheofit.fitting import fit_all
    from rheofit.models import get_model

    ranking = fit_all(curve)
    if model is None:
        return ranking, ranking[0]
    name = get_model(model).name
    for result in ranking:
        if result.model == name:
            return ranking, result
    reason = dict(ranking.skipped).get(name, "it was not fitted")
    raise FitError(f"The {name} model could not be used for curve '{curve.name}': {reason}")


def predict_cases(chosen, cases, density=None) -> tuple[CaseResult, ...]:
    """A prediction per operating case with the chosen fit."""
    from rheofit.flow import predict

    return tuple(CaseResult(case, predict(chosen, case.geometry, density=density, **case.point))
                 for case in cases)


def analyse_sample(curve, *, model: str | None = None, cases=(), density=None) -> SampleResult:
    """Fit ``curve`` (every model, ranked) and predict each operating case."""
    ranking, chosen = fit_curve(curve, model)
    return SampleResult(curve, list(ranking), chosen, predict_cases(chosen, cases, density))


def compare_samples(samples, case: OperatingCase | None, *, model: str | None = None,
                    tolerance: float = 0.10, steps: Steps | None = None):
    """(Comparison or None, note): the lots side by side with :func:`rheofit.lots.compare`.

    The comparison is made at ``case`` (its geometry and operating point)
    when one is given.  The note says why there is no comparison.
    """
    if len(samples) < 2:
        return None, ""
    from rheofit.lots import compare

    curves = [s.curve for s in samples]
    point = {} if case is None else {"geometry": case.geometry, **case.point}
    point["progress"] = quiet(steps).note
    rankings = [s.ranking for s in samples]  # fitted already: not fitted again
    return compare(curves, tolerance=tolerance, model=model, rankings=rankings, **point), ""


def analyse(curves, *, model: str | None = None, cases=(), density=None, tolerance: float = 0.10,
            compare_lots: bool = True, notice: str = "", title: str = TITLE,
            steps: Steps | None = None) -> Analysis:
    """Fit every curve, predict every case for each, and compare them when there are several.

    Parameters
    ----------
    curves : list of FlowCurve
    model : str, optional
        Model used for predictions and the comparison (default: each curve's
        best by AICc; the comparison then picks its own common model).
    cases : list of OperatingCase
        Geometry and operating point(s); the first is also where the lots are
        compared.
    density : float, optional
        [kg/m^3] for the Reynolds number.
    tolerance : float
        Relative tolerance of the lot comparison [-].
    """
    steps = quiet(steps)
    curves = list(curves)
    steps.begin("fitting the models", len(curves))
    samples = []
    for curve in curves:
        samples.append(analyse_sample(curve, model=model, cases=cases, density=density))
        steps.advance(f"fitted {curve.name}")
    comparison, note = None, ""
    if compare_lots and len(samples) > 1:
        steps.begin("comparing the lots", 1)
        comparison, note = compare_samples(samples, cases[0] if cases else None, model=model,
                                           tolerance=tolerance, steps=steps)
        steps.advance()
    return Analysis(tuple(samples), comparison, note, notice, title)
