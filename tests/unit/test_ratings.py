"""ANOVA of ratings with panelist blocks, checked against a textbook example (from
memory), statsmodels ols + anova_lm, and hand formulas."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats.anova import anova_lm

from trials.errors import TrialsError
from trials.stats.ratings import rating_anova

DATA = Path(__file__).parent / "data"


def _random_ratings(panelists=8, samples="ABCD", reps=1, seed=1, effects=(0, 0.5, 1.0, 1.5)):
    rng = np.random.default_rng(seed)
    rows = []
    for p in range(panelists):
        shift = rng.normal(0, 1)
        for s, eff in zip(samples, effects):
            inter = rng.normal(0, 0.5)
            for r in range(reps):
                rows.append((f"P{p:02d}", s, r + 1,
                             round(5 + shift + eff + inter + rng.normal(), 1)))
    return pd.DataFrame(rows, columns=["panelist", "sample", "replicate", "score"])


def _sm_table(data, formula, typ):
    fit = smf.ols(formula, data=data).fit()
    return anova_lm(fit, typ=typ), fit


# ---------------------------------------------------------------- published example


def test_vascular_graft_block_design_matches_the_textbook_table_from_memory():
    # Montgomery, Design and Analysis of Experiments, Example 4.1 (from memory):
    # SS treatments 178.17, SS blocks 192.25, SS error 109.89, F = 8.11, P = 0.0019.
    data = pd.read_csv(DATA / "rcbd_vascular_graft.csv", dtype=str)
    res = rating_anova(data)
    assert res.balanced and res.error_term == "error"
    assert res.term("sample").ss == pytest.approx(178.17, abs=0.005)
    assert res.term("panelist").ss == pytest.approx(192.25, abs=0.005)
    assert res.term("error").ss == pytest.approx(109.89, abs=0.005)
    assert res.term("sample").df == 3 and res.term("error").df == 15
    assert res.term("sample").F == pytest.approx(8.11, abs=0.005)
    assert res.term("sample").p == pytest.approx(0.0019, abs=0.00005)


def test_vascular_graft_block_design_agrees_with_statsmodels_sequential_sums_of_squares():
    data = pd.read_csv(DATA / "rcbd_vascular_graft.csv")
    res = rating_anova(data)
    table, _ = _sm_table(data, "score ~ C(sample) + C(panelist)", 1)
    assert res.term("sample").ss == pytest.approx(table.loc["C(sample)", "sum_sq"], rel=1e-12)
    assert res.term("panelist").ss == pytest.approx(table.loc["C(panelist)", "sum_sq"], rel=1e-12)
    assert res.term("error").ss == pytest.approx(table.loc["Residual", "sum_sq"], rel=1e-12)
    assert res.term("sample").p == pytest.approx(table.loc["C(sample)", "PR(>F)"], rel=1e-9)


def test_tukey_hsd_of_the_block_design_uses_the_block_error_and_the_studentized_range():
    data = pd.read_csv(DATA / "rcbd_vascular_graft.csv")
    res = rating_anova(data)
    ms_e, df_e = res.term("error").ms, res.term("error").df
    q = stats.studentized_range.ppf(0.95, 4, df_e)
    assert res.hsd == pytest.approx(q * np.sqrt(ms_e / 6), rel=1e-12)
    assert res.lsd == pytest.approx(stats.t.ppf(0.975, df_e) * np.sqrt(2 * ms_e / 6), rel=1e-12)
    # means 92.82, 91.68, 88.92, 85.77 and HSD 4.50: only 8500 and 8700 differ from 9100
    assert res.groups == {"p8500": "a", "p8700": "a", "p8900": "ab", "p9100": "b"}
    different = {(p.first, p.second) for p in res.pairs if p.different}
    assert different == {("p8500", "p9100"), ("p8700", "p9100")}


def test_dunnett_against_the_control_matches_the_two_sided_table_value_from_memory():
    # Dunnett (1955) two-sided table, 3 treatments vs control, 15 df, alpha 0.05: 2.61
    # (from memory); the comparisons use the block model's MS and df.
    data = pd.read_csv(DATA / "rcbd_vascular_graft.csv")
    res = rating_anova(data)
    dn = res.dunnett("p8500")
    assert dn.critical == pytest.approx(2.61, abs=0.01)
    assert dn.df == 15
    se = np.sqrt(2 * res.term("error").ms / 6)
    worst = [c for c in dn.comparisons if c.sample == "p9100"][0]
    assert worst.se == pytest.approx(se, rel=1e-12)
    assert worst.different and worst.p_value < 0.01


# ---------------------------------------------------------------- statsmodels


def test_balanced_replicated_ratings_test_samples_against_the_interaction():
    data = _random_ratings(reps=3, seed=4)
    res = rating_anova(data, replicate="replicate")
    table, _ = _sm_table(data, "score ~ C(sample) * C(panelist)", 2)
    sm = {
        "sample": "C(sample)",
        "panelist": "C(panelist)",
        "sample:panelist": "C(sample):C(panelist)",
        "error": "Residual",
    }
    for term, name in sm.items():
        assert res.term(term).ss == pytest.approx(table.loc[name, "sum_sq"], rel=1e-9), term
        assert res.term(term).df == table.loc[name, "df"]
    ms_sp = table.loc["C(sample):C(panelist)", "sum_sq"] / table.loc["C(sample):C(panelist)", "df"]
    f = table.loc["C(sample)", "sum_sq"] / 3 / ms_sp
    assert res.term("sample").F == pytest.approx(f, rel=1e-9)
    assert res.term("sample").p == pytest.approx(stats.f.sf(f, 3, 21), rel=1e-9)
    assert res.error_term == "sample:panelist" and res.df_test == 21
    # the interaction against the within-cell error, as in the fixed-effects table
    assert res.term("sample:panelist").F == pytest.approx(
        table.loc["C(sample):C(panelist)", "F"], rel=1e-9
    )
    assert res.hsd == pytest.approx(
        stats.studentized_range.ppf(0.95, 4, 21) * np.sqrt(ms_sp / (8 * 3)), rel=1e-9
    )


@pytest.mark.parametrize("drop", [[0], [0, 9, 22], [1, 6, 11, 16]],
                         ids=["one-missing", "three-missing", "four-missing"])
def test_incomplete_blocks_give_type_ii_sums_of_squares_and_adjusted_means_as_statsmodels(drop):
    data = _random_ratings(seed=7).drop(index=drop).reset_index(drop=True)
    res = rating_anova(data)
    assert not res.balanced and "type II" in res.method
    table, fit = _sm_table(data, "score ~ C(sample) + C(panelist)", 2)
    assert res.term("sample").ss == pytest.approx(table.loc["C(sample)", "sum_sq"], rel=1e-9)
    assert res.term("panelist").ss == pytest.approx(table.loc["C(panelist)", "sum_sq"], rel=1e-9)
    assert res.term("error").ss == pytest.approx(table.loc["Residual", "sum_sq"], rel=1e-9)
    assert res.term("sample").F == pytest.approx(table.loc["C(sample)", "F"], rel=1e-9)
    # least-squares means: predictions averaged over panelists
    grid = pd.DataFrame(
        [(p, s) for p in data["panelist"].unique() for s in "ABCD"], columns=["panelist", "sample"]
    )
    grid["fit"] = fit.predict(grid)
    lsm = grid.groupby("sample")["fit"].mean()
    for s in "ABCD":
        assert res.means[s] == pytest.approx(lsm[s], rel=1e-9)
    # standard error of an adjusted difference from the OLS covariance
    cov = fit.cov_params()
    c = pd.Series(0.0, index=cov.index)
    c["C(sample)[T.B]"], c["C(sample)[T.C]"] = 1.0, -1.0
    pair = [p for p in res.pairs if {p.first, p.second} == {"B", "C"}][0]
    assert pair.se == pytest.approx(float(np.sqrt(c @ cov @ c)), rel=1e-9)


def test_unequal_replication_gives_type_ii_sums_of_squares_as_statsmodels():
    data = _random_ratings(reps=3, seed=9).drop(index=[0, 5, 17, 40, 77]).reset_index(drop=True)
    res = rating_anova(data, replicate="replicate")
    table, _ = _sm_table(data, "score ~ C(sample) * C(panelist)", 2)
    assert res.term("sample").ss == pytest.approx(table.loc["C(sample)", "sum_sq"], rel=1e-8)
    assert res.term("panelist").ss == pytest.approx(table.loc["C(panelist)", "sum_sq"], rel=1e-8)
    assert res.term("sample:panelist").ss == pytest.approx(
        table.loc["C(sample):C(panelist)", "sum_sq"], rel=1e-8
    )
    assert res.term("error").df == table.loc["Residual", "df"]
    assert "approximation" in res.method


def test_sequential_sums_of_squares_with_panelists_first_equal_the_adjusted_sample_sum():
    # intra-block analysis: SS(sample | panelist) is the type I SS of sample after panelist
    data = _random_ratings(seed=11).drop(index=[3, 12, 25]).reset_index(drop=True)
    res = rating_anova(data)
    table, _ = _sm_table(data, "score ~ C(panelist) + C(sample)", 1)
    assert res.term("sample").ss == pytest.approx(table.loc["C(sample)", "sum_sq"], rel=1e-9)


def test_a_replicate_column_without_repeats_falls_back_to_the_block_model_and_says_so():
    data = _random_ratings(seed=2)
    res = rating_anova(data, replicate="replicate")
    assert [r.term for r in res.anova] == ["sample", "panelist", "error"]
    assert "no panelist rated a sample twice" in res.method


def test_means_standard_errors_and_intervals_of_a_balanced_design():
    data = _random_ratings(seed=3)
    res = rating_anova(data, level=0.90)
    raw = data.groupby("sample")["score"].mean()
    ms, df = res.term("error").ms, res.term("error").df
    for s in "ABCD":
        assert res.means[s] == pytest.approx(raw[s], rel=1e-12)
        assert res.n[s] == 8
        assert res.se[s] == pytest.approx(np.sqrt(ms / 8), rel=1e-12)
        half = stats.t.ppf(0.95, df) * np.sqrt(ms / 8)
        assert res.ci[s] == pytest.approx((raw[s] - half, raw[s] + half), rel=1e-12)


def test_to_dict_carries_the_contract_keys_and_the_term_names():
    res = rating_anova(_random_ratings(reps=2), replicate="replicate").to_dict()
    for key in ("anova", "means", "hsd", "groups", "method", "se", "ci", "n"):
        assert key in res
    assert [r["term"] for r in res["anova"]] == ["sample", "panelist", "sample:panelist", "error"]
    assert set(res["anova"][0]) == {"term", "df", "ss", "ms", "F", "p"}
    assert all(isinstance(v, str) for v in res["groups"].values())


def test_text_columns_as_read_from_a_file_are_converted():
    data = _random_ratings(seed=5)
    as_text = data.astype(str)
    a, b = rating_anova(data), rating_anova(as_text)
    assert a.term("sample").ss == pytest.approx(b.term("sample").ss, rel=1e-12)


# ---------------------------------------------------------------- bad input


def test_a_missing_column_is_named():
    data = _random_ratings().drop(columns="score")
    with pytest.raises(TrialsError, match="missing column.*'score'"):
        rating_anova(data)


def test_a_score_that_is_not_a_number_names_its_line_counting_the_header():
    data = _random_ratings().astype(str)
    data.loc[3, "score"] = "seven"
    with pytest.raises(TrialsError, match=r"line\(s\) 5 .*'seven'"):
        rating_anova(data)


def test_a_blank_score_is_refused_with_its_line():
    data = _random_ratings().astype(str)
    data.loc[0, "score"] = ""
    with pytest.raises(TrialsError, match=r"line\(s\) 2\b"):
        rating_anova(data)


def test_a_score_outside_the_declared_scale_is_refused():
    data = _random_ratings()
    data.loc[10, "score"] = 12.0
    with pytest.raises(TrialsError, match=r"outside the scale 1..9 at line\(s\) 12"):
        rating_anova(data, low=1, high=9)


def test_one_sample_is_refused():
    data = _random_ratings()
    with pytest.raises(TrialsError, match="one sample only"):
        rating_anova(data[data["sample"] == "A"])


def test_one_panelist_is_refused():
    data = _random_ratings()
    with pytest.raises(TrialsError, match="one panelist only"):
        rating_anova(data[data["panelist"] == "P00"])


def test_a_duplicated_panelist_and_sample_names_both_lines():
    data = _random_ratings()
    data = pd.concat([data, data.iloc[[2]]], ignore_index=True)
    with pytest.raises(TrialsError, match=r"more than once at line\(s\) 4, 34"):
        rating_anova(data)


def test_a_duplicated_replicate_row_is_refused():
    data = _random_ratings(reps=2)
    data.loc[1, "replicate"] = 1
    with pytest.raises(TrialsError,
                       match=r"panelist/sample/replicate appears more than once at line\(s\) 2, 3"):
        rating_anova(data, replicate="replicate")


def test_a_disconnected_design_is_refused():
    rows = [("p1", "A", 5), ("p1", "B", 6), ("p2", "A", 4), ("p2", "B", 7),
            ("p3", "C", 5), ("p3", "D", 6), ("p4", "C", 3), ("p4", "D", 6)]
    data = pd.DataFrame(rows, columns=["panelist", "sample", "score"])
    with pytest.raises(TrialsError, match="not connected"):
        rating_anova(data)


@pytest.mark.parametrize("alpha", [0, 1, 1.5, -0.1])
def test_an_alpha_outside_zero_and_one_is_refused(alpha):
    with pytest.raises(TrialsError, match="alpha"):
        rating_anova(_random_ratings(), alpha=alpha)


def test_the_order_of_the_rows_does_not_change_the_analysis():
    data = _random_ratings(reps=2, seed=12).drop(index=[4, 30]).reset_index(drop=True)
    shuffled = data.sample(frac=1.0, random_state=3).reset_index(drop=True)
    a = rating_anova(data, replicate="replicate")
    b = rating_anova(shuffled, replicate="replicate")
    for term in ("sample", "panelist", "sample:panelist", "error"):
        assert a.term(term).ss == pytest.approx(b.term(term).ss, rel=1e-10)
    assert a.groups == b.groups
    for s in "ABCD":
        assert a.means[s] == pytest.approx(b.means[s], rel=1e-12)


@pytest.mark.filterwarnings("ignore:The design matrix is rank-deficient")  # expected: empty cell
def test_a_missing_cell_with_replicates_gives_type_ii_sums_as_nested_model_differences():
    # statsmodels' anova_lm(typ=2) is unreliable on a rank-deficient interaction design
    # (it warns and miscounts df), so compare residual sums of nested OLS fits instead
    data = _random_ratings(reps=2, seed=5)
    data = data[~((data["panelist"] == "P01") & (data["sample"] == "B"))].reset_index(drop=True)
    res = rating_anova(data, replicate="replicate")

    def rss(formula):
        return smf.ols(formula, data=data).fit().ssr

    full, add = rss("score ~ C(sample) * C(panelist)"), rss("score ~ C(sample) + C(panelist)")
    assert res.term("sample").ss == pytest.approx(rss("score ~ C(panelist)") - add, rel=1e-9)
    assert res.term("panelist").ss == pytest.approx(rss("score ~ C(sample)") - add, rel=1e-9)
    assert res.term("sample:panelist").ss == pytest.approx(add - full, rel=1e-9)
    assert res.term("error").ss == pytest.approx(full, rel=1e-9)
    assert res.term("sample:panelist").df == 4 * 8 - 1 - 8 - 4 + 1  # filled cells - b - t + 1
