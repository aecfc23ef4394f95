"""Replicated forced-choice tests: each panelist answers several sets.

Answers of one panelist are not independent draws with one common ``pc``: panelists
differ in acuity, so the counts vary more between panelists than a binomial allows
(overdispersion). Pooling them into one binomial test then understates the variance
and overstates the evidence. This module

- tests for overdispersion (Tarone 1979) and warns with
  :class:`~trials.errors.OverdispersionWarning`;
- fits the beta-binomial model (Ennis and Bi 1998): panelist ``i``'s probability of a
  correct answer is Beta distributed with mean ``mu`` and dispersion ``gamma``
  (``gamma = 1 / (a + b + 1)``; 0 = binomial, 1 = each panelist always right or always
  wrong);
- tests a difference with the beta-binomial variance.

References
----------
Tarone, R. E. (1979). Testing the goodness of fit of the binomial distribution.
Biometrika 66:585-590. doi:10.1093/biomet/66.3.585
Ennis, D. M. and Bi, J. (1998). The beta-binomial model: accounting for inter-trial
variation in replicated difference and preference tests. J. Sensory Stud. 13:389-412.
doi:10.1111/j.1745-459X.1998.tb00097.x
Kleinman, J. C. (1973). Proportions with extraneous variance: single and independent
samples. J. Am. Stat. Assoc. 68:46-54.
Bi, J. (2006). Sensory Discrimination Tests and Measurements, Blackwell, ch. 7.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import optimize, special, stats

from trials.errors import OverdispersionWarning, TrialsError
from trials.methods import get_method
from trials.model import Record

Counts = Sequence[int] | np.ndarray  # one count per panelist


def _panel(correct: Counts, trials: Counts | int) -> tuple[np.ndarray, np.ndarray]:
    x = np.asarray(correct)
    if x.ndim != 1 or x.size < 2:
        raise TrialsError(f"correct must list at least two panelists' counts, got {correct!r}")
    m = np.full(x.shape, trials) if np.ndim(trials) == 0 else np.asarray(trials)
    if m.shape != x.shape:
        raise TrialsError(f"trials ({trials!r}) must be one number or one per panelist")
    for name, arr, raw in (("correct", x, correct), ("trials", m, trials)):
        if not np.all(np.equal(np.mod(arr, 1), 0)):
            raise TrialsError(f"{name} must be whole numbers, got {raw!r}")
    x, m = x.astype(np.int64), m.astype(np.int64)
    if np.any(m < 1):
        raise TrialsError(f"each panelist needs at least one answer, got trials={trials!r}")
    if np.any((x < 0) | (x > m)):
        raise TrialsError(f"each count must lie in 0..trials, got correct={correct!r}")
    return x, m


@dataclass(frozen=True, slots=True)
class OverdispersionResult(Record):
    """Tarone's test of binomial against beta-binomial variation.

    ``statistic`` is Tarone's Z (one-sided, large = overdispersed), ``p_value`` its
    upper normal tail; ``chi2`` and ``chi2_p_value`` the classical binomial dispersion
    statistic (df = panelists - 1); ``overdispersed = p_value < alpha``.
    """

    panelists: int
    answers: int
    p_hat: float
    statistic: float
    p_value: float
    chi2: float
    df: int
    chi2_p_value: float
    alpha: float
    overdispersed: bool


def overdispersion_test(correct: Counts, trials: Counts | int, *,
                        alpha: float = 0.05, warn: bool = True) -> OverdispersionResult:
    """Do replicated answers vary more between panelists than a binomial allows?

    Parameters
    ----------
    correct : sequence of int
        Correct answers of each panelist.
    trials : int or sequence of int
        Sets each panelist answered (one number for all, or one per panelist).
    alpha : float
        Level at which overdispersion is reported (and warned about).
    warn : bool
        Issue :class:`~trials.errors.OverdispersionWarning` when overdispersed.

    Returns
    -------
    OverdispersionResult

    Notes
    -----
    With ``p = sum x / sum m``, ``S = sum (x_i - m_i p)^2 / (p (1 - p))``, Tarone's score
    statistic against the beta-binomial is ``Z = (S - sum m_i) / sqrt(2 sum m_i (m_i -
    1))``, standard normal under the binomial for many panelists (Tarone 1979). It needs
    some panelist with two or more answers. Also given: ``chi2 = sum (x_i - m_i p)^2 /
    (m_i p (1 - p))`` on ``k - 1`` df. Assumes independent panelists.

    References
    ----------
    Tarone, R. E. (1979). Biometrika 66:585-590.
    """
    x, m = _panel(correct, trials)
    if not 0.0 < alpha < 1.0:
        raise TrialsError(f"alpha must be strictly between 0 and 1, got {alpha!r}")
    denom = float(np.sum(m * (m - 1)))
    if denom == 0:
        raise TrialsError("overdispersion needs replicates: every panelist answered once")
    total = int(m.sum())
    p = float(x.sum() / total)
    if p in (0.0, 1.0):
        raise TrialsError(f"all answers alike (proportion correct {p!r}): dispersion undefined")
    resid2 = (x - m * p) ** 2
    s = float(np.sum(resid2) / (p * (1 - p)))
    z = (s - total) / math.sqrt(2.0 * denom)
    chi2 = float(np.sum(resid2 / (m * p * (1 - p))))
    df = int(x.size - 1)
    res = OverdispersionResult(
        panelists=int(x.size), answers=total, p_hat=p, statistic=z,
        p_value=float(stats.norm.sf(z)), chi2=chi2, df=df,
        chi2_p_value=float(stats.chi2.sf(chi2, df)), alpha=float(alpha),
        overdispersed=bool(stats.norm.sf(z) < alpha),
    )
    if warn and res.overdispersed:
        warnings.warn(
            f"replicated answers are overdispersed (Tarone Z = {z:.2f}, p = {res.p_value:.3g}): "
            "a pooled binomial test overstates the evidence; use the beta-binomial test",
            OverdispersionWarning, stacklevel=2,
        )
    return res


@dataclass(frozen=True, slots=True)
class BetaBinomialFit(Record):
    """Maximum-likelihood beta-binomial fit: mean ``mu``, dispersion ``gamma``.

    ``a`` and ``b`` are the Beta parameters (None when ``gamma`` is 0: binomial);
    ``log_likelihood`` at the estimate; ``mu_moment`` and ``gamma_moment`` the moment
    estimates (Kleinman 1973) used as the start.
    """

    mu: float
    gamma: float
    a: float | None
    b: float | None
    log_likelihood: float
    mu_moment: float
    gamma_moment: float
    panelists: int
    answers: int


def _moments(x: np.ndarray, m: np.ndarray) -> tuple[float, float]:
    """Kleinman (1973) weighted moment estimates for equal or unequal replicates."""
    total = m.sum()
    mu = x.sum() / total
    p_i = x / m
    w = m
    s = np.sum(w * (p_i - mu) ** 2)
    denom = mu * (1 - mu) * (np.sum(w * (1 - w / total)) - np.sum(1 - w / total))
    num = s - mu * (1 - mu) * np.sum(1 - w / total)
    gamma = float(num / denom) if denom > 0 else 0.0
    return float(mu), float(min(max(gamma, 0.0), 0.999))


def _loglik(x: np.ndarray, m: np.ndarray, mu: float, gamma: float) -> float:
    """Beta-binomial log likelihood (binomial at gamma = 0), written with betaln for
    speed; equal to ``sum(scipy.stats.betabinom.logpmf(...))`` (tested)."""
    log_comb = special.gammaln(m + 1) - special.gammaln(x + 1) - special.gammaln(m - x + 1)
    if gamma <= 1e-12:
        return float(np.sum(log_comb + x * math.log(mu) + (m - x) * math.log1p(-mu)))
    t = 1.0 / gamma - 1.0
    a, b = mu * t, (1 - mu) * t
    return float(np.sum(log_comb + special.betaln(x + a, m - x + b))
                 - x.size * special.betaln(a, b))


def beta_binomial_fit(correct: Counts, trials: Counts | int) -> BetaBinomialFit:
    """Fit the beta-binomial model to replicated answers by maximum likelihood.

    Parameters
    ----------
    correct : sequence of int
        Correct answers of each panelist.
    trials : int or sequence of int
        Sets each panelist answered.

    Returns
    -------
    BetaBinomialFit

    Notes
    -----
    ``x_i ~ BetaBinomial(m_i, a, b)`` with ``mu = a / (a + b)``, ``gamma = 1 / (a + b +
    1)``, so that ``var(x_i) = m_i mu (1 - mu) [1 + (m_i - 1) gamma]`` (Ennis and Bi
    1998). The likelihood is maximised over ``logit(mu)`` and ``logit(gamma)`` with
    Nelder-Mead from the moment estimates; a binomial (``gamma = 0``) is kept when it is
    as likely. Assumes independent panelists, each with a fixed probability of a
    correct answer across their replicates.

    References
    ----------
    Ennis, D. M. and Bi, J. (1998). J. Sensory Stud. 13:389-412.
    Kleinman, J. C. (1973). J. Am. Stat. Assoc. 68:46-54.
    """
    x, m = _panel(correct, trials)
    mu0, g0 = _moments(x, m)
    if mu0 in (0.0, 1.0):
        raise TrialsError(f"all answers alike (proportion correct {mu0!r}): nothing to fit")

    def nll(theta):
        return -_loglik(x, m, float(special.expit(theta[0])), float(special.expit(theta[1])))

    start = np.array([special.logit(mu0), special.logit(min(max(g0, 0.01), 0.95))])
    opt = optimize.minimize(nll, start, method="Nelder-Mead",
                            options={"xatol": 1e-9, "fatol": 1e-12, "maxiter": 4000})
    mu, gamma = float(special.expit(opt.x[0])), float(special.expit(opt.x[1]))
    ll = -float(opt.fun)
    ll_binom = _loglik(x, m, mu0, 0.0)
    if ll_binom >= ll - 1e-9:
        mu, gamma, ll = mu0, 0.0, ll_binom
    t = 1.0 / gamma - 1.0 if gamma > 0 else None
    return BetaBinomialFit(
        mu=mu, gamma=gamma, a=None if t is None else mu * t, b=None if t is None else (1 - mu) * t,
        log_likelihood=ll, mu_moment=mu0, gamma_moment=g0, panelists=int(x.size),
        answers=int(m.sum()),
    )


@dataclass(frozen=True, slots=True)
class ReplicatedDifferenceResult(Record):
    """Difference test for replicated answers with beta-binomial variance.

    ``statistic`` is the Z of Ennis and Bi (1998); ``inflation`` the factor by which the
    beta-binomial variance exceeds the binomial one (``1 + (m - 1) gamma`` for equal
    replicates); ``effective_n`` = answers / inflation.
    """

    method: str
    panelists: int
    answers: int
    correct: int
    pc: float
    gamma: float
    inflation: float
    effective_n: float
    statistic: float
    p_value: float
    alpha: float
    significant: bool
    overdispersion_p_value: float | None


def replicated_difference_test(correct: Counts, trials: Counts | int, *,
                               method: str, alpha: float = 0.05,
                               gamma: float | None = None) -> ReplicatedDifferenceResult:
    """Beta-binomial test of a difference for a replicated forced-choice test.

    Parameters
    ----------
    correct : sequence of int
        Correct answers of each panelist (paired preference: choices of one sample).
    trials : int or sequence of int
        Sets each panelist answered.
    method : str
        A forced-choice method of the registry (its guess is the null ``pc``).
    alpha : float
        Risk of a false difference.
    gamma : float, optional
        Dispersion to use; default: the maximum-likelihood estimate.

    Returns
    -------
    ReplicatedDifferenceResult

    Notes
    -----
    ``Z = (p_hat - p0) / sqrt(p0 (1 - p0) sum m_i [1 + (m_i - 1) gamma] / N^2)``, with
    ``p_hat = sum x / N`` and ``N = sum m_i``; one-sided upper normal tail for the
    discrimination methods, two-sided for paired preference (Ennis and Bi 1998; Bi 2006
    ch. 7). With ``gamma = 0`` it is the normal approximation of the pooled binomial
    test. Large-sample: needs a good number of panelists. Warns through
    :func:`overdispersion_test` when the data are overdispersed.

    References
    ----------
    Ennis, D. M. and Bi, J. (1998). J. Sensory Stud. 13:389-412.
    """
    spec = get_method(method)
    if spec.guess is None:
        raise TrialsError(f"method {method!r} is not a forced-choice test")
    if not 0.0 < alpha < 1.0:
        raise TrialsError(f"alpha must be strictly between 0 and 1, got {alpha!r}")
    x, m = _panel(correct, trials)
    if gamma is None:
        try:
            gamma = beta_binomial_fit(x, m).gamma
        except TrialsError:
            gamma = 0.0
    elif not 0.0 <= gamma < 1.0:
        raise TrialsError(f"gamma must lie in [0, 1), got {gamma!r}")
    disp_p = None
    if np.any(m > 1) and 0 < x.sum() < m.sum():
        disp_p = overdispersion_test(x, m, alpha=alpha, warn=True).p_value
    total = int(m.sum())
    p0 = float(spec.guess)
    p_hat = float(x.sum() / total)
    inflation = float(np.sum(m * (1 + (m - 1) * gamma)) / total)
    se = math.sqrt(p0 * (1 - p0) * inflation / total)
    z = (p_hat - p0) / se
    p = float(2 * stats.norm.sf(abs(z))) if spec.sides == 2 else float(stats.norm.sf(z))
    return ReplicatedDifferenceResult(
        method=method, panelists=int(x.size), answers=total, correct=int(x.sum()), pc=p_hat,
        gamma=float(gamma), inflation=inflation, effective_n=total / inflation, statistic=z,
        p_value=min(1.0, p), alpha=float(alpha), significant=bool(p <= alpha),
        overdispersion_p_value=disp_p,
    )
