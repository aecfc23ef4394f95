"""What the tablet shows, computed without a screen (trials.answers): the scale points
with their words in the paper ballot's order, the ranking's words, where a cup's comment
is kept, and a step's answers for the review."""

from __future__ import annotations

import pytest

from trials import answers
from trials.methods import PAIRED_PREFERENCE, RANKING, RATING, TRIANGLE, get_method
from trials.model import Attribute, AttributeKind, BallotAnswer, BallotSet
from trials.printing.ballots import HEDONIC_9, scale_anchors


def test_a_nine_point_hedonic_scale_has_all_nine_words_low_to_high():
    attr = Attribute("overall liking", AttributeKind.HEDONIC, 1, 9)
    worded = Attribute(attr.name, attr.kind, 1, 9, scale_anchors(attr))
    points = answers.scale_points(worded)
    # Peryam and Pilgrim (1957), Food Technol. 11(9):9-14: 1 = dislike extremely,
    # 5 = neither like nor dislike, 9 = like extremely
    assert [p for p, _ in points] == list(range(1, 10))
    assert points[0] == (1, "Dislike extremely")
    assert points[4] == (5, "Neither like nor dislike")
    assert points[8] == (9, "Like extremely")
    assert tuple(w for _, w in points) == HEDONIC_9


def test_an_intensity_scale_words_its_two_ends_only():
    attr = Attribute("saltiness", AttributeKind.INTENSITY, 0, 10, ("not salty", "very salty"))
    points = answers.scale_points(attr)
    assert points[0] == (0, "not salty") and points[-1] == (10, "very salty")
    assert [w for _, w in points[1:-1]] == [""] * 9
    assert answers.scale_points(Attribute("crunch", AttributeKind.INTENSITY, 1, 3)) == (
        (1, ""), (2, ""), (3, ""))


@pytest.mark.parametrize("attr, first", [
    (None, "Rank 1 = the sample you like most, rank 3 = the least."),
    (Attribute("overall liking"), "Rank 1 = the sample you like most, rank 3 = the least."),
    (Attribute("Sweetness", AttributeKind.INTENSITY, 1, 5),
     "Rank 1 = the sample with the most sweetness, rank 3 = the least."),
])
def test_the_ranking_words_follow_the_paper_ballot(attr, first):
    assert answers.rank_wording(attr, 3) == first + " Use each rank once."


def _steps(method: str, codes=("101", "202", "303"), given=()):
    spec = get_method(method)
    sets = [BallotSet("1", 0, codes)]
    return spec, answers.tasting_steps(spec, sets, list(given), ["liking", "salt"])


def test_a_cups_comment_is_kept_on_the_sets_choice_a_cups_rank_or_its_first_score():
    spec, [step] = _steps(TRIANGLE)
    assert answers.comment_question(spec, step, "202", []) == "choice:0"
    spec, [step] = _steps(RANKING)
    assert answers.comment_question(spec, step, "303", []) == "303:rank"
    spec, steps = _steps(RATING)
    assert answers.comment_question(spec, steps[1], "202", ["liking", "salt"]) == "202:liking"


def test_a_steps_answers_for_the_review_are_this_panelists_own_in_ballot_order():
    given = [BallotAnswer("1", "202", "salt", "4"), BallotAnswer("1", "202", "liking", "7"),
             BallotAnswer("2", "202", "liking", "1"), BallotAnswer("1", "101", "liking", "3")]
    _spec, steps = _steps(RATING, given=given)
    assert answers.step_answers(steps[1], given, ["liking", "salt"]) == (
        ("liking", "7"), ("salt", "4"))
    assert [s.done for s in steps] == [False, True, False]
    ranks = [BallotAnswer("1", "303", "rank", "1"), BallotAnswer("1", "101", "rank", "2")]
    _spec, [step] = _steps(RANKING, given=ranks)
    assert answers.step_answers(step, ranks, []) == (("101", "2"), ("303", "1"))
    assert not step.done
    pick = [BallotAnswer("1", "202", "choice", "")]
    _spec, [step] = _steps(TRIANGLE, given=pick)
    assert answers.step_answers(step, pick, []) == (("chosen", "202"),) and step.done
    other_set = [BallotAnswer("1", "909", "choice", "")]
    assert answers.step_answers(step, other_set, []) == ()
    none = [BallotAnswer("1", "", "choice", answers.NO_PREFERENCE)]
    _spec, [step] = _steps(PAIRED_PREFERENCE, codes=("101", "202"), given=none)
    assert answers.step_answers(step, none, []) == (("chosen", answers.NO_PREFERENCE),)


def test_a_steps_comments_are_those_on_its_own_cups():
    given = [BallotAnswer("1", "202", "liking", "7", "grainy"),
             BallotAnswer("1", "101", "liking", "3", "sour"),
             BallotAnswer("2", "202", "liking", "1", "other session")]
    _spec, steps = _steps(RATING, given=given)
    assert answers.step_comments(steps[1], given) == ("grainy",)
    assert answers.step_comments(steps[2], given) == ()
    pick = [BallotAnswer("1", "", "choice", answers.NO_PREFERENCE, "both fine")]
    _spec, [step] = _steps(PAIRED_PREFERENCE, codes=("101", "202"), given=pick)
    assert answers.step_comments(step, pick) == ("both fine",)
