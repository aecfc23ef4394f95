"""Check-all-that-apply (CATA) statistics: each panelist ticks, for each sample, the
words of a list that apply to it.

- Cochran's Q per word: do the samples differ in how often the word is ticked? The
  panelists are blocks, the samples treatments, the ticks 0/1 (Cochran 1950; Meyners,
  Castura and Carr 2013 for CATA). ``Q = (k - 1) [k sum C_j^2 - T^2] / [k T - sum R_i^2]``
  on ``k - 1`` df (chi-square), ``C_j`` the ticks of sample j, ``R_i`` of panelist i,
  ``T`` all ticks; panelists who ticked all or none of the samples carry no information
  and drop out of the formula by themselves.
- Pairwise McNemar tests per word: for two samples, the panelists who ticked the word
  for one only (``b`` and ``c``); exact two-sided binomial p ``min(1, 2 P(X <= min(b, c)))``
  with X binomial(b + c, 1/2) (McNemar 1947; the exact form, common practice for small
  counts), also given Bonferroni-adjusted over the pairs of the word.
- Correspondence analysis of the sample x word table of tick counts (Greenacre 2017):
  the standardised residuals ``S = D_r^-1/2 (P - r c') D_c^-1/2`` by SVD, principal
  coordinates of samples ``D_r^-1/2 U Sigma`` and of words ``D_c^-1/2 V Sigma``, and the
  share of the inertia (``chi^2 / n``) per dimension; a symmetric biplot plots both.
- Penalty-lift, where the trial has a liking score: per word, the mean liking of the
  answers where the word was ticked minus the mean where it was not (pooled over
  samples and panelists; Williams, Carr and Popper 2011, "mean drop"), with Welch's t-test
  of the two means.

Assumptions: ticks are 0/1 answers of every panelist to every word for every sample
(a missing answer drops that panelist from that word's Q and McNemar tests); Cochran's Q
and its chi-square reference want a dozen or more informative panelists (common
practice); penalty-lift is descriptive of the liking that goes with a word, not causal.

References
----------
Cochran, W. G. (1950). The comparison of percentages in matched samples. Biometrika
37:256-266.
McNemar, Q. (1947). Note on the sampling error of the difference between correlated
proportions or percentages. Psychometrika 12:153-157.
Greenacre, M. (2017). Correspondence Analysis in Practice, 3rd ed. CRC Press.
Meyners, M., Castura, J. C. and Carr, B. T. (2013). Existing and new approaches for the
analysis of CATA data. Food Qual. Prefer. 30:309-319.
Williams, A., Carr, B. T. and Popper, R. (2011). Exploring analysis options for
check-all-that-apply (CATA) questions. 9th Pangborn Sensory Science Symposium.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record


@dataclass(frozen=True, slots=True)
class McNemarPair(Record):
    """One pair of samples on one word: ``b`` panelists ticked it for ``first`` only,
    ``c`` for ``second`` only; exact two-sided p and its Bonferroni adjustment."""

    first: str
    second: str
    b: int
    c: int
    p_value: float
    p_adjusted: float


@dataclass(frozen=True, slots=True)
class WordTest(Record):
    """Cochran's Q of one word over the samples, with its pairwise McNemar tests."""

    word: str
    ticks: dict[str, int]
    panelists: int
    q: float | None
    df: int
    p_value: float | None
    significant: bool
    pairs: tuple[McNemarPair, ...]


def _check_ticks(ticks: np.ndarray) -> np.ndarray:
    arr = np.asarray(ticks, dtype=float)
    if arr.ndim != 2 or arr.shape[1] < 2:
        raise TrialsError("Cochran's Q needs a panelists x samples table of two or more samples")
    if not np.all(np.isin(arr, (0.0, 1.0))):
        raise TrialsError("ticks must be 0 or 1")
    return arr


def cochran_q(ticks) -> tuple[float | None, int, float | None]:
    """Cochran's Q of a panelists x samples table of 0/1 ticks: ``(Q, df, p)``; Q and p
    are None where no panelist ticked some samples and not others (no information)."""
    x = _check_ticks(ticks)
    k = x.shape[1]
    rows, cols = x.sum(axis=1), x.sum(axis=0)
    total = rows.sum()
    den = k * total - float(np.sum(rows**2))
    if den <= 0:
        return None, k - 1, None
    q = (k - 1) * (k * float(np.sum(cols**2)) - total**2) / den
    return float(q), k - 1, float(stats.chi2.sf(q, k - 1))


def mcnemar_exact(b: int, c: int) -> float:
    """Exact two-sided McNemar p: ``min(1, 2 P(X <= min(b, c)))``, X ~ binomial(b + c, 1/2)."""
    if b + c == 0:
        return 1.0
    return float(min(1.0, 2.0 * stats.binom.cdf(min(b, c), b + c, 0.5)))


def word_tests(frame: pd.DataFrame, *, alpha: float = 0.05, panelist: str = "panelist",
               sample: str = "sample", word: str = "word", tick: str = "tick"
               ) -> tuple[WordTest, ...]:
    """Cochran's Q and pairwise McNemar tests for every word of a tidy CATA table.

    Parameters
    ----------
    frame : pandas.DataFrame
        One row per panelist, sample and word with ``tick`` 0 or 1 (several sessions:
        the ticks of a panelist, sample and word are combined as "ticked at least once").
    alpha : float
        Risk of each Cochran's Q test.

    Returns
    -------
    tuple of WordTest
        In the order the words first appear; samples in the order they first appear.
    """
    if not 0.0 < alpha < 1.0:
        raise TrialsError(f"alpha must lie in (0, 1), got {alpha!r}")
    for col in (panelist, sample, word, tick):
        if col not in frame.columns:
            raise TrialsError(f"a CATA table needs a column {col!r}")
    samples = list(dict.fromkeys(frame[sample]))
    if len(samples) < 2:
        raise TrialsError("Cochran's Q needs two or more samples")
    out = []
    for w in dict.fromkeys(frame[word]):
        sub = frame[frame[word] == w]
        wide = sub.pivot_table(index=panelist, columns=sample, values=tick, aggfunc="max")
        wide = wide.reindex(columns=samples).dropna()
        x = wide.to_numpy(dtype=float)
        q, df, p = cochran_q(x) if len(x) else (None, len(samples) - 1, None)
        pairs = []
        m = len(samples) * (len(samples) - 1) // 2
        for i, j in itertools.combinations(range(len(samples)), 2):
            b = int(np.sum((x[:, i] == 1) & (x[:, j] == 0))) if len(x) else 0
            c = int(np.sum((x[:, i] == 0) & (x[:, j] == 1))) if len(x) else 0
            pv = mcnemar_exact(b, c)
            pairs.append(McNemarPair(str(samples[i]), str(samples[j]), b, c, pv, min(1.0, pv * m)))
        ticks = {str(s): int(wide[s].sum()) for s in samples}
        out.append(WordTest(str(w), ticks, len(x), q, df, p,
                            bool(p is not None and p <= alpha), tuple(pairs)))
    return tuple(out)


# ----------------------------------------------------------------- correspondence analysis


@dataclass(frozen=True, slots=True)
class CorrespondenceResult(Record):
    """Correspondence analysis of a sample x word table of counts.

    ``sample_coords`` and ``word_coords`` are principal coordinates (one tuple per row or
    word, one value per dimension); ``inertia`` the principal inertias (``sigma^2``) and
    ``shares`` their share of the total inertia ``chi^2 / n``.
    """

    samples: tuple[str, ...]
    words: tuple[str, ...]
    sample_coords: tuple[tuple[float, ...], ...]
    word_coords: tuple[tuple[float, ...], ...]
    inertia: tuple[float, ...]
    shares: tuple[float, ...]
    total_inertia: float
    dropped_words: tuple[str, ...]


def correspondence_analysis(table: pd.DataFrame) -> CorrespondenceResult:
    """Correspondence analysis (Greenacre 2017) of a table of counts: rows are samples,
    columns words; words never ticked are dropped (they have no mass) and listed.

    Returns at most ``min(rows, columns) - 1`` dimensions (the others carry no inertia).
    """
    counts = table.astype(float)
    keep = counts.columns[counts.sum(axis=0) > 0]
    dropped = tuple(str(c) for c in counts.columns if c not in keep)
    counts = counts[keep]
    counts = counts[counts.sum(axis=1) > 0]
    n = float(counts.to_numpy().sum())
    if counts.shape[0] < 2 or counts.shape[1] < 2 or n <= 0:
        raise TrialsError("correspondence analysis needs two samples and two words with ticks")
    p = counts.to_numpy() / n
    r, c = p.sum(axis=1), p.sum(axis=0)
    s = (p - np.outer(r, c)) / np.sqrt(np.outer(r, c))
    u, sigma, vt = np.linalg.svd(s, full_matrices=False)
    dims = min(s.shape) - 1
    u, sigma, v = u[:, :dims], sigma[:dims], vt[:dims].T
    # sign convention: the largest |coordinate| of each sample dimension is positive
    flip = np.sign(u[np.abs(u).argmax(axis=0), np.arange(dims)])
    flip[flip == 0] = 1.0
    u, v = u * flip, v * flip
    rows = (u * sigma) / np.sqrt(r)[:, None]
    cols = (v * sigma) / np.sqrt(c)[:, None]
    inertia = sigma**2
    total = float(np.sum(s**2))
    shares = inertia / total if total > 0 else np.zeros_like(inertia)
    return CorrespondenceResult(
        tuple(str(x) for x in counts.index), tuple(str(x) for x in counts.columns),
        tuple(tuple(float(v) for v in row) for row in rows),
        tuple(tuple(float(v) for v in row) for row in cols),
        tuple(float(x) for x in inertia), tuple(float(x) for x in shares), total, dropped)


# ----------------------------------------------------------------- penalty-lift


@dataclass(frozen=True, slots=True)
class PenaltyLift(Record):
    """Mean liking with the word ticked minus without it, with Welch's t-test."""

    word: str
    n_ticked: int
    n_not: int
    mean_ticked: float | None
    mean_not: float | None
    lift: float | None
    p_value: float | None


def _welch_p(a: np.ndarray, b: np.ndarray) -> float | None:
    if len(a) < 2 or len(b) < 2:
        return None
    va, vb = a.var(ddof=1) / len(a), b.var(ddof=1) / len(b)
    if va + vb <= 0:
        return None
    t = (a.mean() - b.mean()) / math.sqrt(va + vb)
    df = (va + vb) ** 2 / (va**2 / (len(a) - 1) + vb**2 / (len(b) - 1))
    return float(2.0 * stats.t.sf(abs(t), df))


def penalty_lift(frame: pd.DataFrame, *, words: Sequence[str] | None = None,
                 word: str = "word", tick: str = "tick", liking: str = "liking"
                 ) -> tuple[PenaltyLift, ...]:
    """Penalty-lift of each word: mean liking when ticked minus when not (see the module
    docstring). ``frame``: one row per answer (panelist, sample, word) with its ``tick``
    and the ``liking`` the panelist gave that sample; rows without a liking are dropped."""
    for col in (word, tick, liking):
        if col not in frame.columns:
            raise TrialsError(f"penalty-lift needs a column {col!r}")
    data = frame.dropna(subset=[liking, tick])
    out = []
    for w in (words if words is not None else list(dict.fromkeys(data[word]))):
        sub = data[data[word] == w]
        a = sub.loc[sub[tick] == 1, liking].to_numpy(dtype=float)
        b = sub.loc[sub[tick] == 0, liking].to_numpy(dtype=float)
        ma = float(a.mean()) if len(a) else None
        mb = float(b.mean()) if len(b) else None
        lift = ma - mb if ma is not None and mb is not None else None
        out.append(PenaltyLift(str(w), len(a), len(b), ma, mb, lift, _welch_p(a, b)))
    return tuple(out)
