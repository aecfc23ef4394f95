"""Williams designs: Latin in every square and balanced for first-order carry-over.

Published squares: Williams (1949), Aust. J. Sci. Res. A 2:149-168, and the tables of
MacFie et al. (1989), J. Sensory Stud. 4:129-148. The rows
below are quoted from memory (the standard construction as those papers present it)
and every test also checks the balance properties directly.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trials.design.williams import williams_design, williams_first_row, williams_square
from trials.errors import TrialsError, UnbalancedPlanWarning

LETTERS = "ABCDEFGHIJ"


def _letters(row):
    return "".join(LETTERS[s] for s in row)


def _is_latin(rows, t):
    a = np.asarray(rows)
    return all(sorted(a[:, p]) == list(range(t)) for p in range(t)) and all(
        sorted(r) == list(range(t)) for r in a
    )


def _carry(rows, t):
    c = np.zeros((t, t), dtype=int)
    for r in rows:
        for a, b in zip(r, r[1:]):
            c[a, b] += 1
    return c


@pytest.mark.parametrize("t, first", [
    (4, "ABDC"),  # Williams 1949 / MacFie et al. 1989, 4 samples (from memory)
    (5, "ABECD"),  # MacFie et al. 1989, 5 samples, first of 10 rows (from memory)
    (6, "ABFCED"),  # MacFie et al. 1989, 6 samples (from memory)
], ids=["williams1949-t4", "macfie1989-t5", "macfie1989-t6"])
def test_the_first_row_is_the_published_standard_construction(t, first):
    assert _letters(williams_first_row(t)) == first


def test_the_four_sample_square_is_the_published_one():
    # Williams (1949); reproduced by MacFie et al. (1989) for 4 samples (from memory).
    assert [_letters(r) for r in williams_square(4)] == ["ABDC", "BCAD", "CDBA", "DACB"]


def test_the_five_sample_design_adds_the_mirror_of_each_row():
    # MacFie et al. (1989): for an odd number of samples, 2t orders (from memory).
    rows = [_letters(r) for r in williams_square(5)]
    assert rows[0] == "ABECD" and rows[5] == "DCEBA" and len(rows) == 10


@pytest.mark.parametrize("t", range(2, 17))
def test_the_standard_design_is_latin_and_carryover_balanced(t):
    rows = williams_square(t)
    m = len(rows)
    assert m == (t if t % 2 == 0 else 2 * t)
    assert _is_latin(rows[:t], t)
    c = _carry(rows, t)
    off = c[~np.eye(t, dtype=bool)]
    assert set(off.tolist()) == {1 if t % 2 == 0 else 2}


@settings(derandomize=True, max_examples=60, deadline=None)
@given(t=st.integers(2, 16), squares=st.integers(1, 4), seed=st.integers(0, 2**32 - 1))
def test_randomised_stacked_squares_keep_latin_and_carryover_balance(t, squares, seed):
    m = t if t % 2 == 0 else 2 * t
    result = williams_design(t, panelists=squares * m, rng=seed)
    assert result.balanced
    orders = result.orders
    for q in range(squares):
        block = orders[q * m:(q + 1) * m]
        assert _is_latin(block[:t], t)  # every sample once per position in each square
        if t % 2:
            assert _is_latin(block[t:], t)
        c = _carry(block, t)
        assert set(c[~np.eye(t, dtype=bool)].tolist()) == {1 if t % 2 == 0 else 2}
    pos = result.position_counts()
    assert pos.min() == pos.max() == len(orders) // t
    assert result.carryover_min == result.carryover_max


def test_no_panelists_given_means_one_whole_design():
    assert len(williams_design(6, rng=1).orders) == 6
    assert len(williams_design(7, rng=1).orders) == 14


def test_a_partial_square_warns_and_reports_the_balance_reached():
    with pytest.warns(UnbalancedPlanWarning, match="13 panelists"):
        result = williams_design(4, panelists=13, rng=2)
    assert not result.balanced
    pos = result.position_counts()
    assert (result.position_min, result.position_max) == (pos.min(), pos.max()) == (3, 4)
    c = result.carryover_counts()[~np.eye(4, dtype=bool)]
    assert (result.carryover_min, result.carryover_max) == (c.min(), c.max())


@pytest.mark.parametrize("t", [3, 5, 7])
def test_for_odd_samples_the_first_t_rows_of_a_square_are_latin(t):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UnbalancedPlanWarning)
        result = williams_design(t, panelists=t, rng=3)
    assert _is_latin(result.orders, t)
    assert result.position_min == result.position_max == 1


def test_thirty_samples_for_five_hundred_panelists_stay_within_one_of_balance():
    with pytest.warns(UnbalancedPlanWarning):
        result = williams_design(30, panelists=500, rng=4)
    assert result.squares == 17
    assert result.position_max - result.position_min <= 1
    assert result.carryover_max - result.carryover_min <= 1


@pytest.mark.parametrize("t", [4, 5])
def test_a_later_session_changes_every_panelists_order_and_keeps_the_balance(t):
    m = t if t % 2 == 0 else 2 * t
    first = williams_design(t, panelists=2 * m, rng=9, session=0)
    second = williams_design(t, panelists=2 * m, rng=9, session=1)
    assert all(a != b for a, b in zip(first.orders, second.orders))
    assert sorted(map(tuple, first.orders)) == sorted(map(tuple, second.orders))
    assert second.balanced


def test_sessions_cycle_through_every_row_of_the_square():
    seen = [tuple(williams_design(4, rng=5, session=s).orders[0]) for s in range(4)]
    assert len(set(seen)) == 4


def test_the_same_seed_gives_the_same_plan_and_other_seeds_differ():
    a = williams_design(6, panelists=12, rng=11).orders
    assert a == williams_design(6, panelists=12, rng=11).orders
    assert a != williams_design(6, panelists=12, rng=12).orders


@pytest.mark.parametrize("kwargs, text", [
    ({"t": 1}, "samples must be at least 2, got 1"),
    ({"t": 4, "panelists": 0}, "panelists must be at least 1, got 0"),
    ({"t": 4.5}, "samples must be a whole number, got 4.5"),
    ({"t": 4, "session": -1}, "session must be at least 0, got -1"),
])
def test_bad_input_is_refused_with_the_value(kwargs, text):
    t = kwargs.pop("t")
    with pytest.raises(TrialsError, match=text.replace(".", r"\.")):
        williams_design(t, **kwargs)


def test_the_result_gives_a_long_table_and_names_the_method():
    result = williams_design(4, rng=1)
    frame = result.to_frame()
    assert list(frame.columns) == ["panelist", "position", "sample"]
    assert len(frame) == 16
    assert "Williams" in result.to_dict()["reference"]
