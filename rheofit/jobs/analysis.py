"""The job behind a report: fit every curve, predict its flow cases, compare the lots.

The results are plain frozen data (:class:`Analysis`): the fits, the
predictions and every curve and band the figures draw (computed here, once),
which :mod:`rheofit.report.html` renders and :meth:`Analysis.to_dict` turns
into JSON.

>>> from rheofit.flow import Tube
>>> case = OperatingCase("tube", Tube("0.8 mm", "30 cm"), flow_rate=50e-9 / 60)
>>> case.describe().endswith("at a flow rate of 50 µL/min")
True
"""

from __future__ import annotations

from dataclasses import dataclass, field

from rheofit.errors import GeometryError
from rheofit.output import json_safe
from rheofit.progress import Steps, quiet

#: default title of a report
TITLE = "rheofit report"
#: what an analysis document says it is (Analysis.to_dict)
KIND = "rheofit-analysis"
VERSION = 1


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
    """An operating case, the prediction for it and the curves drawn of it.

    ``operating_curve`` is a :class:`~rheofit.flow.curves.OperatingCurve`
    (with the band of the chosen fit), ``velocity_profile`` a
    :class:`~rheofit.flow.curves.VelocityProfile`.
    """

    case: OperatingCase
    prediction: object
    operating_curve: object
    velocity_profile: object

    def to_dict(self) -> dict:
        """A JSON-able dict: the case, its prediction and its curves."""
        return {
            "label": self.case.label,
            "description": self.case.describe(),
            "operating_point": json_safe(self.case.point),
            "prediction": self.prediction.to_dict(),
            "operating_curve": self.operating_curve.to_dict(),
            "velocity_profile": self.velocity_profile.to_dict(),
        }


@dataclass(frozen=True)
class SampleResult:
    """One flow curve: its fits, the chosen fit and its flow cases.

    ``ranking`` is the :class:`~rheofit.fitting.solve.FitRanking` (best first
    by AICc, ``skipped`` lists the models not fitted and why); ``band`` the
    :class:`~rheofit.fitting.band.ViscosityBand` of the chosen fit, over the
    measured range widened to reach the cases' wall shear rates.
    """

    curve: object
    ranking: list
    chosen: object
    band: object
    cases: tuple[CaseResult, ...] = ()

    @property
    def name(self) -> str:
        return self.curve.name or "unnamed sample"

    def to_dict(self) -> dict:
        """A JSON-able dict: the data, every fit (best first), the models not fitted, the band, the cases."""
        return {
            "name": self.name,
            "curve": self.curve.to_dict(),
            "chosen": self.chosen.model,
            "chosen_flags": [flag.to_dict() for flag in self.chosen.flags],
            "evidence": _evidence(self.chosen),
            "fits": [fit.to_dict() for fit in self.ranking],
            "skipped": [{"model": model, "reason": reason}
                        for model, reason in getattr(self.ranking, "skipped", ())],
            "viscosity_band": self.band.to_dict(),
            "cases": [case.to_dict() for case in self.cases],
        }


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

    def warnings(self) -> list[str]:
        """One line per sample whose chosen model the data reject (or whose ranking left one
        model), and the comparison's: shown before any number."""
        from rheofit.fitting.evidence import Evidence

        lines = []
        for sample in self.samples:
            warning = Evidence.of(sample.chosen).warning()
            if warning:
                lines.append(f"{sample.name}: {warning}")
        if self.comparison is not None and self.comparison.warning:
            lines.append(f"lot comparison: {self.comparison.warning}")
        return lines

    def to_dict(self) -> dict:
        """A JSON-able dict of everything the report shows (SI units, nan as null)."""
        from rheofit.flow import SAFETY_CAUTION

        return {
            "kind": KIND,
            "version": VERSION,
            "title": self.title,
            "notice": self.notice,
            "samples": [sample.to_dict() for sample in self.samples],
            "comparison": None if self.comparison is None else self.comparison.to_dict(),
            "comparison_note": self.comparison_note,
            "warnings": self.warnings(),
            "caution": SAFETY_CAUTION,
        }


def _evidence(fit) -> dict:
    """The chosen fit's evidence as JSON (misfit, runs test, Akaike weight, unresolved, forced)."""
    from rheofit.fitting.evidence import Evidence

    return Evidence.of(fit).to_dict()


def fit_curve(curve, model: str | None = None):
    """(ranking best first, chosen fit): every model ranked; ``model`` picks the chosen one,
    flagged ``forced_model`` when the data reject it (:func:`rheofit.fitting.support.choose`).

    A named model that could not be fitted raises FitError (with the reason).
    """
    from rheofit.fitting import fit_all
    from rheofit.fitting.support import choose

    ranking = fit_all(curve)
    return ranking, choose(ranking, model)


def predict_cases(chosen, cases, density=None, best=None) -> tuple[CaseResult, ...]:
    """A prediction per operating case with the chosen fit, with its operating curve and profile;
    beside ``best``'s answer (:func:`rheofit.flow.predict.beside_best`) when the data reject the chosen model."""
    from rheofit.flow import curves, predict
    from rheofit.flow.predict import beside_best

    compare = best is not None and best is not chosen and bool(chosen.flags_with("forced_model"))
    results = []
    for case in cases:
        prediction = predict(chosen, case.geometry, density=density, **case.point)
        if compare:
            prediction = beside_best(prediction, predict(best, case.geometry, density=density,
                                                         uncertainty=False, **case.point))
        results.append(CaseResult(case, prediction, curves.operating_curve(prediction, chosen),
                                  curves.profile_against_newtonian(prediction)))
    return tuple(results)


def wall_shear_rates(cases) -> list[float]:
    """The wall shear rates [1/s] of the flowing operating points of ``cases``."""
    import numpy as np

    rates = []
    for result in cases:
        p = result.prediction
        rates += [float(g) for g, f in zip(np.ravel(p.wall_shear_rate), np.ravel(p.flowing)) if f and g > 0]
    return rates


def analyse_sample(curve, *, model: str | None = None, cases=(), density=None) -> SampleResult:
    """Fit ``curve`` (every model, ranked), predict each operating case, and draw the band
    of the chosen fit over the measured range and out to the cases' wall shear rates."""
    from rheofit.fitting.band import drawn_band

    ranking, chosen = fit_curve(curve, model)
    results = predict_cases(chosen, cases, density, best=ranking[0] if ranking else None)
    return SampleResult(curve, ranking, chosen, drawn_band(chosen, wall_shear_rates(results)), results)


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
