"""Tukey critical values, pairwise comparisons, Dunnett and the compact letter display."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from trials.errors import TrialsError
from trials.stats.posthoc import (
    compact_letter_display,
    dunnett_test,
    pairwise_comparisons,
    tukey_q,
)


@pytest.mark.parametrize(
    ("alpha", "k", "df", "q"),
    [
        pytest.param(0.05, 3, 10, 3.877, id="Harter-1960-table-q05-k3-df10-from-memory"),
        pytest.param(0.05, 4, 20, 3.958, id="Harter-1960-table-q05-k4-df20-from-memory"),
        pytest.param(0.01, 3, 10, 5.270, id="Harter-1960-table-q01-k3-df10-from-memory"),
        pytest.param(0.05, 5, 30, 4.102, id="Harter-1960-table-q05-k5-df30-from-memory"),
    ],
)
def test_tukey_critical_values_match_the_studentized_range_table(alpha, k, df, q):
    assert tukey_q(alpha, k, df) == pytest.approx(q, abs=0.0006)


def test_two_means_on_infinite_df_give_q_equal_to_root_two_times_the_normal_point():
    # independent check: for k = 2, q = sqrt(2) * z(1 - alpha/2) when df is infinite
    assert tukey_q(0.05, 2, 1e7) == pytest.approx(np.sqrt(2) * stats.norm.ppf(0.975), abs=1e-4)


def test_tukey_with_two_means_is_the_two_sided_t_test():
    # with k = 2, Tukey HSD and Fisher LSD coincide: q = sqrt(2) t
    pairs = pairwise_comparisons({"A": 5.0, "B": 4.0}, np.eye(2) / 10, ms=2.0, df=18)
    (p,) = pairs
    assert p.p_tukey == pytest.approx(p.p_lsd, rel=1e-6)
    assert p.hsd == pytest.approx(p.lsd, rel=1e-6)
    assert p.t == pytest.approx(1.0 / np.sqrt(0.4), rel=1e-12)


def test_pairwise_tukey_p_values_match_scipy_tukey_hsd_for_a_one_way_layout():
    # scipy.stats.tukey_hsd is one-way; fed the one-way MS and df the results must agree
    rng = np.random.default_rng(5)
    groups = [rng.normal(m, 1, size=n) for m, n in [(0, 8), (0.6, 8), (1.5, 8)]]
    ms = sum(((g - g.mean()) ** 2).sum() for g in groups) / (24 - 3)
    means = {name: float(g.mean()) for name, g in zip("ABC", groups)}
    pairs = pairwise_comparisons(means, np.eye(3) / 8, ms=ms, df=21)
    ref = stats.tukey_hsd(*groups)
    for p in pairs:
        i, j = "ABC".index(p.first), "ABC".index(p.second)
        assert p.p_tukey == pytest.approx(ref.pvalue[i, j], abs=1e-6)


def test_dunnett_agrees_with_scipy_for_a_one_way_layout():
    rng = np.random.default_rng(8)
    sizes = [10, 8, 9, 12]
    groups = [rng.normal(m, 1.0, size=n) for m, n in zip([0, 0.3, 1.0, 1.4], sizes)]
    n_total = sum(sizes)
    ms = sum(((g - g.mean()) ** 2).sum() for g in groups) / (n_total - 4)
    means = {name: float(g.mean()) for name, g in zip("CXYZ", groups)}
    v = np.diag([1 / n for n in sizes])
    res = dunnett_test(means, v, ms=ms, df=n_total - 4, control="C", rng=1)
    ref = stats.dunnett(*groups[1:], control=groups[0], rng=1)
    for comp, p_ref, t_ref in zip(res.comparisons, ref.pvalue, ref.statistic):
        assert comp.t == pytest.approx(t_ref, rel=1e-9)
        assert comp.p_value == pytest.approx(p_ref, abs=2e-3)


def test_dunnett_critical_value_for_two_comparisons_on_large_df_from_memory():
    # Dunnett (1955) two-sided table, 2 treatments, df infinite, alpha 0.05: 2.21
    # (from memory); independent check: bivariate normal with correlation 0.5.
    res = dunnett_test({"C": 0.0, "A": 0.0, "B": 0.0}, np.eye(3), ms=1.0, df=1e6, control="C")
    assert res.critical == pytest.approx(2.21, abs=0.01)
    mvn = stats.multivariate_normal(mean=[0, 0], cov=[[1, 0.5], [0.5, 1]])
    c = res.critical
    inside = mvn.cdf([c, c]) - mvn.cdf([-c, c]) - mvn.cdf([c, -c]) + mvn.cdf([-c, -c])
    assert inside == pytest.approx(0.95, abs=2e-3)


def test_dunnett_refuses_an_unknown_control():
    with pytest.raises(TrialsError, match="'Q'"):
        dunnett_test({"A": 1.0, "B": 2.0}, np.eye(2), ms=1.0, df=10, control="Q")


# ---------------------------------------------------------------- letters


def test_a_chain_of_overlapping_means_gets_the_staircase_letters():
    # Piepho (2004), sec. 2: a typical display for four ordered means where only
    # non-neighbours differ (constructed case, not quoted from the paper)
    letters = compact_letter_display("ABCD", [("A", "C"), ("A", "D"), ("B", "D")])
    assert letters == {"A": "a", "B": "ab", "C": "bc", "D": "c"}


def test_no_difference_gives_one_letter_and_all_differences_give_one_each():
    assert compact_letter_display("ABC", []) == {"A": "a", "B": "a", "C": "a"}
    every = list(itertools.combinations("ABC", 2))
    assert compact_letter_display("ABC", every) == {"A": "a", "B": "b", "C": "c"}


def test_a_pattern_that_needs_a_non_contiguous_letter_is_displayed_correctly():
    # A differs from B only, C from D only: the display needs letters shared across gaps
    letters = compact_letter_display("ABCD", [("A", "B"), ("C", "D")])
    _check_display("ABCD", {("A", "B"), ("C", "D")}, letters)
    assert len(set("".join(letters.values()))) == 4


def _check_display(names, different, letters):
    for a, b in itertools.combinations(names, 2):
        share = bool(set(letters[a]) & set(letters[b]))
        declared = (a, b) in different or (b, a) in different
        assert share != declared, (a, b, letters)


@settings(max_examples=200, deadline=None)
@given(st.integers(2, 7).flatmap(
    lambda k: st.tuples(st.just(k),
                        st.sets(st.sampled_from(list(itertools.combinations(range(k), 2)))))
))
def test_letters_are_shared_exactly_by_the_pairs_not_declared_different(case):
    # the defining property of Piepho's (2004) insert-and-absorb display
    k, pairs = case
    names = [f"s{i}" for i in range(k)]
    different = {(names[i], names[j]) for i, j in pairs}
    letters = compact_letter_display(names, different)
    _check_display(names, different, letters)
    assert all(letters[n] for n in names)


# ---------------------------------------------------------------- the quadrature


# Every k and every df of the former full 5 x 8 grid appears at least once: both ends
# of k at df = 1 (the heaviest tail), the largest df before scipy's infinite-df form,
# and every k in that form (df = 1e6), where the tolerance changes.
@pytest.mark.slow
@pytest.mark.parametrize(("k", "df"), [
    (2, 1), (20, 1), (3, 2), (5, 5), (10, 15), (20, 60), (3, 1000), (10, 99_999),
    (2, 1e6), (3, 1e6), (5, 1e6), (10, 1e6), (20, 1e6),
])
def test_studentized_range_quadrature_agrees_with_scipy(k, df):
    from trials.stats.posthoc import studentized_range_cdf

    q = np.linspace(0.2, 8.0, 25)
    # observed: 4e-10 or less below df = 1e5; above it scipy uses its infinite-df form, whose
    # error shrinks as 1/df (observed 2.3e-6 at k = 20, df = 1e6), so allow 5 / df there
    tol = 1e-9 if df < 1e5 else 5.0 / df
    assert np.abs(studentized_range_cdf(q, k, df)
                  - stats.studentized_range.cdf(q, k, df)).max() < tol


@pytest.mark.parametrize("df", [1, 3, 10, 100, 1e5, 1e7, 1e9, np.inf])
def test_studentized_range_of_two_means_is_root_two_times_abs_t(df):
    # exact independent check: the range of two means is sqrt(2) |t|
    from trials.stats.posthoc import studentized_range_cdf

    q = np.linspace(0.1, 9.0, 30)
    exact = 1 - 2 * stats.t.sf(q / np.sqrt(2), df)
    assert np.abs(studentized_range_cdf(q, 2, df) - exact).max() < 1e-8


@pytest.mark.parametrize(("k", "df"), [(3, 10), (4, 21), (10, 1791), (6, 4), (2, 30)])
def test_tukey_q_agrees_with_scipy_ppf(k, df):
    assert tukey_q(0.05, k, df) == pytest.approx(stats.studentized_range.ppf(0.95, k, df), abs=1e-6)


def test_dunnett_probabilities_are_deterministic_and_match_a_fine_qmc_integration():
    # issue 16: the one-factor quadrature (Dunnett 1955) replaces randomised QMC for
    # designs whose comparisons with the control have correlation lambda_i lambda_j.
    # Independent check: scipy's multivariate t with 2,000,000 points (error ~1e-6).
    from trials.stats.posthoc import _one_factor, _one_factor_coverage, _quadrature

    lam = np.array([0.6, 0.7, 0.5, 0.65])
    corr = np.outer(lam, lam)
    np.fill_diagonal(corr, 1.0)
    assert _one_factor(corr) == pytest.approx(lam, abs=1e-12)
    ours = _one_factor_coverage(2.2, lam, 12)
    assert _one_factor_coverage(2.2, lam, 12) == ours  # the same every time
    ref = stats.multivariate_t.cdf(np.full(4, 2.2), shape=corr, df=12,
                                   lower_limit=np.full(4, -2.2), maxpts=2_000_000,
                                   random_state=1)
    assert ours == pytest.approx(ref, abs=2e-5)
    # the rule's own tolerance: three times the nodes change the value by < 1e-10
    y = np.linspace(-9, 9, 1200)
    wy = stats.norm.pdf(y) * (y[1] - y[0])
    chi = stats.chi(12, scale=1 / np.sqrt(12))
    v = np.linspace(np.log(chi.ppf(1e-16)), np.log(chi.isf(1e-16)), 600)
    s = np.exp(v)
    w = chi.pdf(s) * s * (v[1] - v[0])
    r = np.sqrt(1 - lam**2)
    xs, sh = 2.2 * s[:, None, None], lam[None, None, :] * y[None, :, None]
    fine = float(w @ (stats.norm.cdf((xs - sh) / r)
                      - stats.norm.cdf((-xs - sh) / r)).prod(axis=2) @ wy)
    assert abs(ours - fine) < 1e-10
    assert len(_quadrature(12.0)[0]) == 400


def test_dunnett_p_values_near_0_001_agree_with_scipy_to_a_small_relative_error():
    # a balanced one-way layout (correlation 0.5): p-values near 0.001 were off by
    # about 4 % relative with randomised integration; scipy.stats.dunnett with a fixed
    # seed is the independent check, its own QMC error ~1e-5 absolute
    rng = np.random.default_rng(3)
    groups = [rng.normal(m, 1.0, size=15) for m in (0.0, 1.35, 1.4, 0.2)]
    ms = sum(((g - g.mean()) ** 2).sum() for g in groups) / (60 - 4)
    means = {name: float(g.mean()) for name, g in zip("CXYZ", groups)}
    res = dunnett_test(means, np.eye(4) / 15, ms=ms, df=56, control="C")
    ref = stats.dunnett(*groups[1:], control=groups[0], rng=1)
    assert "deterministic" in res.method
    small = [(c.p_value, p) for c, p in zip(res.comparisons, ref.pvalue) if p < 0.01]
    assert small, "the example must hold a p-value near 0.001"
    for ours, theirs in small:
        assert ours == pytest.approx(theirs, rel=0.02, abs=2e-5)
