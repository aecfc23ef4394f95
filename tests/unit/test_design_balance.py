"""The balance a drawn plan reaches, said in words (issue 13, item 5).

The counts are checked against the design functions' own bookkeeping (the pattern
counts of ``discrimination_sets``, the position range of ``williams_design``), which
count the designs before they become plan rows. The block sizes are published: six
triangle orders (ISO 4120:2021, 6.2), a Williams design of t rows for even t and 2t for
odd t (Williams 1949, Aust. J. Sci. Res. A 2, 149-168).
"""

from __future__ import annotations

import dataclasses
import warnings

import pytest

from trials.design.balance import plan_balance
from trials.design.plan import serving_plan
from trials.design.sets import discrimination_sets
from trials.design.williams import williams_design

PANEL = [f"P{i:02d}" for i in range(1, 61)]


def _plan(method, samples, n, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return serving_plan(method, samples, PANEL[:n], rng=11, **kw)


def test_27_triangle_panelists_are_told_each_order_is_served_4_or_5_times():
    [b] = plan_balance("triangle", _plan("triangle", ["Usual", "Short"], 27))
    assert b.statement == ("27 panelists are not a multiple of the 6 orders of the triangle "
                           "test: each order is served 4 or 5 times.")
    assert (b.units, b.low, b.high, b.balanced) == (6, 4, 5, False)


def test_14_panelists_and_5_samples_are_told_they_are_not_whole_williams_designs():
    [b] = plan_balance("rating", _plan("rating", list("ABCDE"), 14))
    assert b.statement == ("14 panelists and 5 samples are not a whole number of Williams "
                           "designs of 10 rows: each sample is served 2 or 3 times at each "
                           "position.")
    assert b.units == 10 and not b.balanced


@pytest.mark.parametrize("n", [6, 12, 24, 30])
def test_a_whole_number_of_triangle_blocks_is_said_balanced(n):
    [b] = plan_balance("triangle", _plan("triangle", ["Usual", "Short"], n))
    assert b.balanced and b.low == b.high == n // 6
    assert f"each of the 6 orders of the triangle test is served {n // 6} time" in b.statement


@pytest.mark.parametrize(("method", "n"), [("triangle", 27), ("tetrad", 13), ("duo-trio", 10),
                                           ("2afc", 7), ("triangle", 5)])
def test_order_counts_match_the_set_designs_own_counts(method, n):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        counts = discrimination_sets(method, n, rng=11).pattern_counts
    [b] = plan_balance(method, _plan(method, ["Usual", "Short"], n))
    assert (b.low, b.high) == (min(counts.values()), max(counts.values()))
    assert b.balanced == (len(set(counts.values())) == 1 and n % len(counts) == 0)


@pytest.mark.parametrize(("t", "n"), [(3, 6), (3, 7), (4, 8), (4, 9), (5, 14), (5, 20)])
def test_position_counts_match_the_williams_designs_own_range(t, n):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = williams_design(t, panelists=n, rng=11)
    [b] = plan_balance("rating", _plan("rating", [f"S{i}" for i in range(t)], n))
    assert (b.low, b.high, b.units) == (ref.position_min, ref.position_max,
                                        ref.rows_per_square)
    assert b.balanced == ref.balanced


def test_incomplete_blocks_state_replication_and_pair_meetings():
    # 10 panelists, 3 of 5 samples: the BIBD (5, 10, 6, 3, 3) (Cochran and Cox 1957,
    # plan 11.4, from memory): each sample 6 times, each pair 3 times; the counts are
    # recounted from the plan rows below
    entries = _plan("rating", list("ABCDE"), 10, per_panelist=3)
    [b] = plan_balance("rating", entries)
    served = {s: sum(e.sample_name == s for e in entries) for s in "ABCDE"}
    assert b.design == "blocks" and (b.low, b.high) == (min(served.values()),
                                                         max(served.values()))
    assert b.balanced and b.low == b.high == 6
    assert b.statement == ("10 panelists taste 3 of the 5 samples: each sample is served 6 "
                           "times and each pair of samples meets 3 times, a balanced "
                           "incomplete block design.")


def test_each_session_gets_its_own_statement():
    one = _plan("triangle", ["Usual", "Short"], 6)
    two = [dataclasses.replace(e, session="2") for e in _plan("triangle", ["Usual", "Short"], 7)]
    got = plan_balance("triangle", one + two)
    assert [(b.session, b.balanced) for b in got] == [("1", True), ("2", False)]


@pytest.mark.parametrize("argv", [
    ["design", "sets", "--method", "triangle", "--panelists", "27", "--seed", "1"],
    ["design", "williams", "--samples", "5", "--panelists", "14", "--seed", "1", "--json"],
], ids=["sets", "williams"])
def test_the_command_line_says_the_balance_as_one_note_line_without_a_source_path(capsys, argv):
    from trials.cli import main

    assert main(argv) == 0
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("trials: note: ")
    assert ".py" not in err[0] and "Warning" not in err[0]
