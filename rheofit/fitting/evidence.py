"""The evidence behind a number from a fit, in one line: misfit, runs test, Akaike weight, unresolved.

Every verdict built on a fit (a flow prediction, a lot verdict, a report
row) shows this line beside its number, and the warning of :meth:`Evidence.warning`
before it when the data reject a model the user chose, or when only one
model could be ranked.

* misfit: the rms of the log residuals, shown as a typical relative
  deviation 100 (exp(rms) - 1) %;
* runs test: the Wald-Wolfowitz test on the residual signs ordered by shear
  rate (Wald & Wolfowitz 1940, :func:`rheofit.fitting.statistics.runs_test`),
  a pattern where ``residual_pattern`` was flagged by the fit;
* Akaike weight and rank: :class:`rheofit.fitting.support.ModelSupport`;
* unresolved: parameters whose 95 % interval the data leave open.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.fitting.statistics import runs_test
from rheofit.fitting.support import RANKING_MIN_POINTS, ModelSupport, ranking_caveat

#: flags of a fit that the evidence carries on to every result built on it
CARRIED = ("forced_model", "sole_model", "thin_ranking")


@dataclass(frozen=True)
class Evidence:
    """What the data say for one fitted model.

    Attributes: model (name), n_points, rms_log_residual [-], runs_p_value
    (None when the residuals are rounding noise or of one sign only),
    pattern (the fit flagged ``residual_pattern``), support (ModelSupport or
    None: no ranking was made), unresolved (parameter names), flags (the
    ``forced_model``, ``sole_model`` and ``thin_ranking`` flags).
    """

    model: str
    n_points: int
    rms_log_residual: float
    runs_p_value: float | None
    pattern: bool
    support: ModelSupport | None
    unresolved: tuple[str, ...]
    flags: tuple[Flag, ...] = ()

    @classmethod
    def of(cls, fit) -> "Evidence":
        """The evidence of a FitResult (its own flags and support; see :func:`ranking_flags`)."""
        return cls(fit.model, int(fit.n_points), float(fit.rms_log_residual), _runs_p_value(fit),
                   bool(fit.flags_with("residual_pattern")), fit.support,
                   tuple(name for name, p in fit.params.items() if not p.resolved),
                   tuple(f for f in fit.flags if f.code == "forced_model") + ranking_flags(fit))

    @property
    def misfit_percent(self) -> float:
        """Typical relative misfit 100 (exp(rms) - 1) [%]."""
        return 100.0 * math.expm1(self.rms_log_residual) if math.isfinite(self.rms_log_residual) else math.nan

    def line(self) -> str:
        """'misfit 1.9 % rms (runs test p = 0.43); Akaike weight 0.807 (1st of 9 models); all parameters resolved'."""
        misfit = self.misfit_percent
        parts = [f"misfit {misfit:.2g} % rms" if math.isfinite(misfit) else "misfit unknown"]
        if self.runs_p_value is None:
            parts[0] += " (runs test: not applicable)"
        else:
            word = ", residual PATTERN" if self.pattern else ""
            if self.n_points < RANKING_MIN_POINTS:
                word += f"; on {self.n_points} points it cannot detect a pattern"
            parts[0] += f" (runs test p = {self.runs_p_value:.2g}{word})"
        parts.append("Akaike weight not known (no ranking saved)" if self.support is None else self.support.text())
        parts.append(f"unresolved: {', '.join(self.unresolved)}" if self.unresolved else "all parameters resolved")
        return "; ".join(parts)

    def warning(self) -> str | None:
        """One line to print BEFORE the number: the rejected chosen model, or the only model left."""
        messages = [f.message for f in self.flags if f.code in ("forced_model", "sole_model")]
        return " ".join(messages) if messages else None

    def to_dict(self) -> dict:
        return {
            "model": self.model, "n_points": self.n_points,
            "rms_log_residual": self.rms_log_residual if math.isfinite(self.rms_log_residual) else None,
            "misfit_percent": self.misfit_percent if math.isfinite(self.misfit_percent) else None,
            "runs_p_value": self.runs_p_value, "residual_pattern": self.pattern,
            "support": None if self.support is None else self.support.to_dict(),
            "unresolved": list(self.unresolved),
            "forced_model": any(f.code == "forced_model" for f in self.flags),
            "flags": [f.to_dict() for f in self.flags],
            "line": self.line(),
        }


def _runs_p_value(fit) -> float | None:
    residuals = np.asarray(fit.residuals, dtype=float)
    rates = np.asarray(fit.shear_rate, dtype=float)
    if residuals.size < 2 or residuals.size != rates.size or not np.all(np.isfinite(residuals)):
        return None
    if math.sqrt(float(np.mean(residuals**2))) < 1e-9:  # noise-free data: the signs are rounding
        return None
    test = runs_test(residuals[np.argsort(rates, kind="stable")])
    return None if min(test["n_pos"], test["n_neg"]) == 0 else float(test["p_value"])


def ranking_flags(fit) -> tuple[Flag, ...]:
    """``sole_model`` (no other model could be ranked) or ``thin_ranking`` (fewer than 8 points)."""
    support = fit.support
    if support is None:
        return ()
    if support.sole:
        misfit = 100.0 * math.expm1(fit.rms_log_residual)
        caveat = ranking_caveat(support.n_points, [fit.model], support.not_ranked)
        return (Flag("sole_model", f"{caveat} It misfits the data by about {misfit:.0f} %.",
                     {"model": fit.model, "n_points": support.n_points,
                      "not_ranked": list(support.not_ranked)}),)
    if support.thin:
        return (Flag("thin_ranking", ranking_caveat(support.n_points, [fit.model, support.best]),
                     {"n_points": support.n_points}),)
    return ()
