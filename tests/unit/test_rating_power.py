"""Power and panel size of rating trials: Cohen's (1992) table (from memory), the
power classes of statsmodels, a seeded simulation of the block design, and the error
read from a textbook block ANOVA (from memory)."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.stats.power import FTestAnovaPower, TTestPower

from trials.errors import TrialsError
from trials.stats.power import (
    anova_power,
    rating_effect_size,
    rating_error_sd,
    rating_panel_size,
)
from trials.stats.ratings import rating_anova

DATA = Path(__file__).parent / "data"


# Cohen, J. (1992). A power primer. Psychol. Bull. 112:155-159, Table 2 (from memory):
# n per group for the one-way ANOVA at alpha 0.05 and power 0.80, for small (f = .10),
# medium (.25) and large (.40) effects. The table rounds, so the power at the printed n
# is 0.80 within 0.01.
COHEN_1992 = [(2, 0.10, 393), (2, 0.25, 64), (2, 0.40, 26), (3, 0.10, 322), (3, 0.25, 52),
              (3, 0.40, 21), (4, 0.10, 274), (4, 0.25, 45), (4, 0.40, 18)]


@pytest.mark.parametrize("k,f,n", COHEN_1992,
                         ids=[f"cohen1992-table2-{k}groups-f{f}" for k, f, _ in COHEN_1992])
def test_one_way_power_at_cohens_tabled_n_is_080(k, f, n):
    assert anova_power(f, n, samples=k, design="monadic").power == pytest.approx(0.80, abs=0.01)


@pytest.mark.parametrize("k,f,n", [(3, 0.25, 20), (4, 0.4, 11), (6, 0.15, 70)])
def test_one_way_power_equals_statsmodels_ftestanovapower(k, f, n):
    # statsmodels FTestAnovaPower: nobs is the total, df_denom = nobs - k_groups
    res = anova_power(f, n, samples=k, alpha=0.05, design="monadic")
    ref = FTestAnovaPower().power(effect_size=f, nobs=n * k, alpha=0.05, k_groups=k)
    assert res.power == pytest.approx(ref, rel=1e-9)
    assert res.df_den == n * k - k


@pytest.mark.parametrize("n,delta,sd", [(10, 1.0, 1.2), (25, 0.5, 1.0), (6, 2.0, 1.5)])
def test_two_samples_in_blocks_is_the_two_sided_paired_t_test_of_statsmodels(n, delta, sd):
    # F(1, n - 1) is t squared: power of the paired t with d = delta / (sd sqrt 2),
    # the sd of a difference of two ratings by the same panelist.
    f = rating_effect_size(delta, sd, samples=2)
    res = anova_power(f, n, samples=2, design="blocked")
    ref = TTestPower().power(effect_size=delta / (sd * math.sqrt(2)), nobs=n, alpha=0.05,
                             alternative="two-sided")
    assert res.power == pytest.approx(ref, rel=1e-8)
    size = rating_panel_size(delta, sd=sd, samples=2)
    solved = TTestPower().solve_power(effect_size=delta / (sd * math.sqrt(2)), alpha=0.05,
                                      power=0.80, alternative="two-sided")
    assert size.n == math.ceil(solved)


def test_block_design_power_agrees_with_a_seeded_simulation():
    # 4 samples, 12 panelists, least favourable means (0, 1, 0.5, 0.5), sd 1, random
    # panelist levels: the share of simulated trials whose blocked F test rejects.
    k, n, delta, sd, reps = 4, 12, 1.0, 1.0, 4000
    planned = anova_power(rating_effect_size(delta, sd, samples=k), n, samples=k)
    rng = np.random.default_rng(20261202)
    tau = np.array([0.0, delta, delta / 2, delta / 2])
    y = (tau[None, None, :] + rng.normal(0, 2.0, size=(reps, n, 1))
         + rng.normal(0, sd, size=(reps, n, k)))
    grand = y.mean(axis=(1, 2), keepdims=True)
    s_mean = y.mean(axis=1, keepdims=True)
    p_mean = y.mean(axis=2, keepdims=True)
    ss_s = n * ((s_mean - grand) ** 2).sum(axis=(1, 2))
    ss_e = ((y - s_mean - p_mean + grand) ** 2).sum(axis=(1, 2))
    f = (ss_s / (k - 1)) / (ss_e / ((k - 1) * (n - 1)))
    rate = float((f > stats.f.isf(0.05, k - 1, (k - 1) * (n - 1))).mean())
    se = math.sqrt(planned.power * (1 - planned.power) / reps)
    assert abs(rate - planned.power) < 4 * se


def test_panel_size_is_the_fewest_panelists_reaching_the_power():
    res = rating_panel_size(1.0, sd=1.2, samples=4, alpha=0.05, beta=0.20)
    f = rating_effect_size(1.0, 1.2, samples=4)
    assert res.power >= 0.80
    assert anova_power(f, res.n - 1, samples=4).power < 0.80
    assert res.effect_size == pytest.approx(1.0 / (1.2 * math.sqrt(8)), rel=1e-12)
    assert res.noncentrality == pytest.approx(res.n * 1.0 / (2 * 1.2**2), rel=1e-12)
    # smaller differences or more error need more panelists
    assert rating_panel_size(0.5, sd=1.2, samples=4).n > res.n
    assert rating_panel_size(1.0, sd=2.0, samples=4).n > res.n
    # monadic: n per sample (k times the panelists) and fewer error df at the same sd
    mono = rating_panel_size(1.0, sd=1.2, samples=4, design="monadic")
    assert mono.n >= res.n and mono.df_den > res.df_den and "per sample" in mono.note


def test_least_favourable_configuration_has_the_smallest_spread():
    # any means with the same largest difference have at least this Cohen's f
    rng = np.random.default_rng(7)
    f0 = rating_effect_size(1.0, 1.0, samples=5)
    for _ in range(200):
        m = np.concatenate([[0.0, 1.0], rng.uniform(0, 1, size=3)])
        assert m.std() >= f0 - 1e-12  # f = sd of the means (ddof 0) / sd


def test_bad_input_is_refused_with_the_value():
    with pytest.raises(TrialsError, match="delta"):
        rating_panel_size(0.0, sd=1.0, samples=3)
    with pytest.raises(TrialsError, match="sd"):
        rating_panel_size(1.0, sd=-1.0, samples=3)
    with pytest.raises(TrialsError, match="design"):
        rating_panel_size(1.0, sd=1.0, samples=3, design="crossover")
    with pytest.raises(TrialsError):
        rating_panel_size(1.0, sd=1.0, samples=1)


def test_error_sd_of_the_textbook_block_anova_from_memory():
    # Montgomery, Design and Analysis of Experiments, Example 4.1 (from memory):
    # SS error 109.89 on 15 df, so MS error 7.33.
    data = pd.read_csv(DATA / "rcbd_vascular_graft.csv", dtype=str)
    err = rating_error_sd(rating_anova(data))
    assert err.sd**2 == pytest.approx(109.89 / 15, abs=0.001)
    assert err.df == 15


def test_error_sd_with_replicates_combines_interaction_and_error():
    rng = np.random.default_rng(3)
    rows = [(f"P{p}", s, r + 1, 5 + rng.normal() + rng.normal(0, 0.8))
            for p in range(8) for s in "ABC" for r in range(3)]
    data = pd.DataFrame(rows, columns=["panelist", "sample", "replicate", "score"])
    anova = rating_anova(data, replicate="replicate")
    err = rating_error_sd(anova)
    ms_sp, ms_e = anova.term("sample:panelist").ms, anova.term("error").ms
    assert err.sd**2 == pytest.approx((ms_sp + 2 * ms_e) / 3, rel=1e-12)
    assert err.df == anova.term("sample:panelist").df
