"""How strongly the data support a fitted model against the others fitted to the same curve.

Every fit that :func:`rheofit.fitting.fit_all` ranks carries a
:class:`ModelSupport`: its Akaike weight, its rank, how many models were
ranked and which were not, and on how many points.  A model the user picks
by name is judged here too (:func:`forced`): when the data reject it, it
gets a ``forced_model`` flag that every later result shows before its number.

How many points are enough (the rules, in one place)
----------------------------------------------------
* A model with k parameters needs at least k + 2 points to be fitted and
  ranked (:data:`MIN_SPARE_POINTS`): the small-sample
  AICc = AIC + 2k(k+1)/(N-k-1) is undefined at N = k + 1.  With fewer, the
  model is listed as not fitted (``FitRanking.skipped``), never as
  infinitely bad.
* Fewer than 5 points per parameter (``MIN_POINTS_PER_PARAMETER``) flags the
  fit ``few_points``: wide intervals, weak residual checks.
* A ranking on fewer than :data:`RANKING_MIN_POINTS` = 8 points says so in
  its heading: below 8 points the runs test on the residual signs cannot
  reach p < 0.05 whatever the residuals (the smallest possible p, two runs
  of N/2 signs each, is 2 / C(N, N/2): 2/35 = 0.057 at N = 7, 2/70 = 0.029
  at N = 8; Swed & Eisenhart 1943), so a misfit can go unseen and the
  weights rest on almost nothing.
* A ranking of one model only (every other model needed more points) gives
  that model the weight 1.000 by construction; it is reported as the only
  model that could be ranked, not as the best.

Akaike weights: Burnham, K.P. & Anderson, D.R. (2002) Model Selection and
Multimodel Inference, 2nd ed., Springer, sec. 2.9 (from memory); a weight
below 0.01 means the data give the model less than a 1 % chance of being
the best of those tried (:data:`REJECTED_WEIGHT`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from rheofit.curve import Flag
from rheofit.errors import FitError
from rheofit.fitting.statistics import akaike_weights

#: a model with k parameters needs at least k + this many points to be fitted and ranked:
#: AICc = AIC + 2k(k+1)/(N-k-1) is undefined at N = k + 1 (Burnham & Anderson 2002, sec. 2.4,
#: from memory)
MIN_SPARE_POINTS = 2
#: fewer points than this make a ranking "thin" (see the module docstring: the runs test
#: at 5 % cannot flag any pattern below 8 points)
RANKING_MIN_POINTS = 8
#: an Akaike weight below this says the data reject the model among those tried
#: (common practice, no source: a 1 % level)
REJECTED_WEIGHT = 0.01


def ordinal(n: int) -> str:
    """1 -> '1st', 2 -> '2nd', 3 -> '3rd', 11 -> '11th'."""
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"{n}{suffix}"


@dataclass(frozen=True)
class ModelSupport:
    """A fit's standing among the models fitted to the same curve.

    Attributes
    ----------
    akaike_weight : float
        w = exp(-D/2) / sum exp(-D_j/2) with D = AICc - min AICc [-].
    rank : int
        1 for the lowest AICc.
    ranked : int
        How many models were ranked.
    best : str
        The rank-1 model.
    delta_aicc : float
        AICc minus the best AICc [-].
    n_points : int
        Points of the curve.
    not_ranked : tuple of str
        Models tried but not fitted (too few points, or the fit failed).
    """

    akaike_weight: float
    rank: int
    ranked: int
    best: str
    delta_aicc: float
    n_points: int
    not_ranked: tuple[str, ...] = ()

    @property
    def thin(self) -> bool:
        """True for a ranking on fewer than :data:`RANKING_MIN_POINTS` points."""
        return self.n_points < RANKING_MIN_POINTS

    @property
    def sole(self) -> bool:
        """True when no other model could be ranked (the weight 1.000 then compares nothing)."""
        return self.ranked == 1

    @property
    def rejected(self) -> bool:
        """True when the Akaike weight is below :data:`REJECTED_WEIGHT` (and others were ranked)."""
        return not self.sole and self.akaike_weight < REJECTED_WEIGHT

    def text(self) -> str:
        """'Akaike weight 0.807 (1st of 9 models)', or what a sole or thin ranking means."""
        if self.sole:
            return f"the only model that could be ranked on {self.n_points} points"
        text = f"Akaike weight {self.akaike_weight:.3f} ({ordinal(self.rank)} of {self.ranked} models"
        text += ")" if self.rank == 1 else f"; best {self.best})"
        return text + (f", ranked on only {self.n_points} points" if self.thin else "")

    def to_dict(self) -> dict:
        weight = self.akaike_weight if math.isfinite(self.akaike_weight) else None
        delta = self.delta_aicc if math.isfinite(self.delta_aicc) else None
        return {"akaike_weight": weight, "rank": self.rank, "ranked": self.ranked, "best": self.best,
                "delta_aicc": delta, "n_points": self.n_points, "not_ranked": list(self.not_ranked)}

    @classmethod
    def from_dict(cls, d) -> "ModelSupport | None":
        """The support saved by :meth:`to_dict`; None for a missing or unreadable entry."""
        if not isinstance(d, dict):
            return None
        try:
            weight, delta = d.get("akaike_weight"), d.get("delta_aicc")
            return cls(math.nan if weight is None else float(weight), int(d["rank"]), int(d["ranked"]),
                       str(d["best"]), math.inf if delta is None else float(delta), int(d["n_points"]),
                       tuple(str(m) for m in d.get("not_ranked") or ()))
        except (KeyError, TypeError, ValueError):
            return None


def with_support(results, skipped=()) -> list:
    """The fits sorted best first by AICc, each carrying its :class:`ModelSupport`.

    ``results`` are fits of one curve (anything with ``aicc``, ``model``,
    ``n_points`` and a ``support`` field); ``skipped`` the (model, reason)
    pairs of the models not fitted.
    """
    ordered = sorted(results, key=lambda r: (not math.isfinite(r.aicc), r.aicc))
    if not ordered:
        return []
    weights = akaike_weights([r.aicc for r in ordered])
    best = ordered[0].aicc
    missing = tuple(name for name, _ in skipped)
    return [replace(r, support=ModelSupport(float(w), i, len(ordered), ordered[0].model, r.aicc - best,
                                            int(r.n_points), missing))
            for i, (r, w) in enumerate(zip(ordered, weights), start=1)]


def supported(fit, scores, not_ranked=()):
    """``fit`` with its :class:`ModelSupport` among the models of ``scores``.

    ``scores`` maps model names to their AICc at the optimum (a ranking made
    without intervals, :func:`rheofit.fitting.solve.aicc_scores`); the fit's
    own AICc stands for its model.  ``not_ranked``: the models tried but not
    fitted.
    """
    aicc = {name: float(value) for name, value in scores.items()}
    aicc[fit.model] = float(fit.aicc)
    names = sorted(aicc, key=lambda m: (not math.isfinite(aicc[m]), aicc[m]))
    weights = akaike_weights([aicc[m] for m in names])
    i = names.index(fit.model)
    return replace(fit, support=ModelSupport(float(weights[i]), i + 1, len(names), names[0],
                                             aicc[fit.model] - aicc[names[0]], int(fit.n_points),
                                             tuple(not_ranked)))


def ranking_caveat(n_points: int, ranked, not_ranked=()) -> str:
    """One sentence on what a one-model or thin ranking cannot say ("" when nothing needs saying).

    ``ranked``: the names of the models ranked, best first; ``not_ranked``:
    those tried but not fitted.
    """
    ranked = list(ranked)
    if len(ranked) == 1:
        return (f"Only the {ranked[0]} model could be ranked on these {n_points} points"
                f"{_others(n_points, not_ranked)}; its weight 1.000 compares it with nothing: it is the "
                "only model left, not the best of several.")
    if ranked and n_points < RANKING_MIN_POINTS:
        return (f"Ranked on only {n_points} points (fewer than {RANKING_MIN_POINTS}): the runs test cannot "
                "detect a misfit on so few, and the weights can change with a single point.")
    return ""


def not_ranked_lines(n_points: int, skipped) -> list[str]:
    """The models not fitted, grouped: ['power_law, casson: need at least 4 points', 'x: <why>']."""
    from rheofit.models import MODELS

    by_need, other = {}, []
    for name, reason in skipped:
        need = len(MODELS[name].parameters) + MIN_SPARE_POINTS if name in MODELS else 0
        if need > n_points:
            by_need.setdefault(need, []).append(name)
        else:
            other.append(f"{name}: {reason}")
    return [f"{', '.join(names)}: need at least {need} points (AICc undefined with fewer)"
            for need, names in sorted(by_need.items())] + other


def _others(n_points: int, not_ranked) -> str:
    """' (every other model needs at least 4 points)', or the names of the models not ranked."""
    from rheofit.models import MODELS

    needs = [len(MODELS[name].parameters) + MIN_SPARE_POINTS for name in not_ranked if name in MODELS]
    if not not_ranked:
        return ""
    if len(needs) == len(not_ranked) and min(needs) > n_points:
        return f" (every other model needs at least {min(needs)} points)"
    return f" (not ranked: {', '.join(not_ranked)})"


def forced_flag(fit) -> Flag | None:
    """A ``forced_model`` flag when the data reject ``fit``'s model, chosen by the user.

    Rejected: an Akaike weight below :data:`REJECTED_WEIGHT` among the models
    fitted to the same curve, or a residual pattern (runs test).
    """
    support = getattr(fit, "support", None)
    low = support is not None and support.rejected
    pattern = bool(fit.flags_with("residual_pattern"))
    if not (low or pattern):
        return None
    reasons = []
    if low:
        reasons.append(f"Akaike weight {support.akaike_weight:.3f}, {ordinal(support.rank)} of "
                       f"{support.ranked} models; best {support.best}")
    if pattern:
        p_value = fit.flags_with("residual_pattern")[0].data.get("p_value")
        reasons.append("residual pattern" + (f", runs test p = {p_value:.2g}" if p_value is not None else ""))
    misfit = 100.0 * math.expm1(fit.rms_log_residual)
    return Flag("forced_model",
                f"The data reject the chosen {fit.model} model ({'; '.join(reasons)}; misfit about "
                f"{misfit:.0f} %): numbers from it are not supported by the measurements.",
                {"model": fit.model, "akaike_weight": None if support is None else support.akaike_weight,
                 "best": None if support is None else support.best, "residual_pattern": pattern,
                 "rms_log_residual": fit.rms_log_residual})


def forced(fit):
    """``fit`` as the user's choice: with a ``forced_model`` flag when the data reject it."""
    flag = forced_flag(fit)
    if flag is None or fit.flags_with("forced_model"):
        return fit
    flags = (flag,) + tuple(fit.flags)
    return replace(fit, flags=flags, fluid=replace(fit.fluid, flags=flags))


def choose(ranking, model=None):
    """The fit to use from a ranking: the best, or the named model judged by :func:`forced`.

    Raises FitError when the named model was not fitted (with the reason).
    """
    if model is None:
        return ranking[0]
    from rheofit.models import get_model

    name = get_model(model).name
    for result in ranking:
        if result.model == name:
            return forced(result)
    reason = dict(getattr(ranking, "skipped", ())).get(name, "it was not fitted")
    label = ranking[0].name if ranking else ""
    raise FitError(f"The {name} model could not be used for curve '{label}': {reason}")
