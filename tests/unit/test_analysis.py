"""From answers to analysis: decoding through the plan, scoring rules, dispatch.

The scoring rules are those of the standards named in trials.methods (ISO 4120
triangle, ISO 10399 duo-trio, ISO 5495 paired comparison, the unspecified tetrad of
Ennis and Jesionka 2011). The statistics themselves are checked in their own modules'
tests; here the analysis must hand the right counts and tables to them, so each test
recomputes the expected count or table independently from the invented data.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from scipy import stats as sps

from trials.analysis import (
    NO_ANSWERS,
    analyse,
    control_trend,
    decode_responses,
    planned_similarity,
    score_choices,
    search_trials,
    target_sample,
)
from trials.errors import TrialsError
from trials.model import (
    Answer,
    Attribute,
    AttributeKind,
    Batch,
    Measurement,
    PlanEntry,
    Sample,
    Trial,
)

OLD, NEW = "Old crumb", "New crumb"


def study(method, **kw):
    samples = kw.pop("samples", (Sample(OLD, is_control=True), Sample(NEW)))
    return Trial(name="Crumb trial", method=method, samples=samples, **kw)


def plan_for(method, patterns, *, reference_role=True):
    """One set per panelist; letter A = the first sample, B = the second."""
    entries, code = [], 101
    for i, pattern in enumerate(patterns):
        for pos, letter in enumerate(pattern, start=1):
            role = "R" if (method == "duo-trio" and pos == 1 and reference_role) else letter
            entries.append(PlanEntry("S1", f"P{i + 1:02d}", pos, str(code),
                                     OLD if letter == "A" else NEW, 0, role))
            code += 1
    return entries


def cups(plan, panelist):
    return [e for e in plan if e.panelist_code == panelist]


def choose(panelist, *codes):
    return Answer("S1", panelist, " ".join(codes), "choice", "")


def triangle_answers(plan, n_correct):
    out = []
    panelists = list(dict.fromkeys(e.panelist_code for e in plan))
    for i, p in enumerate(panelists):
        cs = cups(plan, p)
        samples = [c.sample_name for c in cs]
        odd = next(c for c in cs if samples.count(c.sample_name) == 1)
        other = next(c for c in cs if samples.count(c.sample_name) == 2)
        out.append(choose(p, (odd if i < n_correct else other).code))
    return out


TRIANGLE_24 = ["AAB", "ABA", "BAA", "BBA", "BAB", "ABB"] * 4


def test_triangle_counts_the_odd_cup_as_correct():
    # ISO 4120: the correct answer is the cup that differs from the other two.
    plan = plan_for("triangle", TRIANGLE_24)
    counts = score_choices(study("triangle"), plan, triangle_answers(plan, 15))
    assert (counts.correct, counts.n) == (15, 24)
    assert counts.problems == ()


@pytest.mark.parametrize("with_role", [True, False],
                         ids=["reference-marked-R", "reference-first-cup"])
def test_duo_trio_counts_the_cup_matching_the_reference(with_role):
    # ISO 10399: the correct answer is the coded cup holding the reference's sample.
    patterns = ["AAB", "ABA", "BAB", "BBA"] * 3
    plan = plan_for("duo-trio", patterns, reference_role=with_role)
    answers, expected = [], 0
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        ref, a, b = cups(plan, p)
        match = a if a.sample_name == ref.sample_name else b
        miss = b if match is a else a
        right = i % 3 != 0
        expected += right
        answers.append(choose(p, (match if right else miss).code))
    counts = score_choices(study("duo-trio"), plan, answers)
    assert (counts.correct, counts.n) == (expected, 12)


def test_duo_trio_answer_naming_the_reference_is_left_out_and_named():
    plan = plan_for("duo-trio", ["AAB", "BBA"])
    answers = [choose("P01", cups(plan, "P01")[0].code), choose("P02", cups(plan, "P02")[1].code)]
    counts = score_choices(study("duo-trio"), plan, answers)
    assert counts.n == 1 and counts.correct == 1
    assert any("is the reference" in p for p in counts.problems)


@pytest.mark.parametrize("method,patterns", [("2afc", ["AB", "BA"] * 5),
                                             ("3afc", ["AAB", "ABA", "BAA"] * 4)])
def test_directional_methods_count_choices_of_the_trials_second_sample(method, patterns):
    plan = plan_for(method, patterns)
    s = study(method)
    assert target_sample(s, plan) == NEW
    answers, expected = [], 0
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        cs = cups(plan, p)
        pick = next(c for c in cs if c.sample_name == (NEW if i % 4 else OLD))
        expected += pick.sample_name == NEW
        answers.append(choose(p, pick.code))
    counts = score_choices(s, plan, answers)
    assert (counts.correct, counts.n, counts.target) == (expected, len(patterns), NEW)


def test_tetrad_counts_two_cups_of_one_sample_as_correct():
    patterns = ["AABB", "ABAB", "ABBA", "BAAB", "BABA", "BBAA"] * 2
    plan = plan_for("tetrad", patterns)
    answers, expected = [], 0
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        cs = cups(plan, p)
        a = [c.code for c in cs if c.sample_name == OLD]
        b = [c.code for c in cs if c.sample_name == NEW]
        right = i % 2 == 0
        expected += right
        answers.append(choose(p, *(a if right else [a[0], b[0]])))
    answers.append(choose("P01", cups(plan, "P01")[0].code))  # a second, one-code answer
    counts = score_choices(study("tetrad"), plan, answers)
    # P01's later answer (one code) replaced its first, correct one and was left out
    assert (counts.n, counts.correct) == (11, expected - 1)
    assert any("answered more than once" in p for p in counts.problems)
    assert any("two different cups" in p for p in counts.problems)


def test_paired_preference_counts_per_sample_and_keeps_no_preference_apart():
    plan = plan_for("paired-preference", ["AB", "BA"] * 6)
    answers = []
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        cs = cups(plan, p)
        if i < 2:
            answers.append(Answer("S1", p, "", "choice", "no preference"))
        else:
            want = NEW if i < 9 else OLD
            answers.append(choose(p, next(c.code for c in cs if c.sample_name == want)))
    counts = score_choices(study("paired-preference"), plan, answers)
    assert counts.counts == {OLD: 3, NEW: 7}
    assert (counts.preferred, counts.correct, counts.n, counts.no_preference) == (NEW, 7, 10, 2)


def test_codes_outside_the_plan_are_left_out_and_named():
    plan = plan_for("triangle", ["AAB", "ABA"])
    answers = [choose("P01", "999"), choose("P02", cups(plan, "P02")[1].code)]
    counts = score_choices(study("triangle"), plan, answers)
    assert counts.n == 1 and counts.correct == 1
    assert any("'999'" in p for p in counts.problems)


def test_a_trial_without_answers_says_no_answers_yet():
    plan = plan_for("triangle", TRIANGLE_24)
    result = analyse(study("triangle"), plan, [])
    assert not result.has_answers and result.message == NO_ANSWERS
    assert result.panelists_planned == 24 and result.panelists_answered == 0
    assert result.choice.difference is None and NO_ANSWERS in result.choice.note
    json.dumps(result.to_dict())
    rating = analyse(study("rating", attributes=(Attribute("liking"),)), [], [])
    assert rating.message == NO_ANSWERS and rating.attributes[0].note == NO_ANSWERS
    ranking = analyse(study("ranking"), [], [])
    assert ranking.message == NO_ANSWERS and ranking.ranking.result is None


@pytest.mark.parametrize("aim,objective,expected", [
    ("similarity", "", True),
    ("difference", "Is the new crumb similar to the old one?", False),
    ("", "Check the new supplier's crumb is similar to the old", True),
    ("", "Can tasters tell the new crumb apart?", False),
    ("", "Same as the control?", True),
])
def test_a_trial_states_a_similarity_aim_by_field_or_by_its_objective(aim, objective, expected):
    assert planned_similarity(study("triangle", aim=aim, objective=objective)) is expected


@pytest.mark.parametrize("method,patterns", [("2afc", ["AB", "BA"] * 6),
                                             ("3afc", ["AAB", "ABA", "BAA"] * 4)])
def test_the_stored_target_is_scored_whatever_the_samples_listing_order(method, patterns):
    # the plan's cups of OLD are letter A, of NEW letter B; the trial lists NEW first
    # and names OLD as the target: every answer picking OLD is correct (issue 16)
    plan = plan_for(method, patterns)
    s = study(method, samples=(Sample(NEW), Sample(OLD)), target_sample=OLD)
    assert target_sample(s, plan) == OLD
    answers = [choose(p, next(c for c in cups(plan, p) if c.sample_name == OLD).code)
               for p in dict.fromkeys(e.panelist_code for e in plan)]
    result = analyse(s, plan, answers)
    if method == "2afc":
        assert (result.choice.counts.correct, result.choice.counts.n) == (12, 12)
        # exact one-sided binomial, ISO 5495; scipy's binomtest as the independent value
        expected = sps.binomtest(12, 12, 0.5, alternative="greater").pvalue
        assert result.choice.difference.p_value == pytest.approx(expected, rel=1e-12)
    else:  # a plan whose target sample fills two cups of a set cannot be scored
        assert result.choice.counts.n == 0 and len(result.choice.counts.problems) == 12
    assert "names no target" not in result.choice.note


def test_a_trial_without_a_stored_target_reads_it_from_the_plan_and_says_so():
    plan = plan_for("2afc", ["AB", "BA"])
    result = analyse(study("2afc"), plan, [choose("P01", "102")])
    assert result.choice.counts.target == NEW
    assert "names no target sample; 'New crumb', the sample of the plan's role 'B'" in (
        result.choice.note)


def test_a_stored_target_that_is_not_a_sample_is_refused():
    with pytest.raises(TrialsError, match="'Rye' is not one of its samples"):
        target_sample(study("2afc", target_sample="Rye"), [])


def test_target_needs_two_samples_or_a_b_role_in_the_plan():
    with pytest.raises(TrialsError, match="'Crumb trial'"):
        target_sample(study("2afc", samples=()), [])


def test_decoded_responses_hold_the_sample_and_split_tetrad_codes():
    plan = plan_for("tetrad", ["AABB"])
    frame = decode_responses(plan, [choose("P01", "101", "102")])
    assert frame["sample"].tolist() == [OLD, OLD]
    assert frame["code"].tolist() == ["101", "102"]


# ----------------------------------------------------------------- ratings and ranks

SAMPLES3 = (Sample("Crust A", is_control=True), Sample("Crust B"), Sample("Crust C"))


def rating_trial(n_panelists=8, seed=3):
    rng = np.random.default_rng(seed)
    attrs = (Attribute("liking", AttributeKind.HEDONIC, 1, 9),
             Attribute("crunch", AttributeKind.INTENSITY, 1, 9))
    s = Trial(name="Crust trial", method="rating", samples=SAMPLES3, attributes=attrs)
    plan, responses, truth = [], [], []
    code = 200
    for p in range(n_panelists):
        pan = f"P{p + 1:02d}"
        for pos, sample in enumerate(SAMPLES3, start=1):
            plan.append(PlanEntry("S1", pan, pos, str(code), sample.name, 0))
            for a, shift in (("liking", pos), ("crunch", 4 - pos)):
                score = int(np.clip(round(4 + shift + rng.normal(0, 1)), 1, 9))
                responses.append(Answer("S1", pan, str(code), a, str(score)))
                truth.append({"panelist": pan, "sample": sample.name, "attribute": a,
                              "score": score})
            code += 1
    return s, plan, responses, pd.DataFrame(truth)


def batches3():
    out = []
    for sample, salt in (("Crust A", [1.0, 1.1]), ("Crust B", [1.3, 1.4]), ("Crust C", [1.7, 1.6])):
        for i, v in enumerate(salt):
            out.append(Batch(sample, f"{sample[-1]}{i + 1}",
                             measures=(Measurement("salt", v, "%"),)))
    return out


def test_ratings_run_one_anova_per_attribute_on_the_decoded_scores():
    from trials.stats.ratings import rating_anova

    s, plan, responses, truth = rating_trial()
    result = analyse(s, plan, responses, batches=batches3())
    assert result.has_answers and result.panelists_answered == 8 and result.answers == 48
    for name in ("liking", "crunch"):
        got = result.attribute(name)
        ref = rating_anova(truth[truth["attribute"] == name], score="score", sample="sample",
                           panelist="panelist", alpha=0.05)
        assert got.anova.term("sample").F == pytest.approx(ref.term("sample").F, rel=1e-12)
        assert got.anova.groups == ref.groups
        direct = truth[truth["attribute"] == name].groupby("sample")["score"].mean()
        assert got.means == pytest.approx(direct.to_dict())
    rel = result.attribute("liking").relations[0]
    assert rel.predictor == "salt" and rel.samples == ("Crust A", "Crust B", "Crust C")
    json.dumps(result.to_dict())


def test_ratings_of_one_panelist_say_why_there_is_no_anova():
    s, plan, responses, _ = rating_trial(n_panelists=1)
    result = analyse(s, plan, responses)
    assert result.attribute("liking").anova is None
    assert "one panelist" in result.attribute("liking").note


def test_a_score_that_is_not_a_number_is_left_out_and_named():
    s, plan, responses, _ = rating_trial(n_panelists=3)
    responses[0] = Answer("S1", "P01", responses[0].code, "liking", "lots")
    result = analyse(s, plan, responses)
    assert any("'lots'" in p for p in result.problems)
    assert result.attribute("liking").scores == 8


def test_ranks_go_to_the_friedman_test_and_agree_with_scipy():
    s = Trial(name="Crust ranks", method="ranking", samples=SAMPLES3)
    rng = np.random.default_rng(11)
    plan, responses, table = [], [], []
    code = 300
    for p in range(10):
        pan = f"P{p + 1:02d}"
        ranks = rng.permutation(3) + 1 if p % 3 else np.array([1, 2, 3])
        table.append(ranks)
        for pos, (sample, rank) in enumerate(zip(SAMPLES3, ranks), start=1):
            plan.append(PlanEntry("S1", pan, pos, str(code), sample.name, 0))
            responses.append(Answer("S1", pan, str(code), "rank", str(int(rank))))
            code += 1
    result = analyse(s, plan, responses)
    ref = sps.friedmanchisquare(*np.array(table).T)  # scipy, independent computation
    assert result.ranking.result.statistic == pytest.approx(ref.statistic, rel=1e-10)
    assert result.ranking.result.p_value == pytest.approx(ref.pvalue, rel=1e-8)
    assert result.ranking.rank_means["Crust A"] == pytest.approx(np.array(table)[:, 0].mean())


# ----------------------------------------------------------------- history


SUMMARIES = [
    {"name": "Rye crumb", "method": "triangle", "objective": "Swap rye supplier",
     "product": "rye loaf", "decision": "Difference found", "samples": ["Old rye", "New rye"]},
    {"name": "Brine", "method": "rating", "objective": "Lower sodium brine",
     "product": "pickles", "decision": "No difference shown", "samples": ["Control brine"]},
    {"name": "Proof", "method": "triangle", "objective": "Shorter proof",
     "product": "rye loaf", "decision": "", "samples": []},
]


@pytest.mark.parametrize("kw,names", [
    ({"text": "rye"}, ["Rye crumb", "Proof"]),
    ({"text": "RYE proof"}, ["Proof"]),
    ({"method": "rating"}, ["Brine"]),
    ({"decision": "difference"}, ["Rye crumb", "Brine"]),
    ({"text": "control brine"}, ["Brine"]),
    ({}, ["Rye crumb", "Brine", "Proof"]),
])
def test_search_matches_every_word_and_filters_by_method_and_decision(kw, names):
    assert [s["name"] for s in search_trials(SUMMARIES, **kw)] == names


def test_control_trend_gives_the_controls_mean_per_trial_in_date_order():
    rows = [
        {"study": "T2", "date": "2025-03-01", "sample": "House loaf", "attribute": "liking", "score": 7},  # noqa: E501
        {"study": "T2", "date": "2025-03-01", "sample": "House loaf", "attribute": "liking", "score": 8},  # noqa: E501
        {"study": "T1", "date": "2025-01-10", "sample": "House loaf", "attribute": "liking", "score": 6},  # noqa: E501
        {"study": "T1", "date": "2025-01-10", "sample": "Other", "attribute": "liking", "score": 1},
        {"study": "T1", "date": "2025-01-10", "sample": "House loaf", "attribute": "crunch", "score": 3},  # noqa: E501
    ]
    trend = control_trend(rows, control="House loaf", attribute="liking")
    assert [(p.study, p.n, p.mean) for p in trend] == [("T1", 1, 6.0), ("T2", 2, 7.5)]
    assert trend[1].sd == pytest.approx(np.std([7, 8], ddof=1))
    assert control_trend([], control="House loaf") == ()


# ----------------------------------------------------------------- dispatch to trials.stats


def test_triangle_analysis_hands_its_count_to_the_exact_difference_test():
    from trials.stats.discrimination import difference_test

    plan = plan_for("triangle", TRIANGLE_24)
    result = analyse(study("triangle"), plan, triangle_answers(plan, 15))
    ref = difference_test(15, 24, method="triangle", alpha=0.05, level=0.95)
    assert result.choice.difference == ref
    # ISO 4120 / ASTM E1885 tables (from memory): 13 of 24 is the critical count at 0.05
    assert result.choice.difference.critical == 13
    # independent computation: exact one-sided binomial tail
    assert result.choice.difference.p_value == pytest.approx(sps.binom.sf(14, 24, 1 / 3), rel=1e-12)
    assert result.choice.similarity is None and not result.choice.similarity_planned


def test_a_similarity_trial_also_runs_the_similarity_test_with_its_pd_and_beta():
    from trials.stats.discrimination import similarity_test

    patterns = TRIANGLE_24 * 3
    plan = plan_for("triangle", patterns)
    s = study("triangle", aim="similarity", pd=0.3, beta=0.05)
    result = analyse(s, plan, triangle_answers(plan, 26))
    ref = similarity_test(26, 72, method="triangle", pd=0.3, beta=0.05)
    assert result.choice.similarity == ref
    # independent check of the rule: similar when P(X <= x | pc = 1/3 + 0.3 * 2/3) <= beta
    assert ref.similar == (sps.binom.cdf(26, 72, 1 / 3 + 0.3 * 2 / 3) <= 0.05)


def test_a_similarity_trial_without_pd_says_it_cannot_test():
    plan = plan_for("triangle", TRIANGLE_24)
    result = analyse(study("triangle", aim="similarity"), plan, triangle_answers(plan, 8))
    assert result.choice.similarity is None and "no pd" in result.choice.note


def test_paired_preference_folds_no_preference_by_the_stats_modules_rule():
    from trials.stats.discrimination import difference_test, no_preference_counts

    plan = plan_for("paired-preference", ["AB", "BA"] * 15)
    answers = []
    for i, p in enumerate(dict.fromkeys(e.panelist_code for e in plan)):
        if i < 4:
            answers.append(Answer("S1", p, "", "choice", "No preference"))
            continue
        want = NEW if i < 22 else OLD
        answers.append(choose(p, next(c.code for c in cups(plan, p) if c.sample_name == want)))
    result = analyse(study("paired-preference"), plan, answers)
    folded = no_preference_counts(8, 18, 4)
    assert result.choice.preference == folded
    assert result.choice.difference == difference_test(folded.more_chosen, folded.n,
                                                       method="paired-preference")
    # split rule by hand: 18 + 2 of 30
    assert (result.choice.difference.correct, result.choice.difference.n) == (20, 30)
    assert result.answers == 30 and result.panelists_answered == 26


def test_jar_attributes_get_a_penalty_analysis_against_the_hedonic_attribute():
    from trials.stats.jar import jar_penalty

    attrs = (Attribute("liking", AttributeKind.HEDONIC, 1, 9),
             Attribute("saltiness", AttributeKind.JAR, 1, 5))
    s = Trial(name="Brine", method="rating", samples=SAMPLES3, attributes=attrs)
    rng = np.random.default_rng(5)
    plan, responses, rows = [], [], []
    code = 400
    for p in range(12):
        pan = f"P{p + 1:02d}"
        for pos, sample in enumerate(SAMPLES3, start=1):
            plan.append(PlanEntry("S1", pan, pos, str(code), sample.name, 0))
            jar = int(rng.integers(1, 6))
            like = int(np.clip(8 - abs(jar - 3) * 2 + rng.integers(-1, 2), 1, 9))
            responses += [Answer("S1", pan, str(code), "liking", str(like)),
                          Answer("S1", pan, str(code), "saltiness", str(jar))]
            rows.append({"panelist": pan, "sample": sample.name, "saltiness": jar, "liking": like})
            code += 1
    result = analyse(s, plan, responses)
    got = result.attribute("saltiness").penalty
    ref = jar_penalty(pd.DataFrame(rows), ["saltiness"], liking="liking", sample="sample",
                      low=1, high=5)
    assert got.rows == ref.rows
    assert result.attribute("liking").penalty is None
    assert result.attribute("liking").anova is not None


def test_scores_for_an_attribute_the_trial_does_not_declare_are_named():
    s, plan, responses, _ = rating_trial(n_panelists=3)
    extra = Answer("S1", "P01", responses[0].code, "aroma", "5")
    result = analyse(s, plan, list(responses) + [extra])
    assert any("'aroma'" in p for p in result.problems)
    assert result.answers == 18
