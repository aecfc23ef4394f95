"""Many bad rows read as a list: the first 20, one to a line, then "and N more"
(trials.errors.ImportRowsError, problem_lines)."""

from __future__ import annotations

from trials.errors import SHOWN_PROBLEMS, ImportRowsError, problem_lines


def test_up_to_twenty_problems_are_listed_in_full():
    problems = [f"row {i}, column 'value': bad" for i in range(2, 22)]  # 20 rows
    assert problem_lines(problems) == problems
    exc = ImportRowsError(problems)
    assert str(exc).splitlines() == ["20 bad row(s); nothing imported:"] + problems


def test_past_twenty_the_rest_is_counted_not_listed():
    problems = [f"row {i}, column 'value': bad" for i in range(2, 137)]  # 135 rows
    assert SHOWN_PROBLEMS == 20
    lines = problem_lines(problems)
    assert lines == problems[:20] + ["and 115 more"]
    exc = ImportRowsError(problems)
    assert exc.problems == problems  # every problem stays on the exception
    assert exc.head == "135 bad row(s); nothing imported"
    assert str(exc).splitlines()[-1] == "and 115 more"


def test_a_paper_grid_says_cells_and_nothing_saved():
    exc = ImportRowsError(["panelist 'P01', code '123', column 'liking': bad"],
                          bad="bad cell(s)", outcome="nothing saved")
    assert str(exc).splitlines()[0] == "1 bad cell(s); nothing saved:"
