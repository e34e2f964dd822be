"""Statistics of a least-squares fit in log space: information criteria,
Akaike weights, the profile-likelihood threshold, the runs test on residual
signs and parameter correlations.

All functions take plain numbers; nothing here knows about models.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

#: Smallest residual sum of squares used per point: log residuals below
#: ~1e-12 are rounding noise (noise-free synthetic data), and RSS = 0 would
#: make every criterion -inf.
RSS_FLOOR_PER_POINT = 1e-24


def floored_rss(rss: float, n_points: int) -> float:
    """``max(rss, n_points * RSS_FLOOR_PER_POINT)`` [-] (see the constant)."""
    return max(float(rss), n_points * RSS_FLOOR_PER_POINT)


def information_criteria(rss: float, n_points: int, n_params: int) -> dict[str, float]:
    """AIC, AICc and BIC of a least-squares fit with Gaussian residuals.

    With the maximised Gaussian log-likelihood of the residuals,
    ``-2 ln L = N ln(RSS/N) + const``::

        AIC  = N ln(RSS/N) + 2k
        AICc = AIC + 2k(k+1) / (N - k - 1)
        BIC  = N ln(RSS/N) + k ln N

    Parameters
    ----------
    rss : float
        Residual sum of squares of the log residuals [-].
    n_points : int
        Number of data points N [-].
    n_params : int
        Number of fitted model parameters k [-].  The error variance is not
        counted (Burnham & Anderson count it as one more parameter; that
        shifts every AIC by 2 and changes the AICc correction slightly, but
        the ranking of models fitted to the same data rarely changes).

    Returns
    -------
    dict with ``aic``, ``aicc`` and ``bic``; ``aicc`` is ``inf`` when
    N = k + 1 (the correction is undefined).

    References
    ----------
    Burnham, K.P. & Anderson, D.R. (2002) Model Selection and Multimodel
    Inference, 2nd ed., Springer: AIC for least squares (sec. 2.2) and the
    small-sample AICc (sec. 2.4) (section numbers from memory).
    Schwarz, G. (1978) Ann. Stat. 6, 461-464 (BIC).

    >>> c = information_criteria(0.5, 20, 2)
    >>> round(c["aic"], 4), round(c["aicc"], 4), round(c["bic"], 4)
    (-69.7776, -69.0717, -67.7861)
    """
    n, k = int(n_points), int(n_params)
    fit_term = n * math.log(floored_rss(rss, n) / n)
    aic = fit_term + 2 * k
    dof = n - k - 1
    aicc = aic + 2 * k * (k + 1) / dof if dof > 0 else math.inf
    bic = fit_term + k * math.log(n)
    return {"aic": aic, "aicc": aicc, "bic": bic}


def akaike_weights(aicc) -> list[float]:
    """Akaike weights of models fitted to the same data [-], in the order given.

    With D_i = AICc_i - min_j AICc_j::

        w_i = exp(-D_i / 2) / sum_j exp(-D_j / 2)

    A model with a non-finite AICc gets weight 0; all weights are nan when
    no AICc is finite.  Burnham, K.P. & Anderson, D.R. (2002) Model
    Selection and Multimodel Inference, 2nd ed., Springer, sec. 2.9 (from
    memory).

    >>> [round(w, 4) for w in akaike_weights([10.0, 12.0, float("inf")])]
    [0.7311, 0.2689, 0.0]
    """
    aicc = np.asarray(aicc, dtype=float).ravel()
    finite = np.isfinite(aicc)
    if not finite.any():
        return [math.nan] * aicc.size
    rel = np.where(finite, np.exp(-0.5 * (np.where(finite, aicc, 0.0) - aicc[finite].min())), 0.0)
    return (rel / rel.sum()).tolist()


#: correlations at or below this size [-] are left out of the reports (the
#: default ``min_correl=0.1`` of lmfit's ``fit_report``, lmfit documentation)
CORRELATION_SHOWN_ABOVE = 0.1


def correlation_matrix(covariance) -> np.ndarray:
    """Correlation matrix of a covariance matrix [-]::

        r_ij = C_ij / sqrt(C_ii C_jj)

    A parameter whose variance is not positive and finite has nan in its row
    and column.

    >>> correlation_matrix([[4.0, -2.0], [-2.0, 4.0]]).tolist()
    [[1.0, -0.5], [-0.5, 1.0]]
    """
    c = np.asarray(covariance, dtype=float)
    variance = np.diag(c)
    usable = np.isfinite(variance) & (variance > 0)
    sd = np.where(usable, np.sqrt(np.where(usable, variance, 1.0)), np.nan)
    return c / np.outer(sd, sd)


def correlated_pairs(names, correlation, above: float = CORRELATION_SHOWN_ABOVE):
    """``[(name_i, name_j, r_ij)]`` for i < j with |r_ij| > ``above``, largest |r| first.

    Pairs whose correlation is not finite are left out.

    >>> correlated_pairs(("a", "b", "c"), [[1, 0.05, -0.9], [0.05, 1, 0.3], [-0.9, 0.3, 1]])
    [('a', 'c', -0.9), ('b', 'c', 0.3)]
    """
    r = np.asarray(correlation, dtype=float)
    pairs = [(names[i], names[j], float(r[i, j]))
             for i in range(len(names)) for j in range(i + 1, len(names))
             if math.isfinite(r[i, j]) and abs(r[i, j]) > above]
    return sorted(pairs, key=lambda pair: -abs(pair[2]))


def profile_threshold(n_points: int, n_params: int, level: float = 0.95) -> float:
    """Ratio RSS_profile / RSS_min at the edge of a profile-likelihood interval.

    For one parameter of a least-squares fit with k parameters and N points::

        RSS_prof / RSS_min = 1 + F(1, N - k; level) / (N - k)

    which for a model linear in its parameters gives exactly the Student-t
    interval.  Bates, D.M. & Watts, D.G. (1988) Nonlinear Regression Analysis
    and Its Applications, Wiley, secs. 3.5 and 6.1 (from memory).

    >>> round(profile_threshold(12, 2), 5)   # 1 + t(10, 0.975)^2 / 10 = 1 + 2.228139^2 / 10
    1.49646
    """
    dof = int(n_points) - int(n_params)
    # fdtri is the F quantile itself (scipy.stats.f.ppf calls it), without loading scipy.stats
    return 1.0 + float(special.fdtri(1, dof, level)) / dof


def _log_binomial(n, k) -> np.ndarray:
    """ln C(n, k) for integer arrays, -inf where k < 0 or k > n (C = 0)."""
    n, k = np.broadcast_arrays(np.asarray(n, dtype=float), np.asarray(k, dtype=float))
    inside = (k >= 0) & (k <= n)
    out = np.full(n.shape, -np.inf)
    out[inside] = (special.gammaln(n[inside] + 1) - special.gammaln(k[inside] + 1)
                   - special.gammaln(n[inside] - k[inside] + 1))
    return out


def runs_probability_at_most(runs: int, n_pos: int, n_neg: int) -> float:
    """P(R <= runs) for the number of runs R in a random arrangement.

    Exact distribution of the number of runs of two kinds of symbols
    (``n_pos`` and ``n_neg`` of them) when every arrangement is equally
    likely; with C = binomial coefficient and N = n_pos + n_neg::

        P(R = 2s)     = 2 C(n_pos-1, s-1) C(n_neg-1, s-1) / C(N, n_pos)
        P(R = 2s + 1) = [C(n_pos-1, s) C(n_neg-1, s-1)
                         + C(n_pos-1, s-1) C(n_neg-1, s)] / C(N, n_pos)

    The same exact sum is taken in log space (ln C from the log-gamma
    function, the terms added by log-sum-exp), so the cost is linear in
    ``runs`` instead of growing with the size of the integers; the result
    agrees with the integer sum to about 1e-10 relative (the rounding of
    ln C, whose size grows like N).

    Wald, A. & Wolfowitz, J. (1940) Ann. Math. Stat. 11, 147-162;
    tables in Swed, F.S. & Eisenhart, C. (1943) Ann. Math. Stat. 14, 66-87.

    >>> round(runs_probability_at_most(3, 5, 5), 6)   # (2 + 8) / C(10, 5) = 10 / 252
    0.039683
    """
    if n_pos == 0 or n_neg == 0:
        return 1.0
    if runs < 2:
        return 0.0
    s_even = np.arange(1, runs // 2 + 1)
    s_odd = np.arange(1, (runs - 1) // 2 + 1)
    log_terms = np.concatenate([
        math.log(2.0) + _log_binomial(n_pos - 1, s_even - 1) + _log_binomial(n_neg - 1, s_even - 1),
        _log_binomial(n_pos - 1, s_odd) + _log_binomial(n_neg - 1, s_odd - 1),
        _log_binomial(n_pos - 1, s_odd - 1) + _log_binomial(n_neg - 1, s_odd),
    ])
    log_p = special.logsumexp(log_terms) - _log_binomial(n_pos + n_neg, n_pos)
    return min(1.0, math.exp(log_p))


def runs_test(residuals) -> dict:
    """Wald-Wolfowitz runs test for a systematic pattern in residual signs.

    ``residuals`` must already be ordered (by shear rate).  Zeros are
    dropped.  Too *few* runs means the residuals come in long stretches of
    one sign - the signature of a model that misses the curve's shape - so
    the p-value is the lower tail P(R <= observed), computed exactly.
    Wald & Wolfowitz (1940) Ann. Math. Stat. 11, 147-162.

    Returns a dict with ``runs``, ``n_pos``, ``n_neg``, ``expected`` (mean
    number of runs, 2 n_pos n_neg / N + 1) and ``p_value``.

    >>> runs_test([1, 1, 1, 1, 1, -1, -1, -1, -1, -1])["p_value"] < 0.01
    True
    """
    signs = np.sign(np.asarray(residuals, dtype=float))
    signs = signs[signs != 0]
    n_pos = int(np.sum(signs > 0))
    n_neg = int(np.sum(signs < 0))
    runs = 1 + int(np.sum(signs[1:] != signs[:-1])) if signs.size else 0
    n = n_pos + n_neg
    expected = 2.0 * n_pos * n_neg / n + 1.0 if n else 0.0
    return {
        "runs": runs,
        "n_pos": n_pos,
        "n_neg": n_neg,
        "expected": expected,
        "p_value": runs_probability_at_most(runs, n_pos, n_neg),
    }
