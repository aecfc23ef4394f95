"""Decision texts: the numbers quoted equal the trials.stats results, the limits are
stated, and "not significant" is never written as "similar" unless a similarity test
was planned. Expected numbers are recomputed here with trials.stats and, for the
binomial tails, with scipy (independent computation)."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from scipy import stats as sps

from tests.unit.test_analysis import (
    SAMPLES3,
    TRIANGLE_24,
    batches3,
    choose,
    cups,
    plan_for,
    rating_trial,
    study,
    triangle_answers,
)
from trials.analysis import analyse
from trials.decision import Verdict, decide, decision_text, fmt, fmt_p
from trials.model import Answer, PlanEntry, Sample, Trial
from trials.stats.discrimination import difference_test, similarity_test
from trials.stats.power import power


@pytest.mark.parametrize("p,text", [(0.003229, "p = 0.003"), (0.0004, "p < 0.001"),
                                    (0.5, "p = 0.500"), (None, "p not available")])
def test_p_values_are_written_to_three_decimals(p, text):
    assert fmt_p(p) == text


def test_a_significant_triangle_states_counts_p_critical_estimates_and_source():
    plan = plan_for("triangle", TRIANGLE_24)
    d = decide(analyse(study("triangle", pd=0.3), plan, triangle_answers(plan, 15)))
    ref = difference_test(15, 24, method="triangle", alpha=0.05)
    assert d.verdict == Verdict.DIFFERENCE
    assert d.numbers["p_value"] == ref.p_value == pytest.approx(sps.binom.sf(14, 24, 1 / 3))
    assert d.numbers["pd_ci"] == tuple(ref.pd_ci) and d.numbers["dprime"] == ref.dprime
    assert d.headline.startswith("Panelists told the samples apart: 15 of 24 picked the odd sample")
    assert f"{fmt_p(ref.p_value)}; {ref.critical} needed at alpha 0.05" in d.headline
    assert "ISO 4120" in d.headline
    details = " ".join(d.details)
    assert f"proportion of discriminators {fmt(ref.pd)}" in details
    assert f"{fmt(ref.pd_ci[0])} to {fmt(ref.pd_ci[1])}" in details
    assert f"d' {fmt(ref.dprime, 1)}" in details and "Clopper-Pearson" in details
    assert any("alpha 0.05" in x and "beta 0.2" in x for x in d.limits)
    json.dumps(d.to_dict())


def test_a_non_significant_difference_test_is_not_called_similar_and_gives_power():
    plan = plan_for("triangle", TRIANGLE_24)
    d = decide(analyse(study("triangle", pd=0.3), plan, triangle_answers(plan, 9)))
    assert d.verdict == Verdict.NO_DIFFERENCE
    assert "similar" not in d.headline.lower()
    limits = " ".join(d.limits)
    assert "Not significant is not the same as similar" in limits
    pw = power(24, method="triangle", pd=0.3, alpha=0.05).power
    assert f"a {fmt(pw)} chance (power)" in limits


def test_a_planned_similarity_test_decides_with_its_beta_and_pd():
    plan = plan_for("triangle", TRIANGLE_24 * 3)
    s = study("triangle", aim="similarity", pd=0.3, beta=0.05)
    d = decide(analyse(s, plan, triangle_answers(plan, 26)))
    ref = similarity_test(26, 72, method="triangle", pd=0.3, beta=0.05)
    assert d.verdict == (Verdict.SIMILAR if ref.similar else Verdict.NOT_SIMILAR)
    assert d.numbers["max_correct"] == ref.max_correct and d.numbers["pd_upper"] == ref.pd_upper
    assert f"at most {ref.max_correct} correct allowed" in d.headline
    assert f"{fmt(ref.pd_upper)} (planned limit 0.30)" in d.details[0]
    assert any("beta 0.05 (calling the samples similar" in x for x in d.limits)


def test_too_many_correct_answers_fail_the_similarity_test():
    plan = plan_for("triangle", TRIANGLE_24)
    s = study("triangle", aim="similarity", pd=0.2, beta=0.05)
    d = decide(analyse(s, plan, triangle_answers(plan, 12)))
    assert not similarity_test(12, 24, method="triangle", pd=0.2, beta=0.05).similar
    assert d.verdict == Verdict.NOT_SIMILAR and d.headline.startswith("Similarity was not shown")


def test_two_afc_names_the_target_sample():
    plan = plan_for("2afc", ["AB", "BA"] * 10)
    answers = [choose(p, next(c.code for c in cups(plan, p) if c.sample_name == "New crumb"))
               for p in dict.fromkeys(e.panelist_code for e in plan)]
    d = decide(analyse(study("2afc"), plan, answers))
    assert "20 of 20 picked New crumb as having more" in d.headline
    assert d.numbers["p_value"] == pytest.approx(0.5 ** 20)  # exact binomial tail, by hand
    assert any("no pd was stated" in x for x in d.limits)


def test_paired_preference_names_the_preferred_sample_and_the_no_preference_rule():
    plan = plan_for("paired-preference", ["AB", "BA"] * 15)
    answers = []
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        if i < 2:
            answers.append(Answer("S1", p, "", "choice", "no preference"))
        else:
            want = "New crumb" if i < 25 else "Old crumb"
            answers.append(choose(p, next(c.code for c in cups(plan, p) if c.sample_name == want)))
    d = decide(analyse(study("paired-preference"), plan, answers))
    ref = difference_test(24, 30, method="paired-preference")  # 23 + 1 of the split 2
    assert d.verdict == Verdict.PREFERENCE
    assert d.headline.startswith(
        "Panelists preferred New crumb: 24 of 30 chose it after 2 'no preference'")
    assert d.numbers["p_value"] == ref.p_value == pytest.approx(2 * sps.binom.sf(23, 30, 0.5))


def _preference_answers(plan, new_count):
    out = []
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        want = "New crumb" if i < new_count else "Old crumb"
        out.append(choose(p, next(c.code for c in cups(plan, p) if c.sample_name == want)))
    return out


def _tost_max_correct(n, pd, beta):
    """The equivalence bound by brute force with exact integers (no scipy): the largest
    x with P(X <= x) <= beta under p_max = 1/2 + pd/2 (two one-sided tests on the
    more-chosen share; ASTM E2263 / ISO 5495's two-sided paired comparison)."""
    from fractions import Fraction
    from math import comb

    p = Fraction(1, 2) + Fraction(pd).limit_denominator(1000) / 2
    best, tail = None, Fraction(0)
    for x in range(n + 1):
        tail += comb(n, x) * p ** x * (1 - p) ** (n - x)
        if tail > Fraction(beta).limit_denominator(10 ** 6):
            break
        best = x
    return best


@pytest.mark.parametrize("new_count,similar", [(52, True), (62, False)],
                         ids=["52-of-100-equal", "62-of-100-not-shown"])
def test_paired_preference_planned_as_similarity_is_decided_by_the_equivalence_test(
        new_count, similar):
    # issue 16: the decision used to say "no preference shown" and "no similarity test was
    # planned" while quoting the planned beta
    import html

    from trials.printing.report import report_html

    plan = plan_for("paired-preference", ["AB", "BA"] * 50)
    s = study("paired-preference", aim="similarity", pd=0.3, beta=0.05)
    analysis = analyse(s, plan, _preference_answers(plan, new_count))
    d = decide(analysis)
    assert html.escape(d.headline, quote=False) in report_html(s, analysis, plan=plan)
    bound = _tost_max_correct(100, 0.3, 0.05)
    ref = similarity_test(new_count, 100, method="paired-preference", pd=0.3, beta=0.05)
    assert ref.max_correct == bound  # the library against exact integers
    assert ref.similar is similar and (new_count <= bound) is similar
    assert d.verdict == (Verdict.SIMILAR if similar else Verdict.NOT_SIMILAR)
    assert d.numbers["max_correct"] == bound and d.numbers["beta"] == 0.05
    assert f"at most {bound} allowed for equivalence at beta 0.05 and pd 0.30" in d.headline
    assert "two one-sided exact binomial tests" in d.headline and "0.650" in d.headline
    assert f"{fmt(ref.pd_upper)} (planned limit 0.30)" in d.details[0]
    text = d.text
    assert "no similarity test" not in text and "No preference was shown" not in text
    assert "have a preference" in " ".join(d.limits)


def test_ratings_name_the_differing_attributes_letters_hsd_and_error_term():
    from trials.stats.ratings import rating_anova

    s, plan, responses, truth = rating_trial()
    a = analyse(s, plan, responses, batches=batches3())
    d = decide(a, study=Trial(name="x", method="rating", delta=0.5))
    ref = rating_anova(truth[truth["attribute"] == "liking"])
    row = ref.term("sample")
    assert d.verdict == (Verdict.DIFFERENCE if row.p <= 0.05 else Verdict.NO_DIFFERENCE)
    assert d.numbers["liking"]["F"] == row.F and d.numbers["liking"]["hsd"] == ref.hsd
    liking = next(x for x in d.details if x.startswith("liking:"))
    assert f"F = {fmt(row.F)} on 2 and 14 df" in liking
    assert f"Tukey HSD {fmt(ref.hsd)}" in liking and "the residual error" in liking
    for sample, letters in ref.groups.items():
        assert f"{sample} {fmt(ref.means[sample], 1)} {letters}" in liking
    assert any("0.50" in x for x in d.limits)  # delta quoted
    assert any("not proof" in x for x in d.details)


def test_no_answers_give_a_decision_that_says_so():
    for method in ("triangle", "rating", "ranking"):
        d = decide(analyse(study(method), plan_for("triangle", ["AAB"]), []))
        assert d.verdict == Verdict.NO_ANSWERS and "no answers yet" in d.headline
    assert "no answers yet" in decision_text(analyse(study("tetrad"), [], []))


def test_ranking_decision_quotes_friedman_and_rank_sums():
    s = Trial(name="Ranks", method="ranking", samples=SAMPLES3)
    plan, responses, code = [], [], 500
    for p in range(9):
        for pos, sample in enumerate(SAMPLES3, start=1):
            plan.append(PlanEntry("S1", f"P{p}", pos, str(code), sample.name, 0))
            rank = pos if p % 4 else 4 - pos
            responses.append(Answer("S1", f"P{p}", str(code), "rank", str(rank)))
            code += 1
    a = analyse(s, plan, responses)
    d = decide(a)
    r = a.ranking.result
    ref = sps.friedmanchisquare([1 if p % 4 else 3 for p in range(9)],
                                [2] * 9, [3 if p % 4 else 1 for p in range(9)])
    assert d.numbers["statistic"] == pytest.approx(ref.statistic)
    assert f"Friedman chi-square = {fmt(r.statistic)} on 2 df" in d.headline
    assert "ISO 8587" in d.headline and "rank 1 = most" in " ".join(d.details)
    assert "Friedman (1937)" in d.headline and "Friedman (1937)" in d.reference
    assert "Durbin" not in d.headline + d.reference


def ice_cream_ranking_trial():
    """Conover (1999) sec. 5.8 ice cream trial (from memory) as a ranking trial: 7 judges
    each rank 3 of 7 samples, a balanced incomplete block design."""
    bib = pd.read_csv(Path(__file__).parent / "data" / "durbin_ice_cream.csv")
    s = Trial(name="Ice cream", method="ranking", samples=tuple(Sample(x) for x in "ABCDEFG"))
    plan, responses = [], []
    for code, row in enumerate(bib.itertuples(), start=100):
        position = int((bib.panelist.iloc[: code - 99] == row.panelist).sum())
        plan.append(PlanEntry("S1", row.panelist, position, str(code), row.sample, 0))
        responses.append(Answer("S1", row.panelist, str(code), "rank", str(row.rank)))
    return s, plan, responses


def test_an_incomplete_block_ranking_decision_names_durbin_and_cites_durbin_1951():
    s, plan, responses = ice_cream_ranking_trial()
    a = analyse(s, plan, responses)
    d = decide(a)
    assert a.ranking.result.test == "durbin"
    assert d.numbers["statistic"] == pytest.approx(12.0)  # Conover (1999), from memory
    assert f"Durbin chi-square = {fmt(12.0)} on 6 df" in d.headline
    assert "Durbin (1951)" in d.headline and "Durbin (1951)" in d.reference
    assert "Friedman" not in d.headline + d.reference


def test_a_ranking_decision_names_the_form_used_and_gives_the_other():
    # Conover (1999) sec. 5.8 (from memory): chi-square p = 0.062, F p = 0.0049; the
    # tails recomputed with scipy. The decision uses the chi-square form (ISO 8587), so
    # it shows no difference, quotes the F form beside it, and compares no pair.
    s, plan, responses = ice_cream_ranking_trial()
    d = decide(analyse(s, plan, responses))
    assert d.verdict == Verdict.NO_DIFFERENCE
    assert d.numbers["p_value"] == pytest.approx(sps.chi2.sf(12.0, 6), rel=1e-9)
    assert d.numbers["f_p_value"] == pytest.approx(sps.f.sf(8.0, 6, 8), rel=1e-9)
    assert f"Durbin chi-square = {fmt(12.0)} on 6 df, p = 0.062" in d.headline
    text = " ".join(d.details)
    assert "uses the chi-square form" in text and "F = 8.00 on 6 and 8 df, p = 0.005" in text
    assert "no pair is compared" in text and "protected LSD, Conover 1999" in text
    assert set(d.numbers["groups"].values()) == {"a"}


def test_a_significant_ranking_says_its_pairs_were_compared_after_the_overall_test():
    s = Trial(name="Ranks", method="ranking", samples=SAMPLES3)
    plan, responses, code = [], [], 500
    for p in range(12):
        for pos, sample in enumerate(SAMPLES3, start=1):
            plan.append(PlanEntry("S1", f"P{p}", pos, str(code), sample.name, 0))
            responses.append(Answer("S1", f"P{p}", str(code), "rank", str(pos)))
            code += 1
    d = decide(analyse(s, plan, responses))
    # every panelist ranks the same way: chi-square = b (k - 1) = 24 (Friedman 1937)
    assert d.numbers["statistic"] == pytest.approx(24.0)
    assert d.verdict == Verdict.DIFFERENCE
    assert "compared only because the overall test is significant" in " ".join(d.details)
    assert sorted(d.numbers["groups"].values()) == ["a", "b", "c"]


def test_the_decision_quotes_only_the_measured_variables_that_follow_the_means():
    s, plan, responses, _truth = rating_trial()
    a = analyse(s, plan, responses, batches=batches3())
    d = decide(a, study=Trial(name="x", method="rating"))
    for at in a.attributes:
        for rel in at.relations:
            line = f"{at.attribute} against {rel.predictor} across"
            quoted = any(x.startswith(line) for x in d.details)
            # Pearson's p (checked against statsmodels in test_measures.py) decides
            assert quoted == (rel.correlation.p_value < a.alpha), (at.attribute, rel.predictor)
