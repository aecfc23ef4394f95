"""Replicated forced choice: panelists answering in several sessions (issue 16, item 4).

The analysis runs Tarone's (1979) overdispersion test when a panelist answered more
than once and, where it is significant, decides with the beta-binomial test of Ennis
and Bi (1998) instead of the pooled binomial. The expected values are recomputed here
independently: Tarone's Z from its formula with numpy, and the beta-binomial dispersion
from a maximum-likelihood fit of scipy.stats.betabinom over (a, b) (another
parametrisation and optimiser than trials.stats.replicated uses).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize, stats

from trials.analysis import analyse
from trials.decision import Verdict, decide
from trials.design.plan import serving_plan
from trials.model import Answer, Sample, Trial
from trials.replication import panelist_counts

OLD, NEW = "Usual proof", "Short proof"
PANEL = [f"P{i:02d}" for i in range(1, 25)]
SESSIONS = ("1", "2", "3", "4")


def _trial(**kw):
    return Trial(name="Proofs", method="triangle",
                 samples=(Sample(OLD, is_control=True), Sample(NEW)), **kw)


def _plan():
    plan, used = [], []
    for k, session in enumerate(SESSIONS):
        entries = serving_plan("triangle", [OLD, NEW], PANEL, session=session, rng=k,
                               exclude_codes=used)
        used += [e.code for e in entries]
        plan += entries
    return plan


def _answers(plan, right):
    """right(panelist index, session index) -> whether the panelist picks the odd cup."""
    out = []
    for i, p in enumerate(PANEL):
        for k, session in enumerate(SESSIONS):
            cups = [e for e in plan if e.panelist_code == p and e.session == session]
            names = [c.sample_name for c in cups]
            odd = next(c for c in cups if names.count(c.sample_name) == 1)
            other = next(c for c in cups if names.count(c.sample_name) == 2)
            out.append(Answer(session, p, (odd if right(i, k) else other).code, "choice", ""))
    return out


def _tarone(x, m):
    """Tarone (1979), eq. for Z against the beta-binomial, by hand."""
    x, m = np.asarray(x, float), np.asarray(m, float)
    p = x.sum() / m.sum()
    s = ((x - m * p) ** 2).sum() / (p * (1 - p))
    return (s - m.sum()) / math.sqrt(2 * (m * (m - 1)).sum())


def _betabinom_gamma(x, m):
    """ML fit of scipy.stats.betabinom over log a, log b; gamma = 1 / (a + b + 1)."""
    def nll(theta):
        a, b = np.exp(theta)
        return -stats.betabinom.logpmf(x, m, a, b).sum()

    fit = optimize.minimize(nll, [0.0, 0.0], method="L-BFGS-B")
    a, b = np.exp(fit.x)
    return 1 / (a + b + 1)


def test_overdispersed_replicated_answers_are_decided_by_the_beta_binomial_test():
    # a third of the panel always finds the odd cup, the rest never does: the counts
    # vary far more between panelists than one common pc allows
    plan = _plan()
    answers = _answers(plan, lambda i, k: i % 3 == 0)
    result = analyse(_trial(), plan, answers)
    fc = result.choice
    x, m = panelist_counts(fc.counts)
    assert m == [4] * 24 and sum(x) == 8 * 4  # recounted: 8 panelists x 4 sessions
    assert fc.overdispersion.statistic == pytest.approx(_tarone(x, m), rel=1e-12)
    assert fc.overdispersion.overdispersed
    rep = fc.replicated
    gamma = _betabinom_gamma(np.array(x), np.array(m))
    assert rep.gamma == pytest.approx(gamma, abs=2e-3)
    # Ennis and Bi (1998): Z = (p_hat - p0) / sqrt(p0 (1 - p0) (1 + (m - 1) gamma) / N)
    p0, n = 1 / 3, 96
    z = (32 / n - p0) / math.sqrt(p0 * (1 - p0) * (1 + 3 * gamma) / n)
    assert rep.statistic == pytest.approx(z, abs=5e-3)
    assert rep.p_value == pytest.approx(stats.norm.sf(z), abs=5e-3)
    d = decide(result)
    assert d.numbers["p_value"] == rep.p_value
    assert d.numbers["pooled_p_value"] == fc.difference.p_value
    text = d.text
    assert "beta-binomial test, Ennis and Bi 1998" in d.headline
    assert "Tarone 1979: Z = " in text and "not pooled as independent" in text


def test_replicated_answers_without_overdispersion_are_pooled_and_the_decision_says_so():
    # every panelist right in the same share of sessions: less spread than a binomial
    plan = _plan()
    answers = _answers(plan, lambda i, k: (i + k) % 2 == 0)
    result = analyse(_trial(), plan, answers)
    fc = result.choice
    x, m = panelist_counts(fc.counts)
    assert fc.overdispersion.statistic == pytest.approx(_tarone(x, m), rel=1e-12)
    assert not fc.overdispersion.overdispersed and fc.replicated is None
    d = decide(result)
    assert d.numbers["p_value"] == fc.difference.p_value  # the pooled exact binomial
    # the pooled exact binomial by scipy: 48 of 96 at chance 1/3 (ISO 4120)
    assert fc.difference.p_value == pytest.approx(
        stats.binomtest(48, 96, 1 / 3, alternative="greater").pvalue, rel=1e-12)
    assert "finds no overdispersion" in d.text and "pooled as independent" in d.text


def test_one_answer_per_panelist_runs_no_overdispersion_test():
    full = _plan()
    plan = [e for e in full if e.session == "1"]
    answers = [a for a in _answers(full, lambda i, k: i % 2 == 0) if a.session == "1"]
    fc = analyse(_trial(), plan, answers).choice
    assert fc.overdispersion is None and fc.replicated is None


def test_a_planned_similarity_on_overdispersed_answers_uses_the_corrected_counts():
    # a third of the panel always right, the rest right in one session of four
    plan = _plan()
    answers = _answers(plan, lambda i, k: i % 3 == 0 or k == i % 4)
    result = analyse(_trial(aim="similarity", pd=0.3, beta=0.05), plan, answers)
    fc = result.choice
    assert fc.counts.correct == 8 * 4 + 16
    inflation = fc.replicated.inflation
    # Rao and Scott (1992): the count and the answers divided by the design effect
    assert fc.similarity.n == math.floor(96 / inflation)
    assert fc.similarity.correct == math.ceil(48 / inflation - 1e-9)
    d = decide(result)
    assert d.verdict in (Verdict.SIMILAR, Verdict.NOT_SIMILAR)
    assert "Rao and Scott 1992" in d.headline
