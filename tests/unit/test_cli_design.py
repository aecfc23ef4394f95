"""`trials design ...` prints the keys of DESIGN.md and exits 2 on bad input."""

from __future__ import annotations

import json

import pytest

from trials.cli import main


def _run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")
@pytest.mark.parametrize("argv, key", [
    (["design", "codes", "--count", "5", "--seed", "1", "--json"], "codes"),
    (["design", "williams", "--samples", "4", "--panelists", "8", "--seed", "1", "--json"],
     "orders"),
    (["design", "sets", "--method", "triangle", "--panelists", "6", "--json", "--seed", "1"],
     "sets"),
    (["design", "blocks", "--samples", "7", "--per-panelist", "3", "--seed", "1", "--json"],
     "blocks"),
], ids=["codes", "williams", "sets", "blocks"])
def test_each_design_command_prints_one_json_object_with_its_key(capsys, argv, key):
    code, out, _ = _run(capsys, *argv)
    assert code == 0
    result = json.loads(out)
    assert key in result


def test_codes_are_three_digit_strings(capsys):
    _, out, _ = _run(capsys, "design", "codes", "--count", "12", "--seed", "3", "--json")
    codes = json.loads(out)["codes"]
    assert len(codes) == 12 == len(set(codes))
    assert all(isinstance(c, str) and len(c) == 3 and "100" <= c <= "999" for c in codes)


def test_williams_orders_are_zero_based_indices(capsys):
    _, out, _ = _run(capsys, "design", "williams", "--samples", "5", "--seed", "2", "--json")
    orders = json.loads(out)["orders"]
    assert len(orders) == 10 and all(sorted(o) == [0, 1, 2, 3, 4] for o in orders)


def test_sets_are_lists_of_letters(capsys):
    _, out, _ = _run(capsys, "design", "sets", "--method", "duo-trio", "--panelists", "4",
                     "--seed", "2", "--json")
    sets = json.loads(out)["sets"]
    assert sorted("".join(s) for s in sets) == ["AAB", "ABA", "BAB", "BBA"]


def test_blocks_are_served_subsets(capsys):
    _, out, _ = _run(capsys, "design", "blocks", "--samples", "9", "--per-panelist", "3",
                     "--seed", "2", "--json")
    blocks = json.loads(out)["blocks"]
    assert len(blocks) == 12 and all(len(set(b)) == 3 for b in blocks)


def test_the_same_seed_prints_the_same_plan(capsys):
    argv = ["design", "williams", "--samples", "6", "--seed", "9", "--json"]
    assert _run(capsys, *argv)[1] == _run(capsys, *argv)[1]


@pytest.mark.parametrize("argv, text", [
    (["design", "codes", "--count", "10000", "--json"], "10000"),
    (["design", "codes", "--count", "-1", "--json"], "-1"),
    (["design", "williams", "--samples", "1", "--json"], "got 1"),
    (["design", "williams", "--samples", "4", "--panelists", "0", "--json"], "got 0"),
    (["design", "sets", "--method", "triangle", "--panelists", "0", "--json"], "got 0"),
    (["design", "blocks", "--samples", "5", "--per-panelist", "5", "--json"], "k=5 with t=5"),
    (["design", "blocks", "--samples", "1", "--per-panelist", "2", "--json"], "got 1"),
    (["design", "codes", "--count", "3", "--seed", "-4", "--json"], "-4"),
], ids=["too-many-codes", "negative-count", "one-sample", "no-panelists", "no-sets",
        "complete-block", "one-block-sample", "negative-seed"])
def test_bad_input_exits_2_with_the_value_on_stderr_and_nothing_on_stdout(capsys, argv, text):
    code, out, err = _run(capsys, *argv)
    assert code == 2 and out == ""
    assert text in err and err.startswith("trials: ")


def test_a_word_for_a_count_is_refused_by_the_parser_with_status_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["design", "codes", "--count", "many", "--json"])
    assert exc.value.code == 2
    assert "'many'" in capsys.readouterr().err
