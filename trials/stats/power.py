"""Exact power and panel size of the forced-choice tests (planning a trial).

Under the guessing model of :mod:`trials.stats.discrimination` (``pc = p0 + pd (1 -
p0)``), the power of the exact test at alpha with ``n`` panelists is the binomial upper
tail under ``pc`` from the critical count found under ``p0``. The panel size is the
fewest panelists for which that power is at least ``1 - beta`` for the proportion of
discriminators ``pd`` that matters. Exact power is a saw-tooth in n, so the smallest
such n and the smallest from which every larger n keeps the power differ (both are
reported).

References
----------
ISO 4120:2021 Sensory analysis - Methodology - Triangle test (choosing the number of
panelists).
ASTM E1885-04 Standard Test Method for Sensory Analysis - Triangle Test.
Meilgaard, M., Civille, G. V. and Carr, B. T. Sensory Evaluation Techniques, CRC Press
(chapter 6 and the statistical tables).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record
from trials.stats.discrimination import (
    _N_LIMIT,
    DEFINITIONS,
    _count,
    _critical_array,
    _forced_choice,
    _prob,
    critical_value,
)


def _power_array(ns: np.ndarray, alpha: float, p0: float, p1: float, sides: int):
    crit = _critical_array(ns, np.array(alpha), p0, sides)
    upper = stats.binom.sf(crit - 1, ns, p1)
    if sides == 2:
        upper = upper + stats.binom.cdf(ns - crit, ns, p1)
    return crit, np.where(crit > ns, 0.0, upper)


@dataclass(frozen=True, slots=True)
class PowerResult(Record):
    """Exact power of the difference test for ``n`` panelists when ``pd`` discriminate."""

    method: str
    n: int
    pd: float
    alpha: float
    critical: int | None
    power: float
    pc_alternative: float


def power(n: int, *, method: str, pd: float, alpha: float = 0.05) -> PowerResult:
    """Exact power of the binomial difference test.

    Parameters
    ----------
    n : int
        Panelists.
    method : str
        A forced-choice method of the registry.
    pd : float
        True proportion of discriminators, in (0, 1).
    alpha : float
        Risk of the test.

    Returns
    -------
    PowerResult
        ``power = P(X >= critical | p1)`` with ``p1 = p0 + pd (1 - p0)`` (paired
        preference: both tails, ``p1 = 1/2 + pd / 2``); 0 where no count reaches alpha.

    Notes
    -----
    Exact binomial power (ISO 4120 annex; ASTM E1885 appendix); it is not monotone in n
    (a saw-tooth), because the critical count moves in whole steps.

    References
    ----------
    ISO 4120:2021; ASTM E1885-04.
    """
    spec = _forced_choice(method)
    n = _count(n, "n", low=1)
    pd = _prob(pd, "pd")
    alpha = _prob(alpha, "alpha")
    p1 = spec.guess + pd * (1.0 - spec.guess)
    crit, pw = _power_array(np.array([n]), alpha, spec.guess, p1, spec.sides)
    c = int(crit[0])
    return PowerResult(method=method, n=n, pd=pd, alpha=alpha,
                       critical=None if c > n else c, power=float(pw[0]), pc_alternative=p1)


@dataclass(frozen=True, slots=True)
class PanelSizeResult(Record):
    """How many panelists a difference test needs.

    ``n`` follows ``definition``: ``"first"`` is the smallest n whose exact power
    reaches ``1 - beta``; ``"stable"`` the smallest n from which every larger n (checked
    up to ``checked_up_to``) keeps it. Both are given (``n_first``, ``n_stable``).
    """

    method: str
    pd: float
    alpha: float
    beta: float
    n: int
    critical: int
    power: float
    definition: str
    n_first: int
    n_stable: int
    checked_up_to: int
    note: str


def _normal_size(p0: float, p1: float, alpha: float, beta: float, sides: int) -> float:
    za = stats.norm.isf(alpha / sides)
    zb = stats.norm.isf(beta)
    num = za * math.sqrt(p0 * (1 - p0)) + zb * math.sqrt(p1 * (1 - p1))
    return (num / (p1 - p0)) ** 2


def panel_size(pd: float, *, method: str, alpha: float = 0.05, beta: float = 0.20,
               definition: str = "stable") -> PanelSizeResult:
    """Fewest panelists meeting both risks, by the exact binomial.

    Parameters
    ----------
    pd : float
        Proportion of discriminators the test must detect, in (0, 1).
    method : str
        A forced-choice method of the registry.
    alpha : float
        Risk of a false difference.
    beta : float
        Risk of missing a difference of ``pd`` (power ``1 - beta``).
    definition : {"stable", "first"}
        Which n to report (see Notes). Default "stable".

    Returns
    -------
    PanelSizeResult
        ``n``, its critical count and exact power, and both ``n_first`` and
        ``n_stable``.

    Notes
    -----
    Power at n is ``P(X >= c(n) | p1)``, ``p1 = p0 + pd (1 - p0)``, ``c(n)`` the exact
    critical value (ISO 4120, ASTM E1885). Exact power is a saw-tooth in n: it can reach
    ``1 - beta`` at some n and fall below it at n + 1. ``"first"`` reports the first n
    that reaches it; ``"stable"`` (the default here) the first n from which all larger
    n keep it, so that a few extra panelists never lose power. The search runs to
    ``checked_up_to``, at least four times the normal-approximation size and twice the
    answer, where the saw-tooth's amplitude is small. Which definition a printed annex
    table follows is not asserted here; the tests compare both with brute force.

    References
    ----------
    ISO 4120:2021 annex A; ASTM E1885-04; Ennis, D. M. (1993). J. Sensory Stud. 8:353-370.
    """
    spec = _forced_choice(method)
    pd = _prob(pd, "pd")
    alpha = _prob(alpha, "alpha")
    beta = _prob(beta, "beta")
    if definition not in DEFINITIONS:
        raise TrialsError(f"definition must be 'stable' or 'first', got {definition!r}")
    p0 = float(spec.guess)
    p1 = p0 + pd * (1.0 - p0)
    target = 1.0 - beta
    limit = int(max(60, 4 * _normal_size(p0, p1, alpha, beta, spec.sides)))
    while True:
        if limit > _N_LIMIT:
            raise TrialsError(f"pd {pd!r} needs more than {_N_LIMIT} panelists at these risks")
        ns = np.arange(1, limit + 1)
        crit, pw = _power_array(ns, alpha, p0, p1, spec.sides)
        ok = pw >= target - 1e-12
        if ok.any():
            first = int(np.argmax(ok))
            bad = np.flatnonzero(~ok)
            stable = int(bad[-1] + 1) if bad.size else 0
            if stable < limit // 2:
                break
        limit *= 2
    idx = stable if definition == "stable" else first
    return PanelSizeResult(
        method=method, pd=pd, alpha=alpha, beta=beta, n=int(ns[idx]),
        critical=int(crit[idx]), power=float(pw[idx]), definition=definition,
        n_first=int(ns[first]), n_stable=int(ns[stable]), checked_up_to=limit,
        note=("n is the first size from which every larger size keeps the power"
              if definition == "stable" else "n is the first size that reaches the power"),
    )


@dataclass(frozen=True, slots=True)
class PanelistsNeeded(Record):
    """For a test under way: how many more panelists the plan needs.

    ``more`` = ``planned - done`` (0 when the plan is met). With ``correct`` given,
    ``correct_needed`` is how many of the remaining answers must be correct to reach the
    critical count at the planned size, and ``reachable`` whether that is still possible.
    """

    method: str
    done: int
    planned: int
    more: int
    critical: int
    correct: int | None
    correct_needed: int | None
    reachable: bool | None
    definition: str


def panelists_needed(done: int, *, method: str, pd: float, alpha: float = 0.05,
                     beta: float = 0.20, correct: int | None = None,
                     definition: str = "stable") -> PanelistsNeeded:
    """How many more panelists a test under way needs to meet its planned risks.

    Parameters
    ----------
    done : int
        Panelists who have answered so far (>= 0).
    method, pd, alpha, beta, definition
        As for :func:`panel_size`.
    correct : int, optional
        Correct answers so far (at most ``done``).

    Returns
    -------
    PanelistsNeeded

    Notes
    -----
    The plan is :func:`panel_size`; where ``done`` already exceeds it, the critical
    count is that of ``done`` panelists (exact binomial, ISO 4120). The test keeps its
    risks only if the final size is fixed in advance; looking at the answers and
    stopping early changes alpha (common practice: decide at the planned size).

    References
    ----------
    ISO 4120:2021; ASTM E1885-04.
    """
    done = _count(done, "done")
    plan = panel_size(pd, method=method, alpha=alpha, beta=beta, definition=definition)
    total = max(plan.n, done)
    crit = critical_value(total, method=method, alpha=alpha).critical
    crit = total + 1 if crit is None else crit
    needed = reachable = None
    if correct is not None:
        correct = _count(correct, "correct")
        if correct > done:
            raise TrialsError(f"correct ({correct!r}) cannot exceed done ({done!r})")
        needed = max(0, crit - correct)
        reachable = needed <= total - done
    return PanelistsNeeded(method=method, done=done, planned=plan.n, more=total - done,
                           critical=crit, correct=correct, correct_needed=needed,
                           reachable=reachable, definition=definition)


# ---------------------------------------------------------------- rating trials

DESIGNS = ("blocked", "monadic")


@dataclass(frozen=True, slots=True)
class RatingPower(Record):
    """Power of the F test of samples in a rating trial with ``n`` panelists.

    ``design`` "blocked": every panelist rates every sample once (randomized complete
    block, panelists as blocks); "monadic": each panelist rates one sample, ``n`` per
    sample. ``effect_size`` is Cohen's f, ``noncentrality`` the lambda of the
    noncentral F, ``f_critical`` the F that the test must pass.
    """

    design: str
    samples: int
    n: int
    alpha: float
    effect_size: float
    noncentrality: float
    df_num: int
    df_den: int
    f_critical: float
    power: float
    method: str


def _anova_df(n: int, samples: int, design: str) -> tuple[int, int, int]:
    """(df_num, df_den, total ratings) of the samples' F test."""
    if design == "blocked":
        return samples - 1, (samples - 1) * (n - 1), n * samples
    return samples - 1, samples * (n - 1), n * samples


def _check_design(samples: int, design: str) -> int:
    if design not in DESIGNS:
        raise TrialsError(f"design must be 'blocked' or 'monadic', got {design!r}")
    return _count(samples, "samples", low=2)


_ANOVA_METHOD = {
    "blocked": ("noncentral F of the randomized complete block ANOVA (panelists as blocks), "
                "lambda = f^2 n k (Cohen 1988, ch. 8)"),
    "monadic": "noncentral F of the one-way ANOVA, lambda = f^2 n k (Cohen 1988, ch. 8)",
}


def anova_power(effect_size: float, n: int, *, samples: int, alpha: float = 0.05,
                design: str = "blocked") -> RatingPower:
    """Power of the ANOVA F test of ``samples`` means for Cohen's effect size f.

    Parameters
    ----------
    effect_size : float
        Cohen's f: the standard deviation of the true sample means divided by the error
        standard deviation (> 0).
    n : int
        Panelists (blocked: each rates every sample; monadic: per sample).
    samples : int
        Samples compared, k >= 2.
    alpha : float
        Risk of the F test.
    design : {"blocked", "monadic"}

    Returns
    -------
    RatingPower

    Notes
    -----
    Under the alternative ``F`` follows the noncentral F distribution with
    ``lambda = f^2 N`` (``N = n k`` ratings) and ``(k - 1, df_den)`` degrees of freedom;
    power ``= P(F' > F_{1-alpha})`` (``scipy.stats.ncf``). ``df_den`` is
    ``(k - 1)(n - 1)`` for the randomized complete block design (panelists as fixed
    blocks; the panelist effect leaves the error) and ``k (n - 1)`` for the one-way
    (monadic) design (Cohen 1988, ch. 8; Montgomery, Design and Analysis of
    Experiments, ch. 4). Assumes normal errors with a common variance and, for the
    blocked design, additive panelist effects (no sample x panelist interaction beyond
    the error).

    References
    ----------
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed.
    Erlbaum, ch. 8. Cohen, J. (1992). A power primer. Psychol. Bull. 112:155-159.
    """
    samples = _check_design(samples, design)
    n = _count(n, "n", low=2)
    alpha = _prob(alpha, "alpha")
    f = float(effect_size)
    if not math.isfinite(f) or f <= 0:
        raise TrialsError(f"effect_size must be a positive number, got {effect_size!r}")
    d1, d2, total = _anova_df(n, samples, design)
    lam = f * f * total
    crit = float(stats.f.isf(alpha, d1, d2))
    pw = float(stats.ncf.sf(crit, d1, d2, lam))
    return RatingPower(design=design, samples=samples, n=n, alpha=alpha, effect_size=f,
                       noncentrality=lam, df_num=d1, df_den=d2, f_critical=crit, power=pw,
                       method=_ANOVA_METHOD[design])


def rating_effect_size(delta: float, sd: float, *, samples: int) -> float:
    """Cohen's f of the least favourable configuration: two of ``samples`` means
    ``delta`` apart and the others half way, ``f = delta / (sd sqrt(2 k))``.

    Of all configurations whose largest difference is ``delta``, this one has the
    smallest spread of means, so a panel sized for it detects any such difference
    with at least the stated power (Cohen 1988, section 8.2, pattern 1)."""
    samples = _count(samples, "samples", low=2)
    delta, sd = float(delta), float(sd)
    if not (math.isfinite(delta) and delta > 0):
        raise TrialsError(f"delta must be a positive number of scale points, got {delta!r}")
    if not (math.isfinite(sd) and sd > 0):
        raise TrialsError(f"sd must be a positive number of scale points, got {sd!r}")
    return delta / (sd * math.sqrt(2.0 * samples))


@dataclass(frozen=True, slots=True)
class RatingPanelSize(Record):
    """How many panelists a rating trial needs to detect a difference of ``delta``.

    ``n`` is the fewest panelists (per sample for a monadic design) whose F test of
    samples reaches power ``1 - beta`` at ``alpha`` when two samples differ by
    ``delta`` scale points and the error standard deviation is ``sd``. The power of the
    F test grows with n, so the first n that reaches it is also stable.
    """

    design: str
    samples: int
    delta: float
    sd: float
    alpha: float
    beta: float
    n: int
    power: float
    effect_size: float
    noncentrality: float
    df_num: int
    df_den: int
    sd_source: str
    method: str
    note: str


def rating_panel_size(delta: float, *, sd: float, samples: int, alpha: float = 0.05,
                      beta: float = 0.20, design: str = "blocked",
                      sd_source: str = "given") -> RatingPanelSize:
    """Fewest panelists for a rating trial to detect the smallest difference that matters.

    Parameters
    ----------
    delta : float
        Smallest difference of two sample means that matters, in scale points.
    sd : float
        Error standard deviation of one rating, panelist effects removed (e.g. from
        :func:`rating_error_sd` of an earlier trial's ANOVA).
    samples : int
        Samples in the trial, k >= 2.
    alpha, beta : float
        Risks: of a false difference, and of missing a difference of ``delta``.
    design : {"blocked", "monadic"}
        Every panelist rates every sample (default), or one sample each.
    sd_source : str
        Where ``sd`` came from, echoed in the result.

    Returns
    -------
    RatingPanelSize

    Notes
    -----
    Cohen's f of the least favourable configuration (:func:`rating_effect_size`), then
    the smallest n with :func:`anova_power` ``>= 1 - beta`` (noncentral F). For two
    samples in the blocked design this is the two-sided paired t test with effect size
    ``delta / (sd sqrt 2)`` (the F with 1 df is t squared). Searches n = 2 .. 10,000.

    References
    ----------
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed.
    Erlbaum, ch. 8.
    """
    samples = _check_design(samples, design)
    alpha = _prob(alpha, "alpha")
    beta = _prob(beta, "beta")
    f = rating_effect_size(delta, sd, samples=samples)
    target = 1.0 - beta
    top = 16
    while True:
        ns = np.arange(2, top + 1)
        d1, d2, total = _anova_df(ns, samples, design)  # type: ignore[arg-type]
        crit = stats.f.isf(alpha, d1, d2)
        pw = stats.ncf.sf(crit, d1, d2, f * f * total)
        ok = pw >= target - 1e-12
        if ok.any():
            i = int(np.argmax(ok))
            break
        if top >= _N_LIMIT:
            raise TrialsError(f"a difference of {delta!r} with sd {sd!r} needs more than "
                              f"{_N_LIMIT} panelists at these risks")
        top = min(top * 4, _N_LIMIT)
    res = anova_power(f, int(ns[i]), samples=samples, alpha=alpha, design=design)
    who = "panelists" if design == "blocked" else "panelists per sample"
    return RatingPanelSize(
        design=design, samples=samples, delta=float(delta), sd=float(sd), alpha=alpha,
        beta=beta, n=res.n, power=res.power, effect_size=f, noncentrality=res.noncentrality,
        df_num=res.df_num, df_den=res.df_den, sd_source=sd_source, method=res.method,
        note=(f"n counts {who}; least favourable configuration: two samples delta apart, "
              "the others half way (any other configuration with that difference has "
              "at least this power)"),
    )


@dataclass(frozen=True, slots=True)
class RatingErrorSD(Record):
    """The error standard deviation of one rating, read from an ANOVA of ratings."""

    sd: float
    df: float
    source: str


def rating_error_sd(anova) -> RatingErrorSD:
    """The panel's own error from an earlier trial's blocked ANOVA
    (:class:`trials.stats.ratings.RatingAnova`), for :func:`rating_panel_size`.

    Notes
    -----
    Without replicates, ``sd = sqrt(MS_error)`` of the randomized block ANOVA. With
    ``r`` replicates the sample effect is tested against the interaction, whose mean
    square estimates ``sigma_e^2 + r sigma_sp^2``; one rating per panelist and sample
    then has variance ``sigma_sp^2 + sigma_e^2 = (MS_sp + (r - 1) MS_error) / r``
    (expected mean squares of the mixed model; Montgomery, Design and Analysis of
    Experiments, ch. 13). Its df is that of the term (Satterthwaite not applied).
    """
    err = anova.term("error")
    r = anova.replicates
    try:
        inter = anova.term("sample:panelist")
    except KeyError:
        inter = None
    if inter is not None and r and r > 1:
        var = (inter.ms + (r - 1) * err.ms) / r
        return RatingErrorSD(math.sqrt(max(var, 0.0)), float(inter.df),
                             f"(MS sample:panelist + {r - 1:g} x MS error) / {r:g} "
                             "of the earlier trial")
    return RatingErrorSD(math.sqrt(max(err.ms, 0.0)), float(err.df),
                         "residual MS of the earlier trial's blocked ANOVA")
