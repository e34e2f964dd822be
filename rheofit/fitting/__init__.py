"""Fitting viscosity models to flow curves, with honest 95 % intervals and a ranking.

- :mod:`~rheofit.fitting.problem`: the log-space least-squares problem and its parametrisation
- :mod:`~rheofit.fitting.solve`: :func:`fit` one model, :func:`fit_all` ranked by AICc,
  :func:`aicc_scores` and :func:`optimum_rss` (optima alone, no intervals)
- :mod:`~rheofit.fitting.intervals`: profile-likelihood and Wald interval ends
- :mod:`~rheofit.fitting.statistics`: AICc/BIC, Akaike weights, the profile threshold, the runs test,
  parameter correlations
- :mod:`~rheofit.fitting.result`: FitResult and its parts (to_dict/from_dict)
- :mod:`~rheofit.fitting.text`: a fit's sectioned text report
- :mod:`~rheofit.fitting.draws`: parameter draws that carry a fit's uncertainty, viscosity bands
- :mod:`~rheofit.fitting.band`: the band of a fitted curve as data (ViscosityBand), as drawn and saved
- :mod:`~rheofit.fitting.saved`: fits saved as JSON and read back

(The package is ``fitting``, not ``fit``: ``rheofit.fit`` is the function.)
"""

from rheofit.fitting.result import FitResult
from rheofit.fitting.solve import FitRanking, aicc_scores, fit, fit_all, fit_judged, optimum_rss

__all__ = ["FitRanking", "FitResult", "aicc_scores", "fit", "fit_all", "fit_judged", "optimum_rss"]
