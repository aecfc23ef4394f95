"""Signal-detection statistics of A-not-A and same-different (issue 17, item 3): the
table's tests against scipy and statsmodels, d' against its closed form, numerical
integration of the differencing model, and seeded simulations of both decision rules.

No published worked example of these two methods is used (none at hand): the yes/no d'
is checked against ``z(H) - z(F)`` computed with scipy (Green and Swets 1966; Macmillan
and Creelman 2005, ch. 1), the same-different hit rate against a double integral of the
differencing rule (Macmillan and Creelman 2005, ch. 9), and both standard errors against
the spread of the estimator in a simulation.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, stats
from statsmodels.stats.contingency_tables import Table2x2

from trials.errors import TrialsError
from trials.stats.signal import (
    DIFFERENCING,
    YES_NO,
    same_different_hit_rate,
    signal_dprime,
    signal_test,
    table_test,
)

TABLES = [(40, 50, 20, 50), (7, 10, 2, 10), (30, 40, 12, 40), (3, 12, 4, 12), (12, 12, 0, 9)]


@pytest.mark.parametrize("hits, ns, fa, nn", TABLES)
def test_fisher_and_chi_square_match_scipy_and_statsmodels(hits, ns, fa, nn):
    t = table_test(hits, ns, fa, nn)
    table = [[hits, ns - hits], [fa, nn - fa]]
    assert t.fisher_p == pytest.approx(
        stats.fisher_exact(table, alternative="greater").pvalue, rel=1e-9)
    chi2, p, _, _ = stats.chi2_contingency(table, correction=False)
    assert t.chi2 == pytest.approx(chi2, rel=1e-12) and t.chi2_p == pytest.approx(p, rel=1e-9)
    sm = Table2x2(np.asarray(table, dtype=float), shift_zeros=False).test_nominal_association()
    assert t.chi2 == pytest.approx(sm.statistic, rel=1e-12)
    # one-sided chi-square p: half the two-sided p on the side H > F
    side = hits / ns > fa / nn
    assert t.chi2_p_one_sided == pytest.approx(p / 2 if side else 1 - p / 2, rel=1e-9)


def test_the_yes_no_dprime_is_z_of_hits_minus_z_of_false_alarms():
    r = signal_dprime(40, 50, 20, 50, model=YES_NO)
    assert r.dprime == pytest.approx(stats.norm.ppf(0.8) - stats.norm.ppf(0.4), abs=1e-12)
    assert r.criterion == pytest.approx(-(stats.norm.ppf(0.8) + stats.norm.ppf(0.4)) / 2)
    # Gourevitch and Galanter (1967) variance, written out independently
    h, f = 0.8, 0.4
    var = (h * (1 - h) / (50 * stats.norm.pdf(stats.norm.ppf(h)) ** 2)
           + f * (1 - f) / (50 * stats.norm.pdf(stats.norm.ppf(f)) ** 2))
    assert r.dprime_se == pytest.approx(math.sqrt(var), rel=1e-12)


def test_a_perfect_table_moves_the_rates_by_half_a_count():
    r = signal_dprime(12, 12, 0, 9, model=YES_NO)
    assert r.hit_rate == pytest.approx(1 - 1 / 24) and r.false_alarm_rate == pytest.approx(1 / 18)
    assert "1/(2N)" in r.note


def _double_integral_hit_rate(d: float, k: float) -> float:
    # P(|X1 - X2| > k) with X1 ~ N(d, 1), X2 ~ N(0, 1): integrate the inner normal over
    # |x1 - x2| <= k and subtract from 1 (scipy.integrate, independent of the closed form)
    def inner(x2):
        return stats.norm.cdf(x2 + k - d) - stats.norm.cdf(x2 - k - d)
    same = integrate.quad(lambda x2: inner(x2) * stats.norm.pdf(x2), -12, 12,
                          epsabs=1e-13, limit=200)[0]
    return 1.0 - same


@pytest.mark.parametrize("d, k", [(0.0, 1.0), (0.7, 1.2), (1.5, 0.8), (2.5, 2.0), (4.0, 1.5)])
def test_the_differencing_hit_rate_matches_numerical_integration(d, k):
    assert same_different_hit_rate(d, k) == pytest.approx(_double_integral_hit_rate(d, k),
                                                          abs=1e-10)


def test_the_differencing_dprime_inverts_the_model():
    d, k = 1.8, 1.3
    h, f = same_different_hit_rate(d, k), 2 * stats.norm.cdf(-k / math.sqrt(2))
    # rates of whole counts: choose n large and read d' back from the rounded rates
    n = 100_000
    r = signal_dprime(round(h * n), n, round(f * n), n, model=DIFFERENCING)
    assert r.dprime == pytest.approx(d, abs=2e-4) and r.criterion == pytest.approx(k, abs=2e-4)


def test_hits_at_or_below_false_alarms_give_zero_for_same_different():
    r = signal_dprime(3, 12, 4, 12, model=DIFFERENCING)
    assert r.dprime == 0.0 and r.dprime_se is None and "set to 0" in r.note


@pytest.mark.parametrize("model, d, crit", [(YES_NO, 1.2, 0.3), (DIFFERENCING, 1.8, 1.4)])
def test_standard_errors_match_a_seeded_simulation_of_the_decision_rule(model, d, crit):
    rng = np.random.default_rng(2024)
    n, reps = 200, 4000
    if model == YES_NO:  # answer "not A" when the sensation exceeds the criterion
        h = stats.norm.sf(crit - d)
        f = stats.norm.sf(crit)
    else:  # answer "different" when |x1 - x2| > k
        h = same_different_hit_rate(d, crit)
        f = 2 * stats.norm.sf(crit / math.sqrt(2))
    # simulate the sensations themselves, not the rates
    if model == YES_NO:
        hits = (rng.standard_normal((reps, n)) + d > crit).sum(axis=1)
        fas = (rng.standard_normal((reps, n)) > crit).sum(axis=1)
    else:
        hits = (np.abs(rng.standard_normal((reps, n)) + d
                       - rng.standard_normal((reps, n))) > crit).sum(axis=1)
        fas = (np.abs(rng.standard_normal((reps, n))
                      - rng.standard_normal((reps, n))) > crit).sum(axis=1)
    assert hits.mean() / n == pytest.approx(h, abs=0.005)
    assert fas.mean() / n == pytest.approx(f, abs=0.005)
    est = np.array([signal_dprime(int(a), n, int(b), n, model=model).dprime
                    for a, b in zip(hits, fas)])
    se = signal_dprime(round(h * n), n, round(f * n), n, model=model).dprime_se
    assert est.mean() == pytest.approx(d, abs=0.05)
    assert se == pytest.approx(est.std(), rel=0.1)


def test_the_whole_test_decides_by_fishers_exact_p():
    r = signal_test(7, 10, 2, 10, method="a-not-a", model=YES_NO, alpha=0.05)
    p = stats.fisher_exact([[7, 3], [2, 8]], alternative="greater").pvalue
    assert r.p_value == pytest.approx(p, rel=1e-9) and r.significant == (p <= 0.05)
    assert "expected count" in r.note  # small table: read Fisher's test


@pytest.mark.parametrize("args, quoted", [((11, 10, 2, 10), "exceeds"), ((1, 0, 2, 10), "noise"),
                                          ((-1, 10, 2, 10), "-1")])
def test_bad_tables_are_refused(args, quoted):
    with pytest.raises(TrialsError, match=quoted):
        table_test(*args)


def test_the_command_line_analyses_a_response_table(capsys):
    import json

    from trials.cli import main

    code = main(["analyze", "table", "--method", "a-not-a", "--hits", "10", "--signal", "12",
                 "--false-alarms", "3", "--noise", "12", "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 0 and data["dprime"]["model"] == YES_NO
    assert data["p_value"] == pytest.approx(
        stats.fisher_exact([[10, 2], [3, 9]], alternative="greater").pvalue, rel=1e-9)
    assert main(["analyze", "table", "--method", "a-not-a", "--hits", "200000", "--signal",
                 "200000", "--false-alarms", "3", "--noise", "12"]) == 2
    assert "--hits may be at most" in capsys.readouterr().err
