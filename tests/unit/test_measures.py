"""Batch measures: summaries, one-way ANOVA, correlation and straight-line fit.

Published references: Anscombe (1973), "Graphs in statistical analysis", The American
Statistician 27(1):17-21 (data set I: r = 0.816, y = 3.00 + 0.500 x, printed rounded);
McDonald, Handbook of Biological Statistics, one-way ANOVA of mussel shell shape
(F = 7.12 on 4 and 34 df, P = 2.8e-4; data and figures from memory, the data as
printed in scipy's f_oneway docstring). Each is also cross-checked against scipy and
statsmodels (independent computations).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats as sps

from trials.errors import TrialsError
from trials.model import Batch, Measurement
from trials.stats.measures import (
    batch_table,
    linear_regression,
    one_way_anova,
    pearson_correlation,
    relate,
    relate_to_batches,
    summarise_measures,
)

ANSCOMBE_X = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5]
ANSCOMBE_Y1 = [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68]

MUSSELS = {  # McDonald, Handbook of Biological Statistics (from memory, as in scipy's docs)
    "tillamook": [0.0571, 0.0813, 0.0831, 0.0976, 0.0817, 0.0859, 0.0735, 0.0659, 0.0923, 0.0836],
    "newport": [0.0873, 0.0662, 0.0672, 0.0819, 0.0749, 0.0649, 0.0835, 0.0725],
    "petersburg": [0.0974, 0.1352, 0.0817, 0.1016, 0.0968, 0.1064, 0.105],
    "magadan": [0.1033, 0.0915, 0.0781, 0.0685, 0.0677, 0.0697, 0.0764, 0.0689],
    "tvarminne": [0.0703, 0.1026, 0.0956, 0.0973, 0.1039, 0.1045],
}


@pytest.mark.parametrize("data", [pytest.param(None, id="Anscombe-1973-set-I")])
def test_correlation_and_line_match_anscombe_data_set_one(data):
    c = pearson_correlation(ANSCOMBE_X, ANSCOMBE_Y1)
    line = linear_regression(ANSCOMBE_X, ANSCOMBE_Y1)
    assert c.r == pytest.approx(0.816, abs=0.0005)
    assert line.slope == pytest.approx(0.500, abs=0.0005)
    assert line.intercept == pytest.approx(3.00, abs=0.005)
    assert line.r2 == pytest.approx(0.67, abs=0.005)


def test_correlation_agrees_with_scipy_pearsonr():
    rng = np.random.default_rng(4)
    for n in (3, 4, 5, 12):
        x = rng.normal(size=n)
        y = 0.7 * x + rng.normal(size=n)
        ours = pearson_correlation(x, y)
        ref = sps.pearsonr(x, y)
        assert ours.r == pytest.approx(ref.statistic, rel=1e-12)
        assert ours.p_value == pytest.approx(ref.pvalue, rel=1e-9)


@pytest.mark.parametrize("x,y", [
    pytest.param(ANSCOMBE_X, ANSCOMBE_Y1, id="statsmodels-OLS-Anscombe-I"),
    pytest.param([1.0, 2.0, 3.5], [6.1, 6.9, 7.2], id="statsmodels-OLS-three-samples"),
    pytest.param([0.8, 1.0, 1.2, 1.4], [7.4, 7.0, 6.1, 5.9], id="statsmodels-OLS-four-samples"),
])
def test_regression_agrees_with_statsmodels_ols(x, y):
    ours = linear_regression(x, y)
    fit = sm.OLS(np.asarray(y, float), sm.add_constant(np.asarray(x, float))).fit()
    assert ours.intercept == pytest.approx(fit.params[0], rel=1e-10)
    assert ours.slope == pytest.approx(fit.params[1], rel=1e-10)
    assert ours.r2 == pytest.approx(fit.rsquared, rel=1e-10)
    assert ours.p_value == pytest.approx(fit.pvalues[1], rel=1e-8)
    assert ours.slope_se == pytest.approx(fit.bse[1], rel=1e-10)
    # the slope's test and the correlation's test are the same test
    assert pearson_correlation(x, y).p_value == pytest.approx(ours.p_value, rel=1e-9)


def test_regression_agrees_with_scipy_linregress():
    ref = sps.linregress(ANSCOMBE_X, ANSCOMBE_Y1)
    ours = linear_regression(ANSCOMBE_X, ANSCOMBE_Y1)
    assert ours.slope == pytest.approx(ref.slope, rel=1e-12)
    assert ours.p_value == pytest.approx(ref.pvalue, rel=1e-9)


def test_one_way_anova_matches_the_mussel_example_and_scipy():
    res = one_way_anova(MUSSELS, variable="shell")
    ref = sps.f_oneway(*MUSSELS.values())
    assert (res.df_between, res.df_within) == (4, 34)
    assert res.statistic == pytest.approx(7.12, abs=0.005)  # McDonald, from memory
    assert res.p_value == pytest.approx(2.8e-4, abs=0.05e-4)  # McDonald, from memory
    assert res.statistic == pytest.approx(ref.statistic, rel=1e-10)
    assert res.p_value == pytest.approx(ref.pvalue, rel=1e-8)


def test_one_way_anova_says_why_when_there_is_nothing_to_test():
    one_each = one_way_anova({"a": [1.0], "b": [2.0]})
    assert one_each.statistic is None and "one batch per sample" in one_each.note
    single = one_way_anova({"a": [1.0, 2.0]})
    assert single.p_value is None and "one sample" in single.note
    flat = one_way_anova({"a": [1.0, 1.0], "b": [2.0, 2.0]})
    assert flat.statistic == math.inf and flat.p_value == 0.0


def test_two_points_give_a_line_but_no_test():
    line = linear_regression([1.0, 2.0], [3.0, 5.0])
    assert line.slope == pytest.approx(2.0) and line.intercept == pytest.approx(1.0)
    assert line.p_value is None
    assert pearson_correlation([1.0, 2.0], [3.0, 5.0]).r is None


def test_a_constant_predictor_gives_no_line_and_says_so():
    line = linear_regression([2.0, 2.0, 2.0], [1.0, 2.0, 3.0])
    assert line.slope is None and "does not vary" in line.note


def test_unequal_lengths_are_a_trials_error_quoting_both():
    with pytest.raises(TrialsError, match="3 and 2"):
        pearson_correlation([1, 2, 3], [1, 2])


def _batches():
    def b(sample, label, salt, proof, flour="rye"):
        return Batch(sample, label,
                     settings=(Measurement("proof time", proof, "min"),
                               Measurement("flour", flour)),
                     measures=(Measurement("salt", salt, "g/100 g"),))
    return [
        b("Control loaf", "C1", 1.20, 60), b("Control loaf", "C2", "1,24", 60),
        b("Short proof", "S1", 1.10, 40), b("Short proof", "S2", 1.14, 40),
        b("Low salt", "L1", 0.80, 60), b("Low salt", "L2", 0.84, 60),
    ]


def test_batch_table_keeps_numbers_reads_decimal_commas_and_drops_text():
    frame = batch_table(_batches())
    assert set(frame["variable"]) == {"salt", "proof time"}
    assert frame.loc[frame["batch"] == "C2", "value"].tolist() == [pytest.approx(1.24), 60.0]


def test_summaries_give_mean_sd_n_per_sample_and_an_anova_per_variable():
    summary = summarise_measures(_batches())
    salt = {s.sample: s for s in summary.summaries if s.variable == "salt"}
    assert salt["Control loaf"].mean == pytest.approx(1.22)
    assert salt["Control loaf"].sd == pytest.approx(np.std([1.20, 1.24], ddof=1))
    assert salt["Low salt"].n == 2 and salt["Control loaf"].unit == "g/100 g"
    anova = {a.variable: a for a in summary.anovas}
    ref = sps.f_oneway([1.20, 1.24], [1.10, 1.14], [0.80, 0.84])
    assert anova["salt"].statistic == pytest.approx(ref.statistic, rel=1e-9)
    assert anova["salt"].p_value == pytest.approx(ref.pvalue, rel=1e-8)
    assert list(summary.to_frame().columns) == [
        "variable", "unit", "kind", "sample", "n", "mean", "sd"]
    assert summary.to_dict()["summaries"][0]["variable"] == "salt"


def test_a_value_in_a_unit_that_cannot_be_converted_is_left_out_and_named():
    bad = [Batch("A", "1", measures=(Measurement("salt", 1.0, "g"),)),
           Batch("B", "2", measures=(Measurement("salt", 1.0, "%"),))]
    summary = summarise_measures(bad)
    assert [(s.sample, s.unit) for s in summary.summaries] == [("A", "g")]
    assert summary.notes == ("'salt': values in '%' left out, because they cannot be "
                             "stated in 'g'",)


def test_values_in_convertible_units_are_stated_in_the_first_unit():
    # 1 kg = 1000 g and T(K) = T(degC) + 273.15: SI definitions (BIPM, The International
    # System of Units, 9th ed., 2019, tables 6 and 2.3.1), not a tolerance of the code.
    mixed = [Batch("A", "1", measures=(Measurement("weight", 950.0, "g"),),
                   settings=(Measurement("oven", 180.0, "degC"),)),
             Batch("A", "2", measures=(Measurement("weight", 1.05, "kg"),),
                   settings=(Measurement("oven", 453.15, "K"),)),
             Batch("B", "3", measures=(Measurement("weight", 900.0, "g"),),
                   settings=(Measurement("oven", 190.0, "°C"),))]
    summary = summarise_measures(mixed)
    by = {(s.variable, s.sample): s for s in summary.summaries}
    assert by[("weight", "A")].unit == "g"
    assert by[("weight", "A")].mean == pytest.approx((950.0 + 1050.0) / 2, rel=1e-12)
    assert by[("oven", "A")].unit == "degC"
    assert by[("oven", "A")].mean == pytest.approx(180.0, rel=1e-12)
    assert by[("oven", "B")].mean == pytest.approx(190.0, rel=1e-12)
    assert summary.notes == ()


def test_relations_pair_each_sample_mean_with_its_batches_and_skip_flat_variables():
    summary = summarise_measures(_batches())
    liking = {"Control loaf": 7.1, "Short proof": 6.8, "Low salt": 5.9}
    rels = {r.predictor: r for r in relate_to_batches(liking, summary, outcome="liking")}
    assert set(rels) == {"salt", "proof time"}
    salt = rels["salt"]
    means = summary.sample_means("salt")
    x = [means[s] for s in liking]
    ref = sps.linregress(x, list(liking.values()))
    assert salt.regression.slope == pytest.approx(ref.slope, rel=1e-10)
    assert salt.correlation.r == pytest.approx(ref.rvalue, rel=1e-10)
    assert "not proof" in salt.note
    direct = relate(liking, means, outcome="liking", predictor="salt")
    assert direct.samples == ("Control loaf", "Short proof", "Low salt")


def test_a_constant_response_has_no_r2_rather_than_a_perfect_fit():
    # r2 = S_xy^2 / (S_xx S_yy) is 0/0 when y does not vary (Draper and Smith 1998,
    # ch. 1); statsmodels' OLS reports nan for it, the independent check here
    x, y = [1.0, 2.0, 3.0, 4.0], [6.0, 6.0, 6.0, 6.0]
    line = linear_regression(x, y)
    fit = sm.OLS(np.array(y), sm.add_constant(np.array(x))).fit()
    with pytest.warns(RuntimeWarning):  # statsmodels divides 0 by 0 for it
        assert math.isnan(fit.rsquared)
    assert line.r2 is None and line.p_value is None
    assert "r2 is undefined" in line.note
    assert line.slope == 0.0 and line.intercept == pytest.approx(6.0)
