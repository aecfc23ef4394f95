"""The exact binomial statistics of the forced-choice tests match the published tables
and independent computations (scipy.stats.binomtest, statsmodels, brute force)."""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats
from statsmodels.stats.proportion import proportion_confint

from trials.errors import TrialsError, UnknownMethodError
from trials.methods import DISCRIMINATION, FORCED_CHOICE, get_method
from trials.stats.discrimination import (
    CI_METHOD,
    TIE_TOLERANCE,
    critical_array,
    critical_table,
    critical_value,
    difference_test,
    no_preference_counts,
    similarity_test,
)
from trials.stats.power import panel_size, panelists_needed, power

ALPHAS = (0.20, 0.10, 0.05, 0.01, 0.001)


def brute_critical(n: int, method: str, alpha: float) -> int | None:
    """Independent computation: scan x with scipy.stats.binomtest until p <= alpha."""
    spec = get_method(method)
    alternative = "two-sided" if spec.sides == 2 else "greater"
    for x in range(n + 1):
        if spec.sides == 2 and x < n - x:
            continue
        # an exact tie reaches alpha (TIE_TOLERANCE; two-out-of-five, n = 3: 0.1**3 = 0.001)
        p = stats.binomtest(x, n, spec.guess, alternative=alternative).pvalue
        if p <= alpha * (1 + TIE_TOLERANCE):
            return x
    return None


# ------------------------------------------------------------- published critical rows
# Rows of the published critical-value tables, written down from memory of the tables
# (ISO 4120 / ASTM E1885 table A.1 for the triangle; ISO 10399 and ISO 5495 one-sided
# for duo-trio and 2-AFC; ISO 5495 two-sided for paired preference; the same values are
# in Roessler et al. 1978 and in Meilgaard, Civille and Carr's tables). Being exact
# binomial values, every row is also cross-checked against a binomtest loop below.
PUBLISHED = [
    pytest.param("triangle", 12, 0.05, 8, id="ISO4120-ASTM-E1885-triangle-n12-a05"),
    pytest.param("triangle", 18, 0.05, 10, id="ISO4120-ASTM-E1885-triangle-n18-a05"),
    pytest.param("triangle", 24, 0.05, 13, id="ISO4120-ASTM-E1885-triangle-n24-a05"),
    pytest.param("triangle", 30, 0.05, 15, id="ISO4120-ASTM-E1885-triangle-n30-a05"),
    pytest.param("triangle", 36, 0.05, 18, id="ISO4120-ASTM-E1885-triangle-n36-a05"),
    pytest.param("triangle", 6, 0.05, 5, id="Roessler1978-triangle-n6-a05"),
    pytest.param("triangle", 9, 0.05, 6, id="Roessler1978-triangle-n9-a05"),
    pytest.param("triangle", 15, 0.05, 9, id="Roessler1978-triangle-n15-a05"),
    pytest.param("triangle", 21, 0.05, 12, id="Meilgaard-triangle-n21-a05"),
    pytest.param("triangle", 27, 0.05, 14, id="Meilgaard-triangle-n27-a05"),
    pytest.param("triangle", 42, 0.05, 20, id="Meilgaard-triangle-n42-a05"),
    pytest.param("triangle", 48, 0.05, 22, id="Meilgaard-triangle-n48-a05"),
    pytest.param("triangle", 54, 0.05, 25, id="Meilgaard-triangle-n54-a05"),
    pytest.param("triangle", 60, 0.05, 27, id="Meilgaard-triangle-n60-a05"),
    pytest.param("triangle", 24, 0.01, 15, id="ISO4120-triangle-n24-a01"),
    pytest.param("triangle", 30, 0.01, 17, id="ISO4120-triangle-n30-a01"),
    pytest.param("triangle", 30, 0.001, 19, id="ISO4120-triangle-n30-a001"),
    pytest.param("triangle", 6, 0.001, None, id="ISO4120-triangle-n6-a001-none"),
    pytest.param("duo-trio", 10, 0.05, 9, id="ISO10399-duotrio-n10-a05"),
    pytest.param("duo-trio", 12, 0.05, 10, id="ISO10399-duotrio-n12-a05"),
    pytest.param("duo-trio", 16, 0.05, 12, id="ISO10399-duotrio-n16-a05"),
    pytest.param("duo-trio", 20, 0.05, 15, id="ISO10399-duotrio-n20-a05"),
    pytest.param("duo-trio", 30, 0.05, 20, id="ISO10399-duotrio-n30-a05"),
    pytest.param("duo-trio", 40, 0.05, 26, id="Roessler1978-duotrio-n40-a05"),
    pytest.param("duo-trio", 50, 0.05, 32, id="Roessler1978-duotrio-n50-a05"),
    pytest.param("2afc", 20, 0.05, 15, id="ISO5495-one-sided-2afc-n20-a05"),
    pytest.param("2afc", 30, 0.05, 20, id="ISO5495-one-sided-2afc-n30-a05"),
    pytest.param("2afc", 30, 0.01, 22, id="ISO5495-one-sided-2afc-n30-a01"),
    pytest.param("paired-preference", 20, 0.05, 15, id="ISO5495-two-sided-pref-n20-a05"),
    pytest.param("paired-preference", 30, 0.05, 21, id="ISO5495-two-sided-pref-n30-a05"),
    pytest.param("paired-preference", 40, 0.05, 27, id="Roessler1978-pref-n40-a05"),
    pytest.param("paired-preference", 50, 0.05, 33, id="Roessler1978-pref-n50-a05"),
    pytest.param("paired-preference", 30, 0.01, 23, id="Roessler1978-pref-n30-a01"),
]


# Triangle table read from a public copy of a handbook: FAO, "Appendix A. Triangle Test
# for Difference: Critical Number (Minimum) of Correct Answers", fao.org/docrep/v7180e
# (columns: significance 10 %, 5 %, 1 %, 0.1 %; "-" = no count reaches it).
FAO_TRIANGLE_ALPHAS = (0.10, 0.05, 0.01, 0.001)
FAO_TRIANGLE = {
    3: (3, 3, None, None), 5: (4, 4, 5, None), 7: (5, 5, 6, 7), 8: (5, 6, 7, 8),
    12: (7, 8, 9, 10), 18: (10, 10, 12, 13), 24: (12, 13, 15, 16), 30: (14, 15, 17, 19),
    33: (15, 17, 18, 21), 36: (17, 18, 20, 22), 42: (19, 20, 22, 25), 48: (21, 22, 25, 27),
    54: (23, 25, 27, 30), 60: (26, 27, 30, 33), 66: (28, 29, 32, 35), 72: (30, 32, 34, 38),
    78: (32, 34, 37, 40), 84: (35, 36, 39, 43), 90: (37, 38, 42, 45), 96: (39, 41, 44, 48),
}
# Duo-trio table read from a public copy of GOST ISO 10399-2015, annex A, table A.1 (the
# identical national adoption of ISO 10399; its note says the values are exact binomial).
# Columns alpha 0.20, 0.10, 0.05, 0.01, 0.001. Row n = 22 is left out: in the copy read,
# its text repeats row 21 and is not legible.
ISO10399_ALPHAS = (0.20, 0.10, 0.05, 0.01, 0.001)
ISO10399_DUOTRIO = {
    6: (5, 6, 6, None, None), 7: (6, 6, 7, 7, None), 10: (7, 8, 9, 10, 10),
    11: (8, 9, 9, 10, 11), 12: (8, 9, 10, 11, 12), 13: (9, 10, 10, 12, 13),
    16: (11, 12, 12, 14, 15), 21: (13, 14, 15, 17, 18), 25: (16, 17, 18, 19, 21),
    26: (16, 17, 18, 20, 22), 30: (18, 20, 20, 22, 24), 32: (19, 21, 22, 24, 26),
    36: (22, 23, 24, 26, 28), 40: (24, 25, 26, 28, 31), 48: (28, 29, 31, 33, 36),
    60: (34, 36, 37, 40, 43), 72: (41, 42, 44, 47, 50), 88: (49, 51, 53, 56, 59),
}
PUBLISHED += [
    pytest.param("triangle", n, a, row[j], id=f"FAO-V7180E-AppendixA-triangle-n{n}-a{a}")
    for n, row in FAO_TRIANGLE.items() for j, a in enumerate(FAO_TRIANGLE_ALPHAS)
] + [
    pytest.param("duo-trio", n, a, row[j], id=f"GOST-ISO10399-2015-A1-duotrio-n{n}-a{a}")
    for n, row in ISO10399_DUOTRIO.items() for j, a in enumerate(ISO10399_ALPHAS)
]


@pytest.mark.parametrize(("method", "n", "alpha", "expected"), PUBLISHED)
def test_critical_value_matches_the_published_table_row(method, n, alpha, expected):
    assert brute_critical(n, method, alpha) == expected  # the row itself is exact binomial
    assert critical_value(n, method=method, alpha=alpha).critical == expected


@pytest.mark.slow
@pytest.mark.parametrize("method", FORCED_CHOICE)
@pytest.mark.parametrize("alpha", ALPHAS)
def test_critical_value_equals_a_binomtest_search_for_every_small_panel(method, alpha):
    # every n to 30 holds each method's last panel too small to reach alpha (at 0.001:
    # 2-AFC up to 9, paired preference up to 10); 45 and 60 check larger panels, and the
    # defining inequality is checked for every n to 1000 below
    for n in [*range(1, 31), 45, 60]:
        assert critical_value(n, method=method, alpha=alpha).critical == brute_critical(
            n, method, alpha), n


@pytest.mark.parametrize("method", FORCED_CHOICE)
def test_critical_table_satisfies_the_defining_inequality_up_to_a_thousand(method):
    spec = get_method(method)
    ns = np.arange(1, 1001)
    arr = critical_array(ns, ALPHAS, method=method)
    for j, alpha in enumerate(ALPHAS):
        a = alpha / spec.sides
        c = arr[:, j]
        has = c <= ns
        # P(X >= c) <= a < P(X >= c - 1), by the survival function at every n; an exact
        # tie counts as reaching a (two-out-of-five, n = 2: P(X >= 2) = 0.1**2 = 0.01,
        # which the survival function rounds to 0.010000000000000002)
        assert np.all(stats.binom.sf(c[has] - 1, ns[has], spec.guess) <= a * (1 + TIE_TOLERANCE))
        assert np.all(stats.binom.sf(c[has] - 2, ns[has], spec.guess) > a)
        assert np.all(stats.binom.pmf(ns[~has], ns[~has], spec.guess) > a)


def test_critical_table_rows_agree_with_critical_value_and_frame():
    table = critical_table(range(5, 41), ALPHAS, method="triangle")
    for i, n in enumerate(table.ns):
        for j, alpha in enumerate(table.alphas):
            assert table.critical[i][j] == critical_value(n, method="triangle",
                                                          alpha=alpha).critical
    frame = table.to_frame()
    assert frame.loc[24, "0.05"] == 13
    assert frame.shape == (36, 5)
    assert table.to_dict()["critical"][0][4] is None  # n = 5 cannot reach 0.001


@pytest.mark.parametrize(("ns", "quoted"), [([0, 5], "[0]"), ([2.5], "[2.5]"), (["a"], "'a'"),
                                            ([], "[]")])
def test_critical_table_refuses_bad_panel_sizes(ns, quoted):
    with pytest.raises(TrialsError, match=re.escape(quoted)):
        critical_table(ns, method="triangle")


def test_critical_table_defaults_are_the_app_table():
    table = critical_table(method="duo-trio")
    assert table.ns[0] == 5 and table.ns[-1] == 200
    assert table.alphas == ALPHAS


# ------------------------------------------------------------- difference test


@pytest.mark.parametrize("method", DISCRIMINATION)
@pytest.mark.parametrize("n", [1, 7, 24, 60])
def test_difference_p_value_equals_scipy_binomtest_greater_including_k0_and_kn(method, n):
    p0 = get_method(method).guess
    for k in sorted({0, 1, n // 2, n - 1, n}):
        res = difference_test(k, n, method=method)
        ref = stats.binomtest(k, n, p0, alternative="greater").pvalue
        assert res.p_value == pytest.approx(ref, rel=1e-12, abs=1e-300)
        assert res.significant == (ref <= 0.05)
    assert difference_test(0, n, method=method).p_value == pytest.approx(1.0)
    assert difference_test(n, n, method=method).p_value == pytest.approx(p0**n)


@pytest.mark.parametrize("n", [1, 2, 9, 20, 31])
def test_paired_preference_p_value_is_scipy_two_sided(n):
    for k in range(math.ceil(n / 2), n + 1):
        res = difference_test(k, n, method="paired-preference")
        ref = stats.binomtest(k, n, 0.5, alternative="two-sided").pvalue
        assert res.p_value == pytest.approx(ref, rel=1e-12)


def test_paired_preference_refuses_the_count_of_the_less_chosen_sample():
    with pytest.raises(TrialsError, match="more-chosen.*7"):
        difference_test(7, 20, method="paired-preference")


def test_difference_intervals_are_statsmodels_clopper_pearson_transformed():
    res = difference_test(13, 24, method="triangle", level=0.90)
    lo, hi = proportion_confint(13, 24, alpha=0.10, method="beta")
    p0 = 1 / 3
    assert res.pd_ci[0] == pytest.approx(max(0.0, (lo - p0) / (1 - p0)), abs=1e-10)
    assert res.pd_ci[1] == pytest.approx((hi - p0) / (1 - p0), abs=1e-10)
    assert res.ci_method == CI_METHOD and "Clopper-Pearson" in res.ci_method
    from trials.stats.thurstonian import dprime_from_pc

    assert res.dprime_ci[1] == pytest.approx(dprime_from_pc(hi, method="triangle"), abs=1e-8)
    assert res.pd == pytest.approx((13 / 24 - p0) / (1 - p0))
    assert res.critical == 13 and res.significant


def test_difference_below_chance_floors_pd_and_dprime_at_zero():
    res = difference_test(3, 30, method="triangle")
    assert res.pd == 0.0 and res.dprime == 0.0 and res.pd_ci[0] == 0.0
    assert res.dprime_se is None
    assert "chance" in res.note


def test_difference_all_correct_reports_the_capped_dprime():
    res = difference_test(20, 20, method="duo-trio")
    assert res.pc == 1.0 and res.pd == 1.0 and res.pd_ci[1] == 1.0
    assert res.dprime == 15.0 and "capped" in res.note
    assert res.dprime_ci[0] > 1.5


def test_difference_to_dict_has_the_cli_keys():
    keys = set(difference_test(13, 24, method="triangle").to_dict())
    assert {"method", "n", "correct", "alpha", "p_value", "significant", "critical", "pc",
            "pd", "pd_ci", "dprime", "dprime_ci", "ci_method"} <= keys


def test_dprime_standard_error_matches_a_simulation_of_the_estimator():
    # Independent computation: the spread of d' estimates of seeded binomial panels.
    from trials.stats.thurstonian import dprime_from_pc, pc_from_dprime

    n, d_true = 400, 1.5
    pc = pc_from_dprime(d_true, method="triangle")
    res = difference_test(round(pc * n), n, method="triangle")
    rng = np.random.default_rng(20261202)
    est = dprime_from_pc(rng.binomial(n, pc, size=20000) / n, method="triangle")
    assert res.dprime_se == pytest.approx(np.std(est), rel=0.08)


def test_no_preference_answers_split_equally_or_are_dropped():
    split = no_preference_counts(18, 9, 5, rule="split")
    assert (split.first, split.second, split.dropped, split.n) == (20, 11, 1, 31)
    assert split.more_chosen == 20
    drop = no_preference_counts(18, 9, 5, rule="drop")
    assert (drop.first, drop.second, drop.n, drop.dropped) == (18, 9, 27, 5)
    with pytest.raises(TrialsError, match="'halve'"):
        no_preference_counts(1, 1, 1, rule="halve")
    with pytest.raises(TrialsError):
        no_preference_counts(0, 0, 1, rule="split")


# ------------------------------------------------------------- similarity test


def brute_max_correct(n: int, p_max: float, beta: float) -> int | None:
    best = None
    for x in range(n + 1):
        if sum(stats.binom.pmf(k, n, p_max) for k in range(x + 1)) <= beta:
            best = x
    return best


@pytest.mark.parametrize("method", FORCED_CHOICE)
@pytest.mark.parametrize(("n", "pd", "beta"), [(30, 0.3, 0.05), (60, 0.2, 0.10), (12, 0.5, 0.2),
                                                (5, 0.1, 0.05)])
def test_similarity_max_correct_equals_a_brute_force_cdf_search(method, n, pd, beta):
    p0 = get_method(method).guess
    p_max = p0 + pd * (1 - p0)
    expected = brute_max_correct(n, p_max, beta)
    start = math.ceil(n / 2) if get_method(method).sides == 2 else 0
    for x in range(start, n + 1):
        res = similarity_test(x, n, method=method, pd=pd, beta=beta)
        assert res.max_correct == expected
        assert res.similar == (expected is not None and x <= expected)
        # the exact upper limit of pd agrees with the decision
        assert res.similar == (res.pd_upper <= pd + 1e-12)


def test_similarity_upper_limit_is_the_one_sided_clopper_pearson_bound():
    res = similarity_test(20, 66, method="triangle", pd=0.3, beta=0.05)
    _, hi = proportion_confint(20, 66, alpha=0.10, method="beta")  # one-sided 95 %
    assert res.pd_upper == pytest.approx(max(0.0, (hi - 1 / 3) / (2 / 3)), abs=1e-10)
    assert res.similar


def test_similarity_with_too_few_panelists_cannot_conclude():
    res = similarity_test(0, 3, method="triangle", pd=0.1, beta=0.05)
    assert res.max_correct is None and not res.similar and "more panelists" in res.note


# ------------------------------------------------------------- power and panel size


def _pmf(k: int, n: int, p: float) -> float:
    return math.comb(n, k) * p**k * (1 - p) ** (n - k)


def brute_power(n: int, method: str, pd: float, alpha: float) -> float:
    """Independent computation in plain Python (math.comb): the critical count by summing
    the upper tail under p0 from x = n down, then the power under p1."""
    spec = get_method(method)
    p0, p1 = spec.guess, spec.guess + pd * (1 - spec.guess)
    tail, c = 0.0, None
    for x in range(n, -1, -1):
        tail += _pmf(x, n, p0)
        if spec.sides * tail > alpha or (spec.sides == 2 and x < n - x):
            break
        c = x
    if c is None:
        return 0.0
    upper = sum(_pmf(k, n, p1) for k in range(c, n + 1))
    lower = sum(_pmf(k, n, p1) for k in range(0, n - c + 1)) if spec.sides == 2 else 0.0
    return upper + lower


@pytest.mark.parametrize("method", FORCED_CHOICE)
def test_power_equals_a_brute_force_sum(method):
    for n in (1, 5, 18, 33):
        assert power(n, method=method, pd=0.4, alpha=0.05).power == pytest.approx(
            brute_power(n, method, 0.4, 0.05), abs=1e-12)


CASES = [("triangle", 0.3, 0.05, 0.20), ("triangle", 0.5, 0.05, 0.05), ("duo-trio", 0.4, 0.05, 0.2),
         ("2afc", 0.3, 0.10, 0.10), ("3afc", 0.25, 0.05, 0.2), ("tetrad", 0.3, 0.01, 0.2),
         ("paired-preference", 0.3, 0.05, 0.2)]


@pytest.mark.parametrize(("method", "pd", "alpha", "beta"), CASES)
def test_panel_size_first_and_stable_agree_with_a_brute_force_scan(method, pd, alpha, beta):
    first = panel_size(pd, method=method, alpha=alpha, beta=beta, definition="first")
    stable = panel_size(pd, method=method, alpha=alpha, beta=beta, definition="stable")
    target = 1 - beta
    scan = [brute_power(n, method, pd, alpha) for n in range(1, 2 * stable.n + 40)]
    first_n = next(i + 1 for i, p in enumerate(scan) if p >= target)
    last_bad = max(i + 1 for i, p in enumerate(scan) if p < target)
    assert first.n == first_n and first.definition == "first"
    assert stable.n == last_bad + 1 and stable.definition == "stable"
    assert first.n <= stable.n and first.n_stable == stable.n
    assert stable.power >= target and first.power >= target
    assert stable.critical == critical_value(stable.n, method=method, alpha=alpha).critical


def test_panel_size_saw_tooth_makes_the_two_definitions_differ():
    # Exact triangle power for pd = 0.5, alpha = 0.05, beta = 0.05 reaches 0.95 and drops
    # again (independent check through power()).
    plan = panel_size(0.5, method="triangle", alpha=0.05, beta=0.05, definition="first")
    assert plan.n < plan.n_stable
    dips = [n for n in range(plan.n, plan.n_stable)
            if power(n, method="triangle", pd=0.5, alpha=0.05).power < 0.95]
    assert dips and max(dips) == plan.n_stable - 1


def test_panel_size_to_dict_has_the_cli_keys():
    keys = set(panel_size(0.3, method="triangle").to_dict())
    assert {"method", "pd", "alpha", "beta", "n", "critical", "power", "definition"} <= keys


def test_panelists_needed_counts_the_rest_of_the_plan():
    plan = panel_size(0.3, method="triangle")
    res = panelists_needed(10, method="triangle", pd=0.3, correct=6)
    assert res.planned == plan.n and res.more == plan.n - 10
    assert res.critical == plan.critical and res.correct_needed == plan.critical - 6
    assert res.reachable
    done = panelists_needed(plan.n + 5, method="triangle", pd=0.3)
    assert (done.more == 0
            and done.critical == critical_value(plan.n + 5, method="triangle").critical)
    with pytest.raises(TrialsError, match="12"):
        panelists_needed(10, method="triangle", pd=0.3, correct=12)


# ------------------------------------------------------------- bad input


@pytest.mark.parametrize(("call", "quoted"), [
    (lambda: critical_value(0, method="triangle"), "0"),
    (lambda: critical_value(10, method="triangle", alpha=1.5), "1.5"),
    (lambda: critical_value(10, method="triangle", alpha=0.0), "0.0"),
    (lambda: critical_value(2.5, method="triangle"), "2.5"),
    (lambda: difference_test(11, 10, method="triangle"), "11"),
    (lambda: difference_test(-1, 10, method="triangle"), "-1"),
    (lambda: difference_test(5, 10, method="triangle", level=95), "95"),
    (lambda: similarity_test(5, 10, method="triangle", pd=1.2), "1.2"),
    (lambda: similarity_test(5, 10, method="triangle", pd=0.3, beta=-0.1), "-0.1"),
    (lambda: panel_size(0.0, method="triangle"), "0.0"),
    (lambda: panel_size(0.3, method="triangle", definition="annex"), "annex"),
    (lambda: critical_value(10, method="rating"), "rating"),
])
def test_bad_input_raises_a_trials_error_quoting_the_value(call, quoted):
    with pytest.raises(TrialsError, match=quoted.replace(".", r"\.").replace("-", r"\-")):
        call()


def test_unknown_method_is_a_trials_error():
    with pytest.raises(UnknownMethodError, match="pentad"):
        difference_test(3, 10, method="pentad")


# ------------------------------------------------------------- properties (hypothesis)

@settings(max_examples=60, deadline=None)
@given(method=st.sampled_from(FORCED_CHOICE), n=st.integers(1, 3000),
       alpha=st.floats(1e-4, 0.5), share=st.floats(0.0, 1.0))
def test_a_count_is_significant_exactly_when_it_reaches_the_critical_value(method, n, alpha, share):
    spec = get_method(method)
    correct = round(share * n)
    if spec.sides == 2:
        correct = max(correct, n - correct)
    res = difference_test(correct, n, method=method, alpha=alpha)
    crit = critical_value(n, method=method, alpha=alpha).critical
    assert res.critical == crit
    assert res.significant == (crit is not None and correct >= crit)


@settings(max_examples=50, deadline=None)
@given(method=st.sampled_from(FORCED_CHOICE), n=st.integers(1, 500),
       a1=st.floats(1e-4, 0.5), a2=st.floats(1e-4, 0.5))
def test_a_smaller_alpha_never_needs_fewer_correct_answers(method, n, a1, a2):
    lo, hi = sorted((a1, a2))
    c_lo = critical_value(n, method=method, alpha=lo).critical
    c_hi = critical_value(n, method=method, alpha=hi).critical
    assert c_lo is None or (c_hi is not None and c_hi <= c_lo)


def test_alpha_equal_to_an_exact_binomial_tail_gives_agreeing_critical_and_significance():
    # issue 16: duo-trio n = 10, alpha = 11/1024 = P(X >= 9 | 1/2) exactly (by hand:
    # (C(10,9) + C(10,10)) / 2**10); 9 correct must be both "needed" and significant
    from fractions import Fraction
    from math import comb

    tail = Fraction(comb(10, 9) + comb(10, 10), 2 ** 10)
    assert tail == Fraction(11, 1024)
    r = difference_test(9, 10, method="duo-trio", alpha=float(tail))
    assert r.critical == 9 and r.significant and r.p_value == float(tail)
    assert not difference_test(8, 10, method="duo-trio", alpha=float(tail)).significant


@pytest.mark.parametrize("method", ["triangle", "duo-trio", "paired-preference"])
def test_every_exact_tail_as_alpha_makes_its_count_the_critical_one(method):
    # brute force with exact fractions: for each n and count c, alpha set to the exact
    # tail of c (two-sided: twice it) must give critical c, c significant, c - 1 not
    from fractions import Fraction
    from math import comb

    guess = {"triangle": Fraction(1, 3), "duo-trio": Fraction(1, 2),
             "paired-preference": Fraction(1, 2)}[method]
    sides = 2 if method == "paired-preference" else 1
    for n in range(5, 41, 5):
        for c in range(n // 2 + 1, n + 1):
            tail = sum(comb(n, k) * guess ** k * (1 - guess) ** (n - k) for k in range(c, n + 1))
            alpha = float(sides * tail)
            if not 1e-6 <= alpha < 1:
                continue
            assert critical_value(n, method=method, alpha=alpha).critical == c, (n, c)
            assert difference_test(c, n, method=method, alpha=alpha).significant, (n, c)
            if c - 1 >= (n + 1) // 2:
                assert not difference_test(c - 1, n, method=method, alpha=alpha).significant
