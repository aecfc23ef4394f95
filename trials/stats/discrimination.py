"""Exact binomial statistics of the forced-choice tests: critical values, difference, similarity.

Every forced-choice method of the registry (:mod:`trials.methods`) has a guessing
probability ``p0`` (its ``guess``) and a number of ``sides``: 1 for the discrimination
methods (triangle, duo-trio, 2-AFC, 3-AFC, tetrad; only more correct answers than chance
count as evidence) and 2 for paired preference (either sample may be preferred).

Under the guessing model (ISO 4120, ISO 10399, ISO 5495, ASTM E1885) a proportion ``pd``
of the panel perceives the difference and answers correctly; the others guess, so the
probability of a correct answer is ``pc = p0 + pd (1 - p0)``. The number of correct
answers of ``n`` independent panelists is binomial(n, pc).

- Difference test: H0 ``pc = p0`` against ``pc > p0``; exact one-sided binomial p-value
  ``P(X >= x | p0)`` (two-sided ``min(1, 2 P(X >= x | 1/2))`` for paired preference,
  ``x`` the count of the more-chosen sample).
- Similarity test: H0 ``pd >= pd_max`` against ``pd < pd_max``; similarity is concluded
  at risk beta when ``P(X <= x | p_max) <= beta`` (ISO 4120:2021 clause on similarity;
  ASTM E1885-04).
- Planning (power and panel size): in :mod:`trials.stats.power`.

All tail probabilities are exact (``scipy.stats.binom`` and the regularised incomplete
beta function behind it); the vectorised critical values start from a normal quantile
and are corrected until the defining inequality holds on both neighbours.

References
----------
ISO 4120:2021 Sensory analysis - Methodology - Triangle test.
ISO 10399:2017 Sensory analysis - Methodology - Duo-trio test.
ISO 5495:2005 Sensory analysis - Methodology - Paired comparison test.
ASTM E1885-04 Standard Test Method for Sensory Analysis - Triangle Test.
Roessler, E. B., Pangborn, R. M., Sidel, J. L. and Stone, H. (1978). Expanded
statistical tables for estimating significance in paired-preference, paired-difference,
duo-trio and triangle tests. J. Food Sci. 43:940-943.
Meilgaard, M., Civille, G. V. and Carr, B. T. Sensory Evaluation Techniques, CRC Press
(chapter 6 and the statistical tables).
Clopper, C. J. and Pearson, E. S. (1934). The use of confidence or fiducial limits
illustrated in the case of the binomial. Biometrika 26:404-413.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from numbers import Integral, Real
from typing import Protocol, cast

import numpy as np
from scipy import special, stats

from trials.errors import TrialsError
from trials.methods import get_method
from trials.model import Record
from trials.stats import thurstonian

CI_METHOD = "Clopper-Pearson exact interval for pc, transformed to pd and d'"
DEFINITIONS = ("stable", "first")
_N_LIMIT = 100_000

# ------------------------------------------------------------------ input checks


class _ForcedChoice(Protocol):
    """What this module reads of a forced-choice method's spec: its guess is known."""

    @property
    def name(self) -> str: ...
    @property
    def guess(self) -> float: ...
    @property
    def sides(self) -> int: ...
    @property
    def has_dprime(self) -> bool: ...


def _forced_choice(method: str) -> _ForcedChoice:
    spec = get_method(method)
    if not spec.is_forced_choice or spec.guess is None:
        raise TrialsError(f"method {method!r} is not a forced-choice test")
    return cast(_ForcedChoice, spec)  # guess checked above: a float, not None


def _count(value, name: str, *, low: int = 0) -> int:
    if isinstance(value, bool) or not isinstance(value, Integral):
        if isinstance(value, Real) and float(value).is_integer():
            value = int(float(value))
        else:
            raise TrialsError(f"{name} must be a whole number, got {value!r}")
    if value < low:
        raise TrialsError(f"{name} must be at least {low}, got {value!r}")
    return int(value)


def _prob(value, name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, Real) or not (0.0 < float(value) < 1.0):
        raise TrialsError(f"{name} must be a number strictly between 0 and 1, got {value!r}")
    return float(value)


def _counts(correct, n) -> tuple[int, int]:
    n = _count(n, "n", low=1)
    correct = _count(correct, "correct")
    if correct > n:
        raise TrialsError(f"correct ({correct!r}) cannot exceed n ({n!r})")
    return correct, n


def _preference_count(correct: int, n: int, spec: _ForcedChoice) -> None:
    if spec.sides == 2 and correct < n - correct:
        raise TrialsError(
            f"for {spec.name} give the count of the more-chosen sample: got {correct!r} "
            f"of {n!r}, the other sample has {n - correct}"
        )


# ------------------------------------------------------------------ the binomial core


# relative tolerance under which a tail probability equals alpha: far below any risk a
# trial states (alpha >= 1e-6, trials.limits) and above the rounding of a summed tail
TIE_TOLERANCE = 1e-9


def _critical_array(n: np.ndarray, alpha: np.ndarray, p0: float, sides: int) -> np.ndarray:
    """Fewest correct answers with tail probability <= alpha / sides; n + 1 where none.

    A Cornish-Fisher normal quantile gives a candidate ``c`` for every cell; one call of
    the regularised incomplete beta function gives the exact tail ``T = P(X >= c)``
    (``I_p0(c, n - c + 1)``, the function behind ``scipy.stats.binom.sf``); then the
    correction steps walk ``c`` up while ``T > a`` and down while
    ``T + P(X = c - 1) <= a``, updating ``T`` by exact point probabilities, until
    ``P(X >= c) <= a < P(X >= c - 1)`` holds in every cell. (``binom.isf`` gives the same
    values but took about 16 ms per 5000 cells here, three times the whole of this.)

    A tail equal to ``a`` counts as reaching it (``<=``): ``a`` is widened by a relative
    ``TIE_TOLERANCE`` so that rounding in the summed tail cannot turn an exact tie (duo-trio
    n = 10, alpha = 11/1024) into a miss while the p-value of the same count says it
    is significant.
    """
    n, a = np.broadcast_arrays(np.asarray(n, dtype=np.int64),
                               np.asarray(alpha, dtype=float) / sides)
    a = a * (1.0 + TIE_TOLERANCE)
    shape = n.shape
    n, a = n.ravel().astype(np.int64), a.ravel()
    q0 = 1.0 - p0
    lp, lq = math.log(p0), math.log(q0)
    lg = special.gammaln(np.arange(int(n.max(initial=0)) + 2, dtype=float) + 1.0)  # log k!

    def pmf(k, m):
        return np.exp(lg[m] - lg[k] - lg[m - k] + k * lp + (m - k) * lq)

    sd = np.sqrt(n * p0 * q0)
    z = special.ndtri(1.0 - a)
    zcf = z + (z * z - 1.0) * (q0 - p0) / (6.0 * sd)
    c = np.clip(np.ceil(n * p0 + sd * zcf + 0.5), 1, n + 1).astype(np.int64)
    inner = c <= n
    tail = np.zeros(n.shape)
    tail[inner] = special.betainc(c[inner], n[inner] - c[inner] + 1, p0)
    up = tail > a  # c too low: move up
    while up.any():
        idx = np.flatnonzero(up)
        tail[idx] -= pmf(c[idx], n[idx])
        c[idx] += 1
        up[idx] = (tail[idx] > a[idx]) & (c[idx] <= n[idx])
    tail = np.maximum(tail, 0.0)
    down = c > 1
    down[down] = tail[down] + pmf(c[down] - 1, n[down]) <= a[down]
    while down.any():
        idx = np.flatnonzero(down)
        c[idx] -= 1
        tail[idx] += pmf(c[idx], n[idx])
        nxt = c[idx] > 1
        ok = np.zeros(idx.shape, dtype=bool)
        ok[nxt] = tail[idx[nxt]] + pmf(c[idx[nxt]] - 1, n[idx[nxt]]) <= a[idx[nxt]]
        down[idx] = ok
    return c.reshape(shape)


def _p_value(correct: int, n: int, p0: float, sides: int) -> float:
    tail = float(stats.binom.sf(correct - 1, n, p0))
    return min(1.0, sides * tail) if sides == 2 else tail


def _pd_from_pc(pc: float, p0: float) -> float:
    return max(0.0, (pc - p0) / (1.0 - p0))


def _clopper_pearson(correct: int, n: int, level: float) -> tuple[float, float]:
    tail = (1.0 - level) / 2.0
    low = 0.0 if correct == 0 else float(stats.beta.ppf(tail, correct, n - correct + 1))
    high = 1.0 if correct == n else float(stats.beta.ppf(1.0 - tail, correct + 1, n - correct))
    return low, high


def _upper_limit(correct: int, n: int, confidence: float) -> float:
    """One-sided upper Clopper-Pearson limit of pc at ``confidence``."""
    if correct == n:
        return 1.0
    return float(stats.beta.ppf(confidence, correct + 1, n - correct))


# ------------------------------------------------------------------ critical values


@dataclass(frozen=True, slots=True)
class CriticalResult(Record):
    """The fewest correct answers that conclude a difference (None: no count can).

    ``p_at_critical`` is the exact p-value of that count (None with ``critical``).
    """

    method: str
    n: int
    alpha: float
    critical: int | None
    sides: int
    guess: float
    p_at_critical: float | None


def critical_value(n: int, *, method: str, alpha: float = 0.05) -> CriticalResult:
    """Minimum number of correct answers for significance at ``alpha`` (exact binomial).

    Parameters
    ----------
    n : int
        Number of panelists (one answer each), >= 1.
    method : str
        A forced-choice method of the registry.
    alpha : float
        Risk of concluding a difference when there is none, in (0, 1).

    Returns
    -------
    CriticalResult
        ``critical``: the smallest x with ``P(X >= x | p0) <= alpha`` (one-sided), or for
        paired preference the smallest count of the more-chosen sample with
        ``2 P(X >= x | 1/2) <= alpha`` (two-sided); None where even x = n does not reach
        alpha.

    Notes
    -----
    These are the values of the published critical-value tables (ISO 4120 table A.1,
    ISO 10399, ISO 5495, ASTM E1885, Roessler et al. 1978), which are exact binomial
    tails. Assumes independent answers with a common guessing probability.

    References
    ----------
    Roessler, E. B., Pangborn, R. M., Sidel, J. L. and Stone, H. (1978). J. Food Sci.
    43:940-943.
    """
    spec = _forced_choice(method)
    n = _count(n, "n", low=1)
    alpha = _prob(alpha, "alpha")
    c = int(_critical_array(np.array(n), np.array(alpha), spec.guess, spec.sides))
    if c > n:
        return CriticalResult(method, n, alpha, None, spec.sides, spec.guess, None)
    return CriticalResult(method, n, alpha, c, spec.sides, spec.guess,
                          _p_value(c, n, spec.guess, spec.sides))


@dataclass(frozen=True, slots=True)
class CriticalTable(Record):
    """Critical values for several panel sizes and risks: ``critical[i][j]`` is for
    ``ns[i]`` and ``alphas[j]`` (None: no count reaches that alpha)."""

    method: str
    ns: tuple[int, ...]
    alphas: tuple[float, ...]
    critical: tuple[tuple[int | None, ...], ...]

    def to_frame(self):
        """A DataFrame indexed by ``n`` with one column per alpha (nullable integers)."""
        import pandas as pd

        frame = pd.DataFrame(list(self.critical), index=pd.Index(self.ns, name="n"),
                             columns=[str(a) for a in self.alphas])
        return frame.astype("Int64")


def critical_array(ns: Sequence[int], alphas: Sequence[float], *, method: str) -> np.ndarray:
    """The vectorised core of :func:`critical_table`: an int array (len(ns), len(alphas))
    with ``n + 1`` where no count reaches alpha."""
    spec = _forced_choice(method)
    raw = np.asarray(ns)
    if raw.ndim != 1 or raw.size == 0 or raw.dtype.kind not in "iuf" or not np.all(
            np.mod(raw, 1) == 0) or raw.min() < 1:
        bad = [n for n in np.atleast_1d(raw).tolist()
               if isinstance(n, bool) or not isinstance(n, (int, float)) or n < 1 or n % 1]
        raise TrialsError(f"ns must be whole numbers >= 1, got {bad[:5] or ns!r}")
    ns_arr = raw.astype(np.int64)
    al = np.asarray([_prob(a, "alpha") for a in alphas], dtype=float)
    return _critical_array(ns_arr[:, None], al[None, :], spec.guess, spec.sides)


def critical_table(ns: Iterable[int] = range(5, 201),
                   alphas: Iterable[float] = (0.20, 0.10, 0.05, 0.01, 0.001), *,
                   method: str) -> CriticalTable:
    """Table of critical values (exact binomial) for panel sizes ``ns`` and risks ``alphas``.

    Parameters
    ----------
    ns : iterable of int
        Panel sizes (default 5..200, as printed by the app).
    alphas : iterable of float
        Risks (default 0.20, 0.10, 0.05, 0.01, 0.001, the columns of ISO 4120 table A.1).
    method : str
        A forced-choice method of the registry.

    Returns
    -------
    CriticalTable
        ``critical[i][j]`` as :func:`critical_value` gives for ``ns[i]``, ``alphas[j]``.

    Notes
    -----
    Vectorised: a Cornish-Fisher normal quantile gives the candidate for every cell at
    once, one incomplete-beta call its exact tail, and correction steps move each cell
    until ``P(X >= c) <= alpha < P(X >= c - 1)`` (see ``_critical_array``). Same definition
    and references as :func:`critical_value`.

    References
    ----------
    ISO 4120:2021, annex A; Roessler, E. B., Pangborn, R. M., Sidel, J. L. and Stone, H.
    (1978). J. Food Sci. 43:940-943.
    """
    ns, alphas = list(ns), tuple(alphas)
    arr = critical_array(ns, alphas, method=method)
    ns = tuple(int(n) for n in ns)
    alphas = tuple(float(a) for a in alphas)
    limit = np.asarray(ns)[:, None]
    rows = np.where(arr > limit, -1, arr).tolist()
    table = tuple(tuple(None if v < 0 else v for v in row) for row in rows)
    return CriticalTable(method=method, ns=ns, alphas=alphas, critical=table)


# ------------------------------------------------------------------ difference test


@dataclass(frozen=True, slots=True)
class DifferenceResult(Record):
    """The exact test of a difference, with estimates of pc, pd and d'.

    ``pd_ci`` and ``dprime_ci`` are two-sided at ``level`` from the Clopper-Pearson
    interval of ``pc``; ``dprime_se`` is the delta-method standard error
    (``sqrt(B / n)``; None where the slope of the psychometric function is 0, i.e. at
    d' = 0 for triangle, duo-trio and tetrad, or where d' is capped). ``dprime`` and
    ``dprime_ci`` are None for a method with no Thurstonian model in the registry
    (two-out-of-five: the proportion of discriminators ``pd`` is the estimate).
    """

    method: str
    n: int
    correct: int
    alpha: float
    p_value: float
    significant: bool
    critical: int | None
    pc: float
    pd: float
    pd_ci: tuple[float, float]
    dprime: float | None
    dprime_ci: tuple[float, float] | None
    ci_method: str
    level: float
    guess: float
    sides: int
    dprime_se: float | None
    note: str


def difference_test(correct: int, n: int, *, method: str, alpha: float = 0.05,
                    level: float = 0.95) -> DifferenceResult:
    """Exact binomial test of a difference for a forced-choice method.

    Parameters
    ----------
    correct : int
        Correct answers (paired preference: the count of the more-chosen sample).
    n : int
        Panelists, one answer each.
    method : str
        A forced-choice method of the registry.
    alpha : float
        Risk of a false difference, in (0, 1).
    level : float
        Confidence level of the two-sided intervals, in (0, 1).

    Returns
    -------
    DifferenceResult
        ``p_value`` exact (one-sided ``P(X >= x | p0)``; paired preference two-sided
        ``min(1, 2 P(X >= x | 1/2))``), ``significant``: ``correct >= critical``, which is
        ``p_value <= alpha`` with an exact tie counted as reaching alpha
        (``TIE_TOLERANCE``), the critical count, ``pc = x / n``,
        ``pd = max(0, (pc - p0) / (1 - p0))``, d' from the Thurstonian model of the
        method, and their intervals.

    Notes
    -----
    Guessing model of ISO 4120 / ASTM E1885 (pd floored at 0 as those standards do).
    Intervals: the exact interval of pc of Clopper and Pearson (1934), mapped through the monotone
    transforms to pd and d' (floored at 0 below chance; d' capped at
    ``thurstonian.DPRIME_MAX``). d' standard error by the delta method with the B-value
    of Bi, Ennis and O'Mahony (1997). Paired preference: pd and d' are computed on the
    2-AFC model for the share of the more-chosen sample (pd then reads as the proportion
    of panelists with a preference; d' as a Thurstonian preference distance); this is a
    modelling choice, stated in ``note``. Assumes independent answers, one per panelist;
    for replicated answers see :mod:`trials.stats.replicated`.

    References
    ----------
    ISO 4120:2021; ASTM E1885-04; Clopper, C. J. and Pearson, E. S. (1934). Biometrika
    26:404-413; Bi, J., Ennis, D. M. and O'Mahony, M. (1997). J. Sensory Stud. 12:87-104.
    """
    spec = _forced_choice(method)
    correct, n = _counts(correct, n)
    alpha = _prob(alpha, "alpha")
    level = _prob(level, "level")
    _preference_count(correct, n, spec)
    p0 = float(spec.guess)
    p = _p_value(correct, n, p0, spec.sides)
    crit = critical_value(n, method=method, alpha=alpha).critical
    pc = correct / n
    lo, hi = _clopper_pearson(correct, n, level)
    notes = []
    if spec.sides == 2:
        notes.append("paired preference: two-sided p; pd and d' from the 2-AFC model for "
                     "the share of the more-chosen sample")
    d: float | None = None
    d_ci: tuple[float, float] | None = None
    se: float | None = None
    if spec.has_dprime:
        d = thurstonian.dprime_from_pc(pc, method=method)
        d_lo = thurstonian.dprime_from_pc(lo, method=method)
        d_hi = thurstonian.dprime_from_pc(hi, method=method)
        d_ci = (d_lo, d_hi)
        b = thurstonian.b_value(d, method=method) if d > 0 else None
        se = math.sqrt(b / n) if b is not None else None
        if pc <= p0:
            notes.append("pc at or below chance: pd and d' set to 0")
        if d >= thurstonian.DPRIME_MAX or d_hi >= thurstonian.DPRIME_MAX:
            notes.append(f"d' capped at {thurstonian.DPRIME_MAX} (a lower bound where pc = 1)")
        if se is None:
            notes.append("no delta-method standard error at d' = 0 or at the cap")
    else:
        if pc <= p0:
            notes.append("pc at or below chance: pd set to 0")
        notes.append(f"no Thurstonian model for {method}: the proportion of "
                     "discriminators pd is the estimate, no d'")
    return DifferenceResult(
        method=method, n=n, correct=correct, alpha=alpha, p_value=p,
        significant=bool(crit is not None and correct >= crit), critical=crit, pc=pc,
        pd=_pd_from_pc(pc, p0),
        pd_ci=(_pd_from_pc(lo, p0), _pd_from_pc(hi, p0)), dprime=d, dprime_ci=d_ci,
        ci_method=CI_METHOD, level=level, guess=p0, sides=spec.sides, dprime_se=se,
        note="; ".join(notes),
    )


@dataclass(frozen=True, slots=True)
class PreferenceCounts(Record):
    """Paired-preference counts after handling "no preference" answers.

    ``first`` and ``second`` are the counts of the two samples after the rule; ``n`` is
    their sum, ``more_chosen`` the larger of the two (what :func:`difference_test`
    takes as ``correct``), ``dropped`` the answers left out.
    """

    first: int
    second: int
    n: int
    more_chosen: int
    dropped: int
    rule: str
    note: str


def no_preference_counts(first: int, second: int, no_preference: int = 0, *,
                         rule: str = "split") -> PreferenceCounts:
    """Fold "no preference" answers of a paired-preference test into whole counts.

    Parameters
    ----------
    first, second : int
        Panelists who preferred the first and the second sample.
    no_preference : int
        Panelists who answered "no preference".
    rule : {"split", "drop"}
        ``"split"``: share them equally between the two samples (an odd one left over
        is dropped so that counts stay whole). ``"drop"``: leave them out (n shrinks).

    Returns
    -------
    PreferenceCounts

    Notes
    -----
    Both rules are common practice for a paired preference test with a "no preference"
    option. Splitting equally treats those panelists as evenly divided, which pulls
    the result toward no difference (conservative); dropping keeps only the stated
    preferences but reduces n. The binomial test itself assumes a forced choice.

    References
    ----------
    ISO 5495:2005 (paired comparison); common practice for the handling of ties.
    """
    first = _count(first, "first")
    second = _count(second, "second")
    no_preference = _count(no_preference, "no_preference")
    if rule not in ("split", "drop"):
        raise TrialsError(f"rule must be 'split' or 'drop', got {rule!r}")
    if rule == "split":
        half, odd = divmod(no_preference, 2)
        a, b, dropped = first + half, second + half, odd
        note = (f"{no_preference} 'no preference' answers split equally"
                + ("; the odd one left out" if odd else ""))
    else:
        a, b, dropped = first, second, no_preference
        note = f"{no_preference} 'no preference' answers left out"
    if a + b == 0:
        raise TrialsError("no preference answers remain after the rule "
                          f"(first={first!r}, second={second!r}, no_preference={no_preference!r})")
    return PreferenceCounts(first=a, second=b, n=a + b, more_chosen=max(a, b),
                            dropped=dropped, rule=rule, note=note)


# ------------------------------------------------------------------ similarity test


@dataclass(frozen=True, slots=True)
class SimilarityResult(Record):
    """The similarity test for a largest acceptable proportion of discriminators.

    ``p_value`` is ``P(X <= correct | p_max)``; ``max_correct`` None means no count of
    this panel size can conclude similarity at this beta.
    """

    method: str
    n: int
    correct: int
    pd: float
    beta: float
    similar: bool
    max_correct: int | None
    pd_upper: float
    p_value: float
    p_max: float
    guess: float
    note: str


def similarity_test(correct: int, n: int, *, method: str, pd: float,
                    beta: float = 0.05) -> SimilarityResult:
    """Exact test of similarity: is the proportion of discriminators below ``pd``?

    Parameters
    ----------
    correct : int
        Correct answers (paired preference: the count of the more-chosen sample).
    n : int
        Panelists, one answer each.
    method : str
        A forced-choice method of the registry.
    pd : float
        Largest proportion of discriminators that does not matter, in (0, 1).
    beta : float
        Risk of concluding similarity when ``pd`` discriminators are present.

    Returns
    -------
    SimilarityResult
        ``max_correct``: the largest x with ``P(X <= x | p_max) <= beta``, where
        ``p_max = p0 + pd (1 - p0)``; ``similar = correct <= max_correct``;
        ``pd_upper``: the one-sided upper ``1 - beta`` Clopper-Pearson limit of pc,
        transformed to pd (floored at 0). ``similar`` holds exactly when
        ``pd_upper <= pd``.

    Notes
    -----
    ISO 4120:2021 and ASTM E1885-04 (similarity); ISO 4120 computes the upper limit of
    pd with a normal approximation, this function uses the exact limit, which agrees
    with the exact decision rule. Paired preference: applied to the more-chosen count
    with ``p_max = 1/2 + pd / 2`` (pd: the proportion with a preference); because that
    count is the larger one, the same bound also settles the other side, so this is
    the two one-sided tests procedure of an equivalence test at risk beta per side.

    References
    ----------
    ISO 4120:2021; ASTM E1885-04; Clopper, C. J. and Pearson, E. S. (1934). Biometrika
    26:404-413.
    """
    spec = _forced_choice(method)
    correct, n = _counts(correct, n)
    pd = _prob(pd, "pd")
    beta = _prob(beta, "beta")
    _preference_count(correct, n, spec)
    p0 = float(spec.guess)
    p_max = p0 + pd * (1.0 - p0)
    k = int(stats.binom.ppf(beta, n, p_max))  # smallest k with P(X <= k) >= beta
    while k >= 0 and stats.binom.cdf(k, n, p_max) > beta:
        k -= 1
    while k < n and stats.binom.cdf(k + 1, n, p_max) <= beta:
        k += 1
    max_correct = k if k >= 0 else None
    similar = max_correct is not None and correct <= max_correct
    pd_upper = _pd_from_pc(_upper_limit(correct, n, 1.0 - beta), p0)
    note = "" if max_correct is not None else (
        f"no count of {n} panelists reaches beta {beta}: more panelists are needed")
    if spec.sides == 2:
        note = "; ".join(filter(None, [note, "paired preference: equivalence on the "
                                       "more-chosen share, p_max = 1/2 + pd/2"]))
    return SimilarityResult(
        method=method, n=n, correct=correct, pd=pd, beta=beta, similar=bool(similar),
        max_correct=max_correct, pd_upper=pd_upper,
        p_value=float(stats.binom.cdf(correct, n, p_max)), p_max=p_max, guess=p0, note=note,
    )


# ------------------------------------------------------------------ power and panel size
