"""Rank tests for ranking trials: Friedman (complete blocks), Durbin (incomplete
blocks) and Page (an expected order), with least significant differences of rank sums.

:func:`friedman_test` takes complete blocks only, :func:`durbin_test` incomplete ones
(a balanced incomplete block design, as a rule); :func:`rank_test` picks between them
by the blocks and says in ``test`` which one ran.

Each panelist is a block. The value column may hold ranks (1 = first) or scores: the
values are ranked within each panelist, ascending, ties getting the average rank, so
given ranks come back unchanged and tied ranks are averaged.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.errors import IncompleteBlocksError, TrialsError
from trials.model import Record
from trials.stats.posthoc import _check_alpha, compact_letter_display
from trials.stats.ratings import (
    check_unique,
    numeric_column,
    require_columns,
    sample_panelist_codes,
)


@dataclass(frozen=True, slots=True)
class RankTable(Record):
    """Within-panelist ranks as a panelist x sample array (NaN where not tasted)."""

    samples: tuple[str, ...]
    panelists: tuple[str, ...]
    ranks: tuple[tuple[float, ...], ...]

    def array(self) -> np.ndarray:
        return np.asarray(self.ranks, dtype=float)


def rank_table(
    data: pd.DataFrame,
    *,
    rank: str = "rank",
    sample: str = "sample",
    panelist: str = "panelist",
    low: float | None = None,
    high: float | None = None,
) -> RankTable:
    """Check a tidy ranking table and rank the values within each panelist.

    Raises TrialsError for missing columns, non-numeric values (naming lines, header =
    line 1), values outside ``low..high``, one sample, one panelist, a panelist/sample
    pair given twice, or a panelist who ranked fewer than two samples.
    """
    require_columns(data, [rank, sample, panelist])
    values = numeric_column(data, rank, low=low, high=high)
    s_codes, s_names, p_codes, p_names = sample_panelist_codes(data, sample, panelist)
    t, b = len(s_names), len(p_names)
    check_unique([p_codes, s_codes], [b, t], [panelist, sample])
    table = np.full((b, t), np.nan)
    table[p_codes, s_codes] = values
    ranked = pd.DataFrame(table).rank(axis=1, method="average").to_numpy()
    per = np.isfinite(ranked).sum(axis=1)
    short = [p_names[i] for i in np.flatnonzero(per < 2)]
    if short:
        raise TrialsError(f"panelist(s) {short[:10]!r} ranked fewer than two samples")
    return RankTable(
        samples=tuple(s_names),
        panelists=tuple(p_names),
        ranks=tuple(tuple(float(x) for x in row) for row in ranked),
    )


@dataclass(frozen=True, slots=True)
class RankPair(Record):
    """Two samples' rank sums compared: ``difference = first - second``.

    ``lsd`` is this pair's least significant difference (the normal form), ``lsd_t``
    the t form; ``exceeds_lsd`` says whether ``|difference| > lsd``; ``different`` is the
    protected decision: the difference exceeds ``lsd`` and the overall test was
    significant at alpha (Fisher's protected LSD as Conover 1999 applies it to ranks).
    """

    first: str
    second: str
    difference: float
    lsd: float
    lsd_t: float
    different: bool
    exceeds_lsd: bool = False


# test -> (name, the published source in the package's one form)
_TESTS = {
    "friedman": ("Friedman", "Friedman (1937)"),
    "durbin": ("Durbin", "Durbin (1951)"),
}


@dataclass(frozen=True, slots=True)
class RankTestResult(Record):
    """Friedman's (complete blocks) or Durbin's (incomplete blocks) rank test.

    ``test`` is ``"friedman"`` or ``"durbin"``: which of the two ran; :meth:`name` and
    :meth:`reference` give its name and published source for texts.

    ``statistic`` is the chi-square form with the tie correction on ``df`` degrees of
    freedom, ``p_value`` its upper tail. ``f_statistic``/``f_p_value`` give the F form
    (Conover 1999). ``rank_sums``: sample -> sum of ranks (ascending: rank 1 = lowest value);
    ``lsd`` the least significant difference of two rank sums at alpha in the normal
    (z) form of ISO 8587, ``lsd_t`` Conover's t form; for incomplete blocks both are
    averages over pairs and ``pairs`` gives each. ``groups``: samples sharing a letter
    do not differ by ``lsd`` (smallest rank sum first).

    The pairwise comparisons are protected: ``form`` (``"chi-square"`` or ``"F"``) names
    the form of the overall test that decides, ``overall_p_value`` its p-value and
    ``overall_significant`` whether it is at most alpha. Only then is a pair
    ``different`` and do the letters separate samples; otherwise every sample shares
    the letter ``a`` (``comparisons`` says which happened).
    """

    test: str
    method: str
    alpha: float
    statistic: float
    df: int
    p_value: float
    f_statistic: float
    f_df: tuple[float, float]
    f_p_value: float
    panelists: int
    samples_per_panelist: int
    rank_sums: dict[str, float]
    mean_ranks: dict[str, float]
    tie_correction: float
    lsd: float
    lsd_method: str
    lsd_t: float
    pairs: tuple[RankPair, ...]
    groups: dict[str, str]
    form: str = "chi-square"
    overall_p_value: float = math.nan
    overall_significant: bool = False
    comparisons: str = ""

    def name(self) -> str:
        """The test's name: ``"Friedman"`` or ``"Durbin"``."""
        return _TESTS[self.test][0]

    def reference(self) -> str:
        """The published source of the test that ran, e.g. ``"Durbin (1951)"``."""
        return _TESTS[self.test][1]


def _complete(tab: RankTable) -> bool:
    return bool(np.isfinite(tab.array()).all())


FORMS = ("chi-square", "F")


def _check_form(form: str) -> str:
    if form not in FORMS:
        raise TrialsError(f"form must be 'chi-square' or 'F', got {form!r}")
    return form


def _rank_core(tab: RankTable, alpha: float, form: str = "chi-square") -> RankTestResult:
    """Friedman's statistic on complete blocks, Durbin's on incomplete ones (one formula);
    pairwise comparisons protected by the overall test in ``form``."""
    form = _check_form(form)
    r = tab.array()
    names = list(tab.samples)
    present = np.isfinite(r)
    b, t = r.shape
    k_per = present.sum(axis=1)
    reps = present.sum(axis=0)
    if len(set(k_per.tolist())) != 1:
        raise TrialsError(
            "panelists ranked different numbers of samples "
            f"({sorted(set(k_per.tolist()))!r}); Friedman and Durbin need equal block sizes"
        )
    if len(set(reps.tolist())) != 1:
        counts = {names[i]: int(reps[i]) for i in range(t)}
        raise TrialsError(
            f"samples were ranked unequally often ({counts!r}); Durbin's test needs each "
            "sample ranked by the same number of panelists"
        )
    k = int(k_per[0])
    rr = int(reps[0])
    complete = k == t
    z = np.where(present, r, 0.0)
    rank_sums = z.sum(axis=0)
    a = float((z**2).sum())
    c = b * k * (k + 1) ** 2 / 4.0
    ssr = float((rank_sums**2).sum())
    denom = a - c
    if denom <= 0:
        raise TrialsError("every panelist tied every sample: the ranks carry no information")
    statistic = (t - 1) * (ssr - rr * c) / denom  # Conover's T1 (Friedman) / T (Durbin)
    df = t - 1
    p_value = float(stats.chi2.sf(statistic, df))
    tie_corr = denom / (b * k * (k * k - 1) / 12.0)
    df2 = b * k - b - t + 1
    t_max = b * (k - 1)
    if statistic < t_max:
        f_stat = (statistic / (t - 1)) / ((t_max - statistic) / df2)
        f_p = float(stats.f.sf(f_stat, t - 1, df2))
    else:
        f_stat, f_p = math.inf, 0.0
    zc = float(stats.norm.ppf(1 - alpha / 2))
    tc = float(stats.t.ppf(1 - alpha / 2, df2))
    # t form (Conover 1999): var of a rank-sum difference estimated from the residual
    if complete:
        s2_t = 2.0 * (b * a - ssr) / ((b - 1) * (k - 1))
    else:
        s2_t = (a - c) * 2.0 * rr / df2 * (1.0 - statistic / t_max)
    lsd_t = tc * math.sqrt(max(s2_t, 0.0))
    overall_p = p_value if form == "chi-square" else f_p
    protected = bool(overall_p <= alpha)
    pairs = []
    for i, j in itertools.combinations(range(t), 2):
        lam = float((present[:, i] & present[:, j]).sum())
        var0 = (k + 1) / 6.0 * (rr * (k - 1) + lam)  # null variance without ties
        lsd_ij = zc * math.sqrt(var0)
        d = float(rank_sums[i] - rank_sums[j])
        exceeds = bool(abs(d) > lsd_ij)
        pairs.append(RankPair(names[i], names[j], d, lsd_ij, lsd_t, exceeds and protected,
                              exceeds))
    lsd = float(np.mean([p.lsd for p in pairs]))
    order = sorted(names, key=lambda s: rank_sums[names.index(s)])
    groups = compact_letter_display(order, [(p.first, p.second) for p in pairs if p.different])
    if complete:
        test = "friedman"
        method = (
            "Friedman (1937) rank test for complete blocks (panelists), chi-square form with "
            "the tie correction, df = samples - 1"
        )
        lsd_method = (
            "normal (z) form of ISO 8587: z(1 - alpha/2) sqrt(b k (k + 1) / 6), no tie "
            "adjustment; lsd_t: Conover's t form on (b - 1)(k - 1) df"
        )
    else:
        test = "durbin"
        method = (
            "Durbin (1951) rank test for incomplete blocks (each panelist ranked "
            f"{k} of {t} samples, each sample ranked {rr} times), chi-square form with "
            "ties (Conover 1999), df = samples - 1"
        )
        lsd_method = (
            "normal (z) form: z(1 - alpha/2) sqrt((k + 1)(r (k - 1) + lambda) / 6) with lambda "
            "the panelists ranking both samples (the null variance without ties), averaged "
            "over pairs; lsd_t: Conover's t form on b k - b - t + 1 df"
        )
    return RankTestResult(
        test=test,
        method=method,
        alpha=alpha,
        statistic=float(statistic),
        df=df,
        p_value=p_value,
        f_statistic=float(f_stat),
        f_df=(float(t - 1), float(df2)),
        f_p_value=f_p,
        panelists=b,
        samples_per_panelist=k,
        rank_sums={names[i]: float(rank_sums[i]) for i in range(t)},
        mean_ranks={names[i]: float(rank_sums[i] / rr) for i in range(t)},
        tie_correction=float(tie_corr),
        lsd=lsd,
        lsd_method=lsd_method,
        lsd_t=float(lsd_t),
        pairs=tuple(pairs),
        groups=groups,
        form=form,
        overall_p_value=float(overall_p),
        overall_significant=protected,
        comparisons=(
            f"protected LSD (Conover 1999): pairs compared because the {form} form of the "
            f"overall test is significant at alpha {alpha:g}" if protected else
            f"no pair compared: the {form} form of the overall test is not significant at "
            f"alpha {alpha:g} (protected LSD, Conover 1999), so every sample shares one letter"
        ),
    )


def friedman_test(
    data: pd.DataFrame,
    *,
    rank: str = "rank",
    sample: str = "sample",
    panelist: str = "panelist",
    alpha: float = 0.05,
    low: float | None = None,
    high: float | None = None,
    form: str = "chi-square",
) -> RankTestResult:
    """Friedman's rank test for complete blocks: every panelist ranks every sample.

    Parameters
    ----------
    data : DataFrame
        Tidy table, one row per panelist and sample; ``rank`` holds ranks or scores
        (ranked within panelist, ascending, ties averaged).
    rank, sample, panelist : str
        Column names.
    alpha : float
        Risk of the overall test and of the least significant differences and letters.
    low, high : float, optional
        Declared range of the values; outside is an error.
    form : {"chi-square", "F"}
        The form of the overall test that decides and that gates the pairwise
        comparisons: the chi-square form (ISO 8587; the default) or the F form
        (Conover 1999, who finds it the closer approximation). Both are reported.

    Returns
    -------
    RankTestResult
        With ``test == "friedman"``.

    Raises
    ------
    IncompleteBlocksError
        When some panelist did not rank every sample: use :func:`durbin_test` (or
        :func:`rank_test`, which picks by the blocks).

    Notes
    -----
    With ``b`` panelists, ``k`` samples, ranks ``R_ij`` and rank sums ``R_j``,
    ``A = sum R_ij^2`` and ``C = b k (k + 1)^2 / 4``, the statistic is
    ``T1 = (k - 1) (sum_j R_j^2 - b C) / (A - C)``, which without ties equals
    ``12 / (b k (k + 1)) sum R_j^2 - 3 b (k + 1)`` and in general equals that divided by
    the tie correction ``1 - sum(t^3 - t) / (b (k^3 - k))`` (as scipy's
    ``friedmanchisquare``). It is referred to chi-square on ``k - 1`` df (large-sample).
    The F form ``T2 = (b - 1) T1 / (b (k - 1) - T1)`` on ``(k - 1, (b - 1)(k - 1))`` df is
    also given (Conover 1999).

    Least significant difference of two rank sums (reported ``lsd``), the normal form
    of ISO 8587: ``z(1 - alpha/2) sqrt(b k (k + 1) / 6)``; ``lsd_t`` is Conover's t form
    ``t(1 - alpha/2; (b-1)(k-1)) sqrt(2 (b A - sum R_j^2) / ((b - 1)(k - 1)))``, which uses
    the ties. Christensen et al. (2006) compare these procedures for sensory ranks.

    The comparisons are protected (Fisher's protected LSD; Conover 1999 sec. 5.8 makes
    the multiple comparisons only when the overall test rejects): a pair is called
    different, and the letters separate samples, only when the overall test in ``form``
    is significant at alpha. Under no true difference the chance that any pair is
    flagged is then at most the overall test's size, about alpha (a Monte Carlo check
    in the tests: 12 panelists, 6 samples); unprotected, it is near 0.4.

    Assumes panelists rank independently; no order or carry-over effects.

    References
    ----------
    Friedman, M. (1937). The use of ranks to avoid the assumption of normality implicit
    in the analysis of variance. J. Am. Stat. Assoc. 32(200):675-701.
    ISO 8587:2006 Sensory analysis - Methodology - Ranking.
    Conover, W. J. (1999). Practical Nonparametric Statistics, 3rd ed. Wiley, sec. 5.8.
    Christensen, Z. T., Ogden, L. V., Dunn, M. L. and Eggett, D. L. (2006). Multiple
    comparison procedures for analysis of ranked data. J. Food Sci. 71(2):S132-S143.

    Examples
    --------
    >>> import pandas as pd
    >>> d = pd.DataFrame({"panelist": list("aaabbbccc"), "sample": list("XYZ") * 3,
    ...                   "rank": [1, 2, 3, 1, 3, 2, 1, 2, 3]})
    >>> round(friedman_test(d).statistic, 4)
    4.6667
    """
    alpha = _check_alpha(alpha)
    tab = rank_table(data, rank=rank, sample=sample, panelist=panelist, low=low, high=high)
    if not _complete(tab):
        r = np.isfinite(tab.array())
        short = [tab.panelists[i] for i in np.flatnonzero(~r.all(axis=1))]
        raise IncompleteBlocksError(
            f"Friedman's test needs complete blocks, but panelist(s) {short[:10]!r} ranked "
            f"only some of the {len(tab.samples)} samples; use durbin_test for incomplete "
            "blocks (or rank_test, which picks by the blocks)"
        )
    return _rank_core(tab, alpha, form)


def durbin_test(
    data: pd.DataFrame,
    *,
    rank: str = "rank",
    sample: str = "sample",
    panelist: str = "panelist",
    alpha: float = 0.05,
    low: float | None = None,
    high: float | None = None,
    form: str = "chi-square",
) -> RankTestResult:
    """Durbin's rank test for incomplete blocks: each panelist ranks ``k`` of ``t`` samples.

    Parameters
    ----------
    As :func:`friedman_test`.

    Returns
    -------
    RankTestResult
        With ``test == "durbin"``. On complete blocks (``k = t``) Durbin's statistic is
        Friedman's, and the result says ``test == "friedman"`` so that texts cite the
        test that applies.

    Raises
    ------
    TrialsError
        When panelists ranked different numbers of samples, or samples were ranked
        unequally often.

    Notes
    -----
    Each of ``b`` panelists ranks ``k`` samples, each sample is ranked ``r`` times
    (equal block sizes and replication are required; a balanced incomplete block design
    is the usual plan). With ``A = sum R_ij^2``, ``C = b k (k + 1)^2 / 4``:
    ``T = (t - 1) (sum_j R_j^2 - r C) / (A - C)``, chi-square on ``t - 1`` df; without ties
    ``T = 12 (t - 1) / (r t (k - 1)(k + 1)) sum R_j^2 - 3 r (t - 1)(k + 1) / (k - 1)``
    (Durbin 1951). F form: ``(T / (t - 1)) / ((b (k - 1) - T) / (b k - b - t + 1))``.
    Two rank sums differ when
    ``|R_i - R_j| > t(1 - alpha/2; b k - b - t + 1)
    sqrt((A - C) 2 r (1 - T / (b (k - 1))) / (b k - b - t + 1))``
    (Conover's ``lsd_t``); ``lsd`` is the normal form with the null variance
    ``(k + 1)(r (k - 1) + lambda_ij) / 6`` of a rank-sum difference, ``lambda_ij`` the
    panelists who ranked both.

    References
    ----------
    Durbin, J. (1951). Incomplete blocks in ranking experiments. Br. J. Stat. Psychol.
    4(2):85-90.
    Conover, W. J. (1999). Practical Nonparametric Statistics, 3rd ed. Wiley, sec. 5.8
    (Durbin test, ice cream example).
    """
    alpha = _check_alpha(alpha)
    tab = rank_table(data, rank=rank, sample=sample, panelist=panelist, low=low, high=high)
    return _rank_core(tab, alpha, form)


def rank_test(
    data: pd.DataFrame,
    *,
    rank: str = "rank",
    sample: str = "sample",
    panelist: str = "panelist",
    alpha: float = 0.05,
    low: float | None = None,
    high: float | None = None,
    form: str = "chi-square",
) -> RankTestResult:
    """The rank test the blocks call for: Friedman's if complete, else Durbin's.

    Parameters
    ----------
    As :func:`friedman_test`.

    Returns
    -------
    RankTestResult
        ``test`` names the test that ran (``"friedman"`` or ``"durbin"``), and
        :meth:`RankTestResult.reference` its published source.

    Notes
    -----
    Complete blocks (every panelist ranked every sample) go to :func:`friedman_test`,
    incomplete ones to :func:`durbin_test`; see those for the formulas and references.
    """
    alpha = _check_alpha(alpha)
    tab = rank_table(data, rank=rank, sample=sample, panelist=panelist, low=low, high=high)
    return _rank_core(tab, alpha, form)  # the core names the test by the blocks


@dataclass(frozen=True, slots=True)
class PageResult(Record):
    """Page's test of an expected order of samples.

    ``order``: the samples from expected lowest rank (rank 1) to highest; ``statistic``
    is Page's ``L``; ``p_value`` one-sided (large L supports the order); ``method``
    says ``exact`` or ``normal``.
    """

    order: tuple[str, ...]
    statistic: float
    z: float
    p_value: float
    method: str
    panelists: int
    rank_sums: dict[str, float]


def _page_exact_sf(l_obs: float, b: int, k: int) -> float:
    """P(L >= l_obs) by enumerating one block's permutations and convolving b times."""
    weights = np.arange(1, k + 1)
    lo = int(weights @ weights[::-1])
    hi = int(weights @ weights)
    one = np.zeros(hi - lo + 1)
    for perm in itertools.permutations(range(1, k + 1)):
        one[int(weights @ np.asarray(perm)) - lo] += 1
    one /= one.sum()
    dist = np.array([1.0])
    # square-and-multiply convolution keeps it quick for many panelists
    base, n = one, b
    while n:
        if n & 1:
            dist = np.convolve(dist, base)
        n >>= 1
        if n:
            base = np.convolve(base, base)
    start = b * lo
    idx = int(math.ceil(l_obs - 1e-9)) - start
    if idx <= 0:
        return 1.0
    if idx >= len(dist):
        return 0.0
    return float(min(1.0, dist[idx:].sum()))


def page_test(
    data: pd.DataFrame,
    order: Sequence[str],
    *,
    rank: str = "rank",
    sample: str = "sample",
    panelist: str = "panelist",
    method: str = "auto",
) -> PageResult:
    """Page's L test that ranks follow an order stated before the trial.

    Parameters
    ----------
    data : DataFrame
        Complete blocks: every panelist ranks (or scores) every sample.
    order : sequence of str
        All samples, from the one expected to get the lowest rank (1) to the highest.
    rank, sample, panelist : str
        Column names.
    method : {"auto", "exact", "normal"}
        ``auto``: exact when there are no ties and at most 8 samples, else normal.

    Returns
    -------
    PageResult

    Notes
    -----
    ``L = sum_j j R_(j)`` with ``R_(j)`` the rank sum of the j-th sample of ``order``.
    Exact null distribution: one block's ``L`` over the ``k!`` equally likely rankings,
    convolved over ``b`` panelists. Normal form: ``E L = b k (k + 1)^2 / 4``; the
    variance is the permutation variance ``sum_blocks S_cc S_rr / (k - 1)``, which without
    ties is ``b k^2 (k + 1)^2 (k - 1) / 144`` (Page 1963) and with ties uses each block's
    own ranks; ``z = (L - E L) / sd``, one-sided upper tail. Ties have no exact form here.

    References
    ----------
    Page, E. B. (1963). Ordered hypotheses for multiple treatments: a significance test
    for linear ranks. J. Am. Stat. Assoc. 58(301):216-230.
    """
    tab = rank_table(data, rank=rank, sample=sample, panelist=panelist)
    r = tab.array()
    names = list(tab.samples)
    if not np.isfinite(r).all():
        raise TrialsError("Page's test needs complete blocks: every panelist ranks every sample")
    order = [str(o) for o in order]
    if sorted(order) != sorted(names):
        raise TrialsError(f"order {order!r} must list each sample once: {names!r}")
    b, k = r.shape
    cols = [names.index(o) for o in order]
    rs = r[:, cols]
    weights = np.arange(1, k + 1, dtype=float)
    l_stat = float((rs.sum(axis=0) * weights).sum())
    mean = b * k * (k + 1) ** 2 / 4.0
    s_cc = float(((weights - weights.mean()) ** 2).sum())
    s_rr = ((rs - rs.mean(axis=1, keepdims=True)) ** 2).sum(axis=1)
    var = float((s_cc * s_rr / (k - 1)).sum())
    z = (l_stat - mean) / math.sqrt(var) if var > 0 else 0.0
    ties = bool(np.any(rs != np.round(rs)) or np.any(np.sort(rs, axis=1) != weights))
    if method not in ("auto", "exact", "normal"):
        raise TrialsError(f"method must be 'auto', 'exact' or 'normal', got {method!r}")
    use_exact = method == "exact" or (method == "auto" and not ties and k <= 8)
    if use_exact:
        if ties:
            raise TrialsError("the exact Page distribution assumes no ties; use method='normal'")
        if k > 10:
            raise TrialsError(f"exact Page test enumerates k! orders; k = {k} is too many")
        p = _page_exact_sf(l_stat, b, k)
        how = "exact"
    else:
        p = float(stats.norm.sf(z))
        how = "normal"
    return PageResult(
        order=tuple(order),
        statistic=l_stat,
        z=float(z),
        p_value=p,
        method=how,
        panelists=b,
        rank_sums={names[i]: float(r[:, i].sum()) for i in range(k)},
    )
