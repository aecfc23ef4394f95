"""The paper-entry grid as text (trials.answers): rows known by panelist and set or
code, never by place; every bad cell refused by name; changes found by key.

Plans come from trials.design.plan.serving_plan with fixed seeds; each test reads the
codes it needs from the plan.
"""

from __future__ import annotations

import pandas as pd

from trials.answers import (
    AnswerChecker,
    paper_sheet,
    sheet_answers,
    sheet_changes,
    sheet_key,
    sheet_pages,
    sheet_problems,
)
from trials.design.plan import serving_plan
from trials.methods import get_method
from trials.model import Answer, Attribute, AttributeKind, Sample, Trial

OLD, NEW = "Old crumb", "New crumb"
PANEL = ["P01", "P02", "P03", "P04", "P05", "P06"]
LIKING = Attribute("liking", AttributeKind.HEDONIC, 1, 9)


def _triangle():
    plan = serving_plan("triangle", [OLD, NEW], PANEL, session="1", rng=3)
    study = Trial(name="Crumb trial", method="triangle",
                  samples=(Sample(OLD, is_control=True), Sample(NEW)))
    return get_method("triangle"), plan, AnswerChecker.for_trial(study, plan)


def _rating():
    plan = serving_plan("rating", [OLD, NEW], PANEL[:2], session="1", rng=2)
    study = Trial(name="Crumb rating", method="rating",
                  samples=(Sample(OLD, is_control=True), Sample(NEW)), attributes=(LIKING,))
    return get_method("rating"), plan, AnswerChecker.for_trial(study, plan)


def test_a_text_grid_holds_scores_as_typed_text():
    spec, plan, _ = _rating()
    code = plan[0].code
    grid = paper_sheet(spec, plan, [Answer("1", plan[0].panelist_code, code, "liking", "6")],
                       ["liking"], as_text=True)
    assert str(grid["liking"].dtype) == "string"
    assert grid["liking"].tolist() == ["6"] + [""] * (len(plan) - 1)


def test_out_of_range_and_malformed_scores_are_refused_naming_panelist_code_and_column():
    spec, plan, ck = _rating()
    grid = paper_sheet(spec, plan, [], ["liking"], as_text=True)
    grid["liking"] = ["12", "7,5", "six", "0"]
    problems = sheet_problems(ck, "1", grid)
    where = [f"panelist {p!r}, code {c!r}, column 'liking'" for p, c in
             zip(grid["panelist"], grid["code"])]
    assert problems == [
        f"{where[0]}: expected a whole number from 1 to 9, got '12'",
        f"{where[1]}: expected a whole number from 1 to 9, got '7,5'",
        f"{where[2]}: expected a whole number from 1 to 9, got 'six'",
        f"{where[3]}: expected a whole number from 1 to 9, got '0'",
    ]


def test_a_code_typed_into_the_neighbouring_row_is_refused():
    spec, plan, ck = _triangle()
    grid = paper_sheet(spec, plan, [])
    other = grid.loc[1, "cups"].split()[0]
    grid.loc[0, "chosen"] = other
    problems = sheet_problems(ck, "1", grid)
    assert problems == [f"panelist 'P01', set 1, column 'chosen': {other!r} is not a code "
                        "served to panelist 'P01' in session '1'"]


def test_a_code_of_another_set_of_the_same_panelist_is_refused():
    # two sets for each panelist in one session: the second six panelists' sets renamed
    # as the first six's set 2 (codes stay distinct: one plan drew them all)
    import dataclasses

    wide = serving_plan("triangle", [OLD, NEW], PANEL + [f"Q{i}" for i in range(6)],
                        session="1", rng=3)
    rename = dict(zip([f"Q{i}" for i in range(6)], PANEL))
    plan = [dataclasses.replace(e, panelist_code=rename[e.panelist_code], set_index=1,
                                position=e.position + 3) if e.panelist_code in rename else e
            for e in wide]
    study = Trial(name="Crumb trial", method="triangle",
                  samples=(Sample(OLD, is_control=True), Sample(NEW)))
    ck = AnswerChecker.for_trial(study, plan)
    grid = paper_sheet(get_method("triangle"), plan, [])
    first = grid[(grid["panelist"] == "P01") & (grid["set"] == 1)].index[0]
    second = grid[(grid["panelist"] == "P01") & (grid["set"] == 2)].index[0]
    grid.loc[first, "chosen"] = grid.loc[second, "cups"].split()[1]
    assert sheet_problems(ck, "1", grid) == [
        f"panelist 'P01', set 1, column 'chosen': {grid.loc[first, 'chosen']!r} is not a cup "
        "of set 1 for this panelist (typed into the wrong row?)"]


def test_rows_are_matched_by_key_so_a_shuffled_grid_gives_the_same_answers():
    spec, plan, ck = _triangle()
    grid = paper_sheet(spec, plan, [])
    grid["chosen"] = [c.split()[i % 3] for i, c in enumerate(grid["cups"])]
    shuffled = grid.sample(frac=1, random_state=7).reset_index(drop=True)
    def by_key(frame):
        return sorted((a["key"], a["code"]) for _, a in sheet_answers(spec, "1", frame))
    assert by_key(shuffled) == by_key(grid)
    assert sheet_problems(ck, "1", shuffled) == []
    assert sheet_key(spec, grid.iloc[0].to_dict()) == ("P01", "1")


def test_a_row_given_twice_is_refused():
    spec, plan, ck = _triangle()
    grid = paper_sheet(spec, plan, [])
    twice = pd.concat([grid, grid.iloc[[2]]], ignore_index=True)
    assert sheet_problems(ck, "1", twice) == [
        "panelist 'P03', set 1: this row is in the grid twice"]


def test_changes_are_found_by_key_and_only_in_answer_cells():
    spec, plan, _ = _rating()
    before = paper_sheet(spec, plan, [], ["liking"], as_text=True)
    after = before.copy()
    after.loc[2, "liking"] = "8"
    after.loc[1, "liking"] = "  "  # blank stays blank
    assert sheet_changes(spec, before, after, ["liking"]) == [
        (after.loc[2, "panelist"], after.loc[2, "code"])]
    assert sheet_changes(spec, before, after.iloc[::-1], ["liking"]) == [
        (after.loc[2, "panelist"], after.loc[2, "code"])]
    assert sheet_changes(spec, before, before, ["liking"]) == []


def test_pages_hold_whole_ballots_of_at_most_sixty_rows():
    spec, plan, _ = _rating()
    grid = paper_sheet(spec, plan, [], ["liking"], as_text=True)  # two panelists, two cups
    assert sheet_pages(grid, most_rows=3) == [("P01",), ("P02",)]
    assert sheet_pages(grid) == [("P01", "P02")]
    assert sheet_pages(grid, most_rows=1) == [("P01",), ("P02",)]  # a ballot is never split
    assert sheet_pages(grid.iloc[0:0]) == []
