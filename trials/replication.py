"""Replicated forced choice in a trial's analysis: when a panelist answered more than
once (several sessions), Tarone's overdispersion test, and where it is significant the
beta-binomial difference test and a corrected similarity test.

Pure: used by :func:`trials.analysis.analyse` on its scored sets (a
:class:`trials.analysis.ChoiceCounts`).
"""

from __future__ import annotations

import math
import warnings
from typing import Any

from trials.errors import TrialsError
from trials.model import Trial
from trials.stats import discrimination as disc
from trials.stats.replicated import overdispersion_test, replicated_difference_test


def panelist_counts(counts: Any) -> tuple[list[int], list[int]]:
    """Per panelist (in first-answer order): the correct answers and the sets answered.

    Paired preference counts the choices of the more-chosen sample (the first listed
    sample on a tie); the two-sided tests do not depend on which sample is counted.
    """
    hits: dict[str, int] = {}
    sets: dict[str, int] = {}
    pick = counts.preferred or next(iter(counts.counts), "")
    for s in counts.sets:
        good = s.correct if s.correct is not None else (s.chosen_samples[0] == pick)
        hits[s.panelist_code] = hits.get(s.panelist_code, 0) + int(bool(good))
        sets[s.panelist_code] = sets.get(s.panelist_code, 0) + 1
    return [hits[p] for p in sets], list(sets.values())


def replicated_tests(study: Trial, counts: Any, similarity: Any | None
                     ) -> tuple[Any | None, Any | None, Any | None, list[str]]:
    """Tarone's overdispersion test when a panelist answered more than once, and where
    it is significant the beta-binomial difference test (Ennis and Bi 1998) and the
    similarity test on the design-effect corrected counts (Rao and Scott 1992).

    Returns ``(overdispersion, replicated, similarity, notes)``: Tarone's result (None
    when every panelist answered once), the beta-binomial difference result (None unless
    overdispersed), the similarity result to report (the given one, or the corrected
    one) and notes on tests that could not run.

    Notes
    -----
    Tarone (1979) is tested at the trial's alpha. The correction divides the correct
    count and the answers by the beta-binomial inflation ``sum m_i (1 + (m_i - 1)
    gamma) / N`` (the design effect of clustered binary data), rounding the answers
    down and the count up, so that the correction can only make similarity harder to
    show. Assumes independent panelists, each with one probability of a correct answer
    across their sessions (the beta-binomial model); large-sample.

    References
    ----------
    Tarone, R. E. (1979). Biometrika 66:585-590. Ennis, D. M. and Bi, J. (1998).
    J. Sensory Stud. 13:389-412. Rao, J. N. K. and Scott, A. J. (1992). A simple method
    for the analysis of clustered binary data. Biometrics 48:577-585.
    """
    x, m = panelist_counts(counts)
    if len(m) < 2 or max(m, default=0) < 2:
        return None, None, similarity, []
    try:
        over = overdispersion_test(x, m, alpha=study.alpha, warn=False)
    except TrialsError as exc:
        return None, None, similarity, [f"overdispersion test not run: {exc}"]
    if not over.overdispersed:
        return over, None, similarity, []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the decision states the overdispersion
        rep = replicated_difference_test(x, m, method=study.method, alpha=study.alpha)
    if similarity is not None:
        # Rao and Scott (1992): divide the count and the answers by the design effect;
        # rounded the cautious way for similarity (fewer answers, more correct)
        n_eff = max(1, math.floor(sum(m) / rep.inflation))
        x_eff = min(n_eff, math.ceil(sum(x) / rep.inflation - 1e-9))
        try:
            similarity = disc.similarity_test(x_eff, n_eff, method=study.method,
                                              pd=similarity.pd, beta=similarity.beta)
        except TrialsError as exc:
            return over, rep, None, [f"corrected similarity test not run: {exc}"]
    return over, rep, similarity, []
