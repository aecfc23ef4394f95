"""Answers against the serving plan, without a database: decoding, checking one answer,
what is still expected, and the paper-entry grid (trials.answers).

Plans come from trials.design.plan.serving_plan with fixed seeds, so each test reads
the codes it needs from the plan rather than assuming them.
"""

from __future__ import annotations

import pandas as pd
import pytest

from trials.answers import (
    NO_PREFERENCE,
    AnswerChecker,
    PlanKey,
    answer_progress,
    choice_options,
    chosen_sets,
    expected_answers,
    most_cups,
    paper_columns,
    paper_sheet,
    sheet_answers,
    sheet_problems,
    tasting_steps,
)
from trials.design.plan import serving_plan
from trials.errors import AnswerError, TrialsError
from trials.methods import get_method
from trials.model import Answer, Attribute, AttributeKind, Sample, Trial

OLD, NEW = "Old brine", "Low-sodium brine"
PANEL = ["P01", "P02", "P03", "P04", "P05", "P06"]
SALT = Attribute("saltiness", AttributeKind.INTENSITY, 1, 7)
LIKING = Attribute("liking", AttributeKind.HEDONIC, 1, 9)


def trial(method, **kw):
    samples = kw.pop("samples", (Sample(OLD, is_control=True), Sample(NEW)))
    return Trial(name="Brine trial", method=method, samples=samples, **kw)


def fc_plan(method, seed=3):
    return serving_plan(method, [OLD, NEW], PANEL, session="1", rng=seed)


def checker(method, plan, **kw):
    return AnswerChecker.for_trial(trial(method, **kw), plan, sessions=["1", "2"])


def cups_of(plan, panelist):
    return sorted((e for e in plan if e.panelist_code == panelist), key=lambda e: e.position)


def reason(fn):
    with pytest.raises(AnswerError) as info:
        fn()
    assert isinstance(info.value, TrialsError)
    return info.value.column, info.value.text


# --------------------------------------------------------------------------- the key


def test_the_key_decodes_a_code_to_its_cup_for_that_panelist_and_session_only():
    plan = fc_plan("triangle")
    key = PlanKey.of(plan)
    first = cups_of(plan, "P01")[0]
    assert key.find("1", "P01", first.code) == first
    assert key.find("1", "P02", first.code) is None  # every cup of the plan has its own code
    assert key.find("2", "P01", first.code) is None
    assert key.panelists == tuple(PANEL)
    (k, cups), = key.sets("1", "P01").items()
    assert k == 0 and [c.position for c in cups] == [1, 2, 3]


# --------------------------------------------------------------------------- one answer


def test_a_triangle_choice_is_kept_as_the_sets_question():
    plan = fc_plan("triangle")
    c = cups_of(plan, "P02")[1]
    ans = checker("triangle", plan).check(" 1 ", "P02 ", f" {c.code} ", "choice", "")
    assert (ans.session, ans.panelist, ans.question, ans.code, ans.value) == (
        "1", "P02", "choice:0", c.code, "")


@pytest.mark.parametrize("args, column, text", [
    (("1", "P99", "", "choice", ""), "panelist",
     "panelist 'P99' has no serving plan in this trial"),
    (("9", "P01", "", "choice", ""), "session", "expected one of the sessions '1', '2', got '9'"),
    (("2", "P01", "", "choice", ""), "session", "panelist 'P01' is not served in session '2'"),
    (("1", "P01", "", "score", ""), "attribute",
     "a triangle trial takes attribute 'choice', got 'score'"),
    (("1", "P01", "", "choice", "5"), "value", "expected empty for a choice, got '5'"),
    (("1", "P01", "", "choice", ""), "code", "expected one code, got ''"),
    (("1", "P01", "999", "choice", ""), "code",
     "'999' is not a code served to panelist 'P01' in session '1'"),
], ids=["unknown-panelist", "unknown-session", "not-served", "attribute", "value", "no-code",
        "foreign-code"])
def test_a_bad_choice_names_its_column_and_what_was_expected(args, column, text):
    plan = fc_plan("triangle")
    assert reason(lambda: checker("triangle", plan).check(*args)) == (column, text)


def test_a_code_of_another_panelist_is_refused():
    plan = fc_plan("triangle")
    other = cups_of(plan, "P03")[0].code
    assert reason(
        lambda: checker("triangle", plan).check("1", "P01", other, "choice", ""))[0] == "code"


def test_a_duo_trio_answer_may_not_choose_the_reference():
    plan = fc_plan("duo-trio")
    ref, a, _ = cups_of(plan, "P01")
    assert ref.role == "R"
    ck = checker("duo-trio", plan)
    assert reason(lambda: ck.check("1", "P01", ref.code, "choice", "")) == (
        "code", f"{ref.code!r} is the reference; choose one of the coded samples")
    assert ck.check("1", "P01", a.code, "choice", "").code == a.code


def test_a_tetrad_answer_names_two_different_codes_kept_in_serving_order():
    plan = fc_plan("tetrad")
    c = cups_of(plan, "P01")
    ck = checker("tetrad", plan)
    ans = ck.check("1", "P01", f"{c[3].code} {c[0].code}", "choice", "")
    assert ans.code == f"{c[0].code} {c[3].code}" and ans.question == "choice:0"
    assert reason(lambda: ck.check("1", "P01", c[0].code, "choice", "")) == (
        "code", f"expected the two codes of the chosen group, got {c[0].code!r}")
    twice = f"{c[0].code} {c[0].code}"
    assert reason(lambda: ck.check("1", "P01", twice, "choice", "")) == (
        "code", f"expected two different codes of the same set, got {twice!r}")


def test_no_preference_is_an_answer_only_where_the_method_allows_it():
    pref = fc_plan("paired-preference")
    ck = checker("paired-preference", pref)
    ans = ck.check("1", "P01", "", "choice", "No preference")
    assert (ans.question, ans.code, ans.value) == ("choice:0", "", NO_PREFERENCE)
    code = cups_of(pref, "P01")[0].code
    assert reason(lambda: ck.check("1", "P01", code, "choice", NO_PREFERENCE)) == (
        "code", f"give no code with 'no preference', got {code!r}")
    assert reason(lambda: ck.check("1", "P01", "", "choice", "maybe")) == (
        "value", "expected empty or 'no preference' for a choice, got 'maybe'")
    tri = fc_plan("2afc")
    assert reason(lambda: checker("2afc", tri).check("1", "P01", "", "choice", NO_PREFERENCE)) == (
        "value", "expected empty for a choice, got 'no preference'")


def test_a_rating_is_checked_against_the_attributes_scale():
    plan = serving_plan("rating", ["A1", "B1", "C1"], PANEL, rng=5)
    ck = checker("rating", plan, attributes=(SALT, LIKING))
    code = cups_of(plan, "P04")[2].code
    ans = ck.check("1", "P04", code, "saltiness", "7.0")
    assert (ans.question, ans.value) == (f"{code}:saltiness", "7")
    assert reason(lambda: ck.check("1", "P04", code, "saltiness", "8")) == (
        "value", "expected a whole number from 1 to 7, got '8'")
    assert reason(lambda: ck.check("1", "P04", code, "saltiness", "3.5"))[0] == "value"
    assert reason(lambda: ck.check("1", "P04", code, "crunch", "3")) == (
        "attribute", "expected one of the trial's attributes 'saltiness', 'liking', got 'crunch'")
    assert reason(lambda: ck.check("1", "P04", "", "liking", "3")) == ("code", "a code is required")


def test_a_rank_in_an_incomplete_block_goes_up_to_the_cups_served_not_the_samples():
    # Five samples, three per panelist (incomplete blocks): the highest rank is 3.
    plan = serving_plan("ranking", ["S1", "S2", "S3", "S4", "S5"],
                        [f"Q{i:02d}" for i in range(10)], rng=8, per_panelist=3)
    ck = AnswerChecker.for_trial(trial("ranking", samples=()), plan)
    code = cups_of(plan, "Q00")[0].code
    assert ck.check("1", "Q00", code, "rank", "3").value == "3"
    assert reason(lambda: ck.check("1", "Q00", code, "rank", "4")) == (
        "value", "expected a whole number from 1 to 3, got '4'")
    assert reason(lambda: ck.check("1", "Q00", code, "score", "1")) == (
        "attribute", "a ranking trial takes attribute 'rank', got 'score'")


# --------------------------------------------------------------------------- what is expected


def test_expected_answers_follow_the_family():
    assert expected_answers(get_method("triangle"), [3, 3], attributes=0) == 2
    assert expected_answers(get_method("rating"), [4], attributes=3) == 12
    assert expected_answers(get_method("ranking"), [3, 3], attributes=0) == 6
    assert expected_answers(get_method("ranking"), [], attributes=0) == 0


def test_progress_counts_each_panelists_answers_against_what_they_owe():
    plan = serving_plan("rating", ["A1", "B1"], ["P01", "P02"], rng=1)
    code = cups_of(plan, "P01")[0].code
    got = [Answer("1", "P01", code, "liking", "5"), Answer("1", "P01", code, "saltiness", "2")]
    frame = answer_progress(get_method("rating"), plan, got, attributes=2)
    assert frame.to_dict("records") == [
        {"session": "1", "panelist": "P01", "expected": 4, "answered": 2},
        {"session": "1", "panelist": "P02", "expected": 4, "answered": 0},
    ]


def test_tasting_steps_mark_a_chosen_set_and_a_declined_preference_as_done():
    spec = get_method("paired-preference")

    class Set:  # the shape of the service's BallotSet
        def __init__(self, session, set_index, codes):
            self.session, self.set_index, self.codes = session, set_index, codes

    sets = [Set("1", 0, ("101", "102")), Set("2", 0, ("201", "202"))]
    answers = [Answer("2", "P01", "", "choice", NO_PREFERENCE)]
    steps = tasting_steps(spec, sets, answers, ())
    assert [(s.kind, s.session, s.done) for s in steps] == [("choose", "1", False),
                                                              ("choose", "2", True)]
    assert chosen_sets(spec, sets, [Answer("1", "P01", "102", "choice", "")]) == {("1", 0): "102"}
    # a method without "no preference" does not count an empty choice as an answer
    assert not tasting_steps(get_method("2afc"), sets, answers, ())[1].done


def test_rating_steps_are_one_per_cup_done_when_every_attribute_is_scored():
    spec = get_method("rating")

    class Set:
        session, set_index, codes = "1", 0, ("311", "312")

    answers = [Answer("1", "P01", "311", "liking", "6"),
               Answer("1", "P01", "311", "saltiness", "3"),
               Answer("1", "P01", "312", "liking", "4")]
    steps = tasting_steps(spec, [Set()], answers, ("liking", "saltiness"))
    assert [(s.kind, s.code, s.position, s.done) for s in steps] == [
        ("rate", "311", 0, True), ("rate", "312", 1, False)]


def test_the_reference_is_served_first_and_is_not_a_choice():
    assert choice_options(get_method("duo-trio"), ("501", "502", "503")) == ("501", ("502", "503"))
    assert choice_options(get_method("triangle"), ("501", "502", "503")) == (
        "", ("501", "502", "503"))


# --------------------------------------------------------------------------- paper entry


def test_paper_columns_come_from_the_registry_and_the_attributes():
    assert paper_columns(get_method("triangle")) == ("panelist", "set", "cups", "chosen")
    assert paper_columns(get_method("paired-preference"))[-1] == "no_preference"
    assert paper_columns(get_method("rating"), ["liking"]) == (
        "panelist", "position", "code", "liking")
    assert paper_columns(get_method("ranking"), ["liking"]) == (
        "panelist", "position", "code", "rank")


def test_a_paper_grid_round_trips_through_its_answers_and_the_checker():
    spec = get_method("paired-preference")
    plan = fc_plan("paired-preference")
    first = cups_of(plan, "P01")[1].code
    got = [Answer("1", "P01", first, "choice", ""), Answer("1", "P02", "", "choice", NO_PREFERENCE)]
    grid = paper_sheet(spec, plan, got)
    assert list(grid.columns) == ["panelist", "set", "cups", "chosen", "no_preference"]
    assert grid.loc[0].to_dict() == {"panelist": "P01", "set": 1,
                                     "cups": " ".join(c.code for c in cups_of(plan, "P01")),
                                     "chosen": first, "no_preference": False}
    assert bool(grid.loc[1, "no_preference"]) is True
    items = sheet_answers(spec, "1", grid)
    assert [(i, a["code"], a["value"]) for i, a in items] == [
        (0, first, ""), (1, "", NO_PREFERENCE)]
    assert sheet_problems(checker("paired-preference", plan), "1", grid) == []


def test_a_rating_grid_holds_scores_as_nullable_numbers():
    spec = get_method("rating")
    plan = serving_plan("rating", ["A1", "B1"], ["P01"], rng=2)
    code = plan[0].code
    grid = paper_sheet(spec, plan, [Answer("1", "P01", code, "liking", "6")], ["liking"])
    assert str(grid["liking"].dtype) == "Float64"
    assert grid["liking"].tolist()[0] == 6.0 and pd.isna(grid["liking"].tolist()[1])
    assert sheet_answers(spec, "1", grid, ["liking"]) == [
        (0, {"session": "1", "panelist": "P01", "code": code, "attribute": "liking", "value": "6",
             "column": "liking", "key": ("P01", code)})]


def test_sheet_problems_name_the_panelist_code_and_column_and_a_rank_given_twice():
    plan = serving_plan("ranking", ["S1", "S2", "S3"], ["P01"], rng=4)
    spec = get_method("ranking")
    grid = paper_sheet(spec, plan, [])
    grid["rank"] = pd.array([1, 1, 5], dtype="Float64")
    ck = AnswerChecker.for_trial(trial("ranking", samples=()), plan)
    problems = sheet_problems(ck, "1", grid)
    assert problems == [
        f"panelist 'P01', code {grid.loc[1, 'code']!r}, column 'rank': rank 1 is also given "
        f"to code {grid.loc[0, 'code']!r}",
        f"panelist 'P01', code {grid.loc[2, 'code']!r}, column 'rank': expected a whole number "
        "from 1 to 3, got '5'",
    ]


def test_the_highest_rank_on_a_paper_grid_is_the_block_size():
    plan = serving_plan("ranking", ["S1", "S2", "S3", "S4", "S5"],
                        [f"Q{i:02d}" for i in range(10)], rng=8, per_panelist=3)
    grid = paper_sheet(get_method("ranking"), plan, [])
    assert most_cups(grid) == 3
    assert most_cups(grid.iloc[0:0]) == 1
