"""The R-index: the probability that a test sample is scored above the control.

From rating or ranking data (O'Mahony 1992; Brown 1974): every answer to the test sample
(signal) is paired with every answer to the control (noise), and

    R = P(signal above noise) + 0.5 P(tie),

so ``R = 0.5`` is no difference and ``R = 1`` complete separation. ``R`` equals
``U / (n_s n_n)``, the Mann-Whitney statistic of the signal answers divided by the number of
pairs (Bamber 1975; Brown 1974), so its significance is the Mann-Whitney test: the normal
approximation with the tie-corrected variance ``n_s n_n / 12 [(N + 1) - sum(t^3 - t) /
(N (N - 1))]``, without continuity correction (Bi 2006, ch. 9, gives the same test as the
R-index's significance). For ranks, "above" means a smaller rank (rank 1 = most); for
scores, a larger score.

Assumptions: the answers are treated as independent draws (as the R-index by rating of
O'Mahony 1992 does); where each panelist scored both samples the pairing is ignored, so
the test is conservative next to a paired test (the trial's ANOVA or rank test, which
the analysis also reports). The normal approximation wants a dozen or more answers per
sample (common practice); the note says when there are fewer.

References
----------
Brown, J. (1974). Recognition assessed by rating and ranking. Br. J. Psychol. 65:13-22.
Bamber, D. (1975). The area above the ordinal dominance graph and the area below the
receiver operating characteristic graph. J. Math. Psychol. 12:387-415.
O'Mahony, M. (1992). Understanding discrimination tests: a user-friendly treatment of
response bias, rating and ranking R-index tests and their relationship to signal
detection. J. Sensory Stud. 7:1-47.
Mann, H. B. and Whitney, D. R. (1947). On a test of whether one of two random variables is
stochastically larger than the other. Ann. Math. Stat. 18:50-60.
Bi, J. (2006). Sensory Discrimination Tests and Measurements. Blackwell.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import special, stats

from trials.errors import TrialsError
from trials.model import Record

SCORES = "scores"  # larger is "more"
RANKS = "ranks"  # rank 1 is "most"


@dataclass(frozen=True, slots=True)
class RIndexResult(Record):
    """The R-index of a test sample against the control, with its Mann-Whitney test.

    ``p_value`` is two-sided (H0: R = 0.5); ``p_greater`` one-sided for R > 0.5.
    ``dprime`` is the 2-AFC d' that the R-index reads as (``sqrt 2 z(R)``; Brown 1974,
    Bi 2006), None at R = 0 or 1.
    """

    sample: str
    control: str
    kind: str
    n_sample: int
    n_control: int
    r_index: float
    u: float
    z: float | None
    p_value: float
    p_greater: float
    dprime: float | None
    alpha: float
    significant: bool
    test: str
    note: str


def _values(x: Sequence[float], what: str) -> np.ndarray:
    arr = np.asarray(list(x), dtype=float)
    if arr.ndim != 1 or arr.size == 0:
        raise TrialsError(f"the R-index needs at least one answer for {what}")
    if not np.all(np.isfinite(arr)):
        raise TrialsError(f"answers for {what} must be finite numbers")
    return arr


def r_index(signal: Sequence[float], noise: Sequence[float], *, kind: str = SCORES,
            sample: str = "test", control: str = "control",
            alpha: float = 0.05) -> RIndexResult:
    """The R-index of ``signal`` against ``noise`` and its Mann-Whitney significance.

    Parameters
    ----------
    signal, noise : sequence of float
        The test sample's answers and the control's (scores, or ranks with ``kind=RANKS``).
    kind : str
        :data:`SCORES` (larger is more) or :data:`RANKS` (rank 1 is most).
    sample, control : str
        Names echoed in the result.
    alpha : float
        Risk of the two-sided test.

    Returns
    -------
    RIndexResult

    Notes
    -----
    ``R = (#(s > n) + 0.5 #(s = n)) / (n_s n_n)`` over all pairs, counted exactly from the
    mid-ranks of the pooled answers (``U = R_s - n_s (n_s + 1) / 2``); the normal test as
    in the module docstring (O'Mahony 1992; Brown 1974; Mann and Whitney 1947).
    """
    if kind not in (SCORES, RANKS):
        raise TrialsError(f"kind must be {SCORES!r} or {RANKS!r}, got {kind!r}")
    if not 0.0 < alpha < 1.0:
        raise TrialsError(f"alpha must lie in (0, 1), got {alpha!r}")
    s = _values(signal, sample)
    n = _values(noise, control)
    if kind == RANKS:  # rank 1 is most: turn ranks round so that larger is more
        s, n = -s, -n
    ns, nn = s.size, n.size
    pooled = np.concatenate([s, n])
    ranks = stats.rankdata(pooled)
    u = float(ranks[:ns].sum() - ns * (ns + 1) / 2.0)
    r = u / (ns * nn)
    total = ns + nn
    _, counts = np.unique(pooled, return_counts=True)
    ties = float(np.sum(counts.astype(float) ** 3 - counts))
    var = ns * nn / 12.0 * ((total + 1) - ties / (total * (total - 1))) if total > 1 else 0.0
    notes = []
    if var <= 0:
        z = None
        p_two = p_greater = 1.0
        notes.append("every answer is the same: no test")
    else:
        z = (u - ns * nn / 2.0) / math.sqrt(var)
        p_greater = float(special.ndtr(-z))
        p_two = float(min(1.0, 2.0 * special.ndtr(-abs(z))))
    if min(ns, nn) < 12:
        notes.append(f"{min(ns, nn)} answers for one sample: the normal approximation is rough "
                     "below about a dozen (common practice)")
    d = None if r <= 0.0 or r >= 1.0 else math.sqrt(2.0) * float(special.ndtri(r))
    return RIndexResult(sample, control, kind, ns, nn, float(r), u, z, p_two, p_greater, d,
                        float(alpha), bool(p_two <= alpha),
                        "Mann-Whitney normal approximation, tie-corrected, no continuity "
                        "correction", "; ".join(notes))


@dataclass(frozen=True, slots=True)
class RIndexTable(Record):
    """The R-index of every other sample against the control on one attribute."""

    attribute: str
    kind: str
    control: str
    rows: tuple[RIndexResult, ...]
    note: str

    def to_frame(self):
        import pandas as pd

        cols = ["sample", "n_sample", "n_control", "r_index", "p_value", "p_greater", "dprime",
                "significant"]
        return pd.DataFrame([{c: getattr(r, c) for c in cols} for r in self.rows], columns=cols)


def r_index_table(frame, *, score: str = "score", sample: str = "sample", control: str,
                  kind: str = SCORES, attribute: str = "", alpha: float = 0.05) -> RIndexTable:
    """:func:`r_index` of each sample of a tidy table against ``control``.

    Parameters
    ----------
    frame : pandas.DataFrame
        One row per answer, with columns ``score`` and ``sample``.
    control : str
        The control sample (noise); every other sample is a signal in turn.
    kind, alpha : see :func:`r_index`.
    attribute : str
        The attribute's name, echoed.

    Returns
    -------
    RIndexTable
        One row per other sample, in the order the samples first appear. Each test is
        at ``alpha`` with no adjustment for several samples (said in ``note``).
    """
    for col in (score, sample):
        if col not in frame.columns:
            raise TrialsError(f"the R-index needs a column {col!r}; the table has "
                              f"{list(frame.columns)!r}")
    data = frame[[score, sample]].dropna()
    names = list(dict.fromkeys(str(x) for x in data[sample]))
    if control not in names:
        raise TrialsError(f"the control {control!r} has no answers; samples with answers: "
                          f"{names!r}")
    noise = data.loc[data[sample].astype(str) == control, score].astype(float).tolist()
    rows = tuple(
        r_index(data.loc[data[sample].astype(str) == name, score].astype(float).tolist(),
                noise, kind=kind, sample=name, control=control, alpha=alpha)
        for name in names if name != control)
    note = ("each sample against the control at alpha, no adjustment for several samples"
            if len(rows) > 1 else "")
    return RIndexTable(attribute, kind, control, rows, note)
