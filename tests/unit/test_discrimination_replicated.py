"""Replicated forced-choice answers: overdispersion is detected and warned about, the
beta-binomial fit recovers known parameters, and its test keeps its risk."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import stats

from trials.errors import OverdispersionWarning, TrialsError
from trials.stats.replicated import (
    beta_binomial_fit,
    overdispersion_test,
    replicated_difference_test,
)


def beta_binomial_panel(rng, panelists, reps, mu, gamma):
    t = 1 / gamma - 1
    p = rng.beta(mu * t, (1 - mu) * t, size=panelists)
    return rng.binomial(reps, p)


def test_tarone_statistic_matches_a_hand_computation():
    # Independent computation of Tarone (1979), eq. for Z, on a small invented panel.
    x, m = np.array([0, 4, 1, 4, 2, 4]), 4
    p = x.sum() / (m * x.size)
    s = sum((xi - m * p) ** 2 for xi in x) / (p * (1 - p))
    z = (s - m * x.size) / math.sqrt(2 * x.size * m * (m - 1))
    with pytest.warns(OverdispersionWarning, match="overdispersed"):
        res = overdispersion_test(x, m)
    assert res.statistic == pytest.approx(z)
    assert res.p_value == pytest.approx(stats.norm.sf(z))
    assert res.chi2 == pytest.approx(s / m) and res.df == 5


def test_binomial_answers_raise_no_warning_at_about_the_nominal_rate():
    rng = np.random.default_rng(20261202)
    flagged = 0
    reps = 1000
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", OverdispersionWarning)
        for _ in range(reps):
            x = rng.binomial(3, 0.45, size=30)
            flagged += overdispersion_test(x, 3).overdispersed
    # nominal 5 %; the normal approximation is rough: accept 1 % to 9 % (seeded)
    assert 0.01 <= flagged / reps <= 0.09


def test_beta_binomial_answers_are_flagged_most_of_the_time():
    rng = np.random.default_rng(7)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", OverdispersionWarning)
        hits = [overdispersion_test(beta_binomial_panel(rng, 40, 4, 0.5, 0.4), 4).overdispersed
                for _ in range(200)]
    assert np.mean(hits) > 0.9


def test_beta_binomial_fit_recovers_known_parameters_of_a_large_seeded_panel():
    rng = np.random.default_rng(11)
    x = beta_binomial_panel(rng, 4000, 5, 0.6, 0.25)
    fit = beta_binomial_fit(x, 5)
    assert fit.mu == pytest.approx(0.6, abs=0.015)
    assert fit.gamma == pytest.approx(0.25, abs=0.03)
    assert fit.gamma_moment == pytest.approx(0.25, abs=0.04)
    # the maximum is a maximum: nearby parameters are less likely (scipy's betabinom)
    def ll(mu, g):
        t = 1 / g - 1
        return np.sum(stats.betabinom.logpmf(x, 5, mu * t, (1 - mu) * t))
    assert fit.log_likelihood == pytest.approx(ll(fit.mu, fit.gamma))
    for dmu, dg in ((0.01, 0), (-0.01, 0), (0, 0.02), (0, -0.02)):
        assert ll(fit.mu + dmu, fit.gamma + dg) < fit.log_likelihood


def test_fit_of_binomial_data_keeps_gamma_near_zero():
    rng = np.random.default_rng(3)
    fit = beta_binomial_fit(rng.binomial(4, 0.4, size=3000), 4)
    assert fit.gamma < 0.02


def test_replicated_test_with_gamma_zero_is_the_pooled_normal_approximation():
    x, m = [2, 3, 1, 3, 2, 2, 3, 1], 3
    res = replicated_difference_test(x, m, method="triangle", gamma=0.0)
    n, k = 24, sum(x)
    z = (k / n - 1 / 3) / math.sqrt((1 / 3) * (2 / 3) / n)
    assert res.statistic == pytest.approx(z) and res.p_value == pytest.approx(stats.norm.sf(z))
    assert res.inflation == 1.0 and res.effective_n == 24


def test_replicated_test_keeps_alpha_where_the_pooled_binomial_does_not():
    # Under H0 with overdispersed guessing-level answers, the pooled exact binomial test
    # rejects far too often; the beta-binomial test stays near alpha (seeded simulation).
    rng = np.random.default_rng(99)
    pooled = corrected = 0
    reps = 200
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", OverdispersionWarning)
        for _ in range(reps):
            x = beta_binomial_panel(rng, 30, 6, 1 / 3, 0.5)
            pooled += (stats.binomtest(int(x.sum()), 180, 1 / 3, alternative="greater").pvalue
                       <= 0.05)
            corrected += replicated_difference_test(x, 6, method="triangle").significant
    # seeded run: about 0.13 pooled against about 0.05 corrected (nominal 0.05)
    assert pooled / reps > 0.10
    assert corrected / reps < 0.085


def test_replicated_preference_is_two_sided():
    x = [4, 4, 3, 4, 0, 4, 4, 3, 4, 4]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", OverdispersionWarning)
        res = replicated_difference_test(x, 4, method="paired-preference", gamma=0.2)
    assert res.p_value == pytest.approx(2 * stats.norm.sf(abs(res.statistic)))


@pytest.mark.parametrize(("call", "quoted"), [
    (lambda: overdispersion_test([1], 3), r"\[1\]"),
    (lambda: overdispersion_test([1, 5], 3), r"\[1, 5\]"),
    (lambda: overdispersion_test([1, 2], [3, 0]), r"\[3, 0\]"),
    (lambda: overdispersion_test([1, 1], 1), "once"),
    (lambda: beta_binomial_fit([0, 0, 0], 3), "0.0"),
    (lambda: replicated_difference_test([1, 2], 3, method="triangle", gamma=1.5), "1.5"),
    (lambda: replicated_difference_test([1, 2], 3, method="rating"), "rating"),
])
def test_bad_replicated_input_raises_a_trials_error_quoting_the_value(call, quoted):
    with pytest.raises(TrialsError, match=quoted):
        call()
