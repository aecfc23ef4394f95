"""Forced-choice sets: every order of the registry used equally often.

ISO 4120:2021 (triangle: the six orders AAB, ABA, BAA, BBA, BAB, ABB equally often);
ISO 10399:2017 (duo-trio: balanced reference uses all four orders, constant reference
always the same sample as the reference); ISO 5495:2005 (paired: AB and BA).
"""

from __future__ import annotations

import warnings
from collections import Counter

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trials.design.codes import avoided_reason
from trials.design.sets import coded_sets, discrimination_sets
from trials.errors import TrialsError, UnbalancedPlanWarning, UnknownMethodError
from trials.methods import FORCED_CHOICE, get_method


def _sets(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UnbalancedPlanWarning)
        return discrimination_sets(*args, **kwargs)


def test_the_triangle_uses_the_six_iso_4120_orders_equally_for_a_multiple_of_six():
    result = discrimination_sets("triangle", 24, rng=1)
    counts = Counter("".join(s) for s in result.sets)
    assert set(counts) == {"AAB", "ABA", "BAA", "BBA", "BAB", "ABB"}  # ISO 4120
    assert set(counts.values()) == {4}
    assert result.balanced and result.pattern_counts == dict(counts)


@settings(derandomize=True, max_examples=50, deadline=None)
@given(n=st.integers(1, 80), seed=st.integers(0, 2**32 - 1),
       method=st.sampled_from(FORCED_CHOICE))
def test_every_prefix_of_the_panel_is_balanced_within_one(n, seed, method):
    result = _sets(method, n, rng=seed)
    patterns = get_method(method).patterns
    for j in range(1, n + 1):
        counts = Counter("".join(s) for s in result.sets[:j])
        values = [counts.get(p, 0) for p in patterns]
        assert max(values) - min(values) <= 1
    values = [result.pattern_counts[p] for p in patterns]
    if n % len(patterns) == 0:
        assert len(set(values)) == 1 and result.balanced
    else:
        assert max(values) - min(values) == 1 and not result.balanced


def test_a_panel_that_is_not_a_whole_number_of_blocks_warns():
    with pytest.warns(UnbalancedPlanWarning, match="7 panelists"):
        discrimination_sets("triangle", 7, rng=1)


def test_duo_trio_with_balanced_reference_serves_a_and_b_as_reference_equally():
    # ISO 10399: balanced reference, all four orders.
    result = discrimination_sets("duo-trio", 40, rng=2)
    first = Counter(s[0] for s in result.sets)
    assert first == {"A": 20, "B": 20}
    for s in result.sets:
        assert s[0] in s[1:] and sorted(s[1:]) == ["A", "B"]  # one coded cup matches


def test_duo_trio_with_constant_reference_always_serves_a_first():
    # ISO 10399: constant reference, orders AAB and ABA.
    result = discrimination_sets("duo-trio", 10, rng=3, reference="constant")
    assert {"".join(s) for s in result.sets} == {"AAB", "ABA"}
    assert result.pattern_counts == {"AAB": 5, "ABA": 5}
    assert result.reference_mode == "constant"


def test_a_constant_reference_is_refused_for_other_methods():
    with pytest.raises(TrialsError, match="duo-trio test only, not 'triangle'"):
        discrimination_sets("triangle", 6, reference="constant")


@pytest.mark.parametrize("method, cups", [("2afc", 2), ("3afc", 3), ("tetrad", 4),
                                          ("paired-preference", 2)])
def test_each_method_gets_sets_of_its_size_from_the_registry(method, cups):
    result = _sets(method, 12, rng=4)
    assert all(len(s) == cups for s in result.sets)
    assert {"".join(s) for s in result.sets} == set(get_method(method).patterns)


def test_tetrad_sets_hold_two_of_each_sample():
    # Ennis and Jesionka (2011): two pairs, A A B B in some order.
    for s in discrimination_sets("tetrad", 6, rng=5).sets:
        assert sorted(s) == ["A", "A", "B", "B"]


@pytest.mark.parametrize("method", ["rating", "ranking"])
def test_ratings_and_rankings_have_no_sets(method):
    with pytest.raises(TrialsError, match=repr(method)):
        discrimination_sets(method, 6)


def test_an_unknown_method_is_refused_by_the_registry():
    with pytest.raises(UnknownMethodError, match="'tri'"):
        discrimination_sets("tri", 6)


@pytest.mark.parametrize("bad", [0, -2])
def test_no_panelists_is_refused(bad):
    with pytest.raises(TrialsError, match=f"got {bad}"):
        discrimination_sets("triangle", bad)


def test_the_same_seed_gives_the_same_sets_and_other_seeds_differ():
    a = discrimination_sets("triangle", 30, rng=6).sets
    assert a == discrimination_sets("triangle", 30, rng=6).sets
    assert a != discrimination_sets("triangle", 30, rng=7).sets


def test_every_cup_gets_its_own_code_even_for_the_same_sample():
    coded = coded_sets(discrimination_sets("triangle", 12, rng=8), rng=8)
    all_codes = [c for s in coded.codes() for c in s]
    assert len(all_codes) == 36 == len(set(all_codes))  # unique across the plan
    for cups in coded.sets:
        assert [c.position for c in cups] == [1, 2, 3]
        twins = [c.code for c in cups if [x.letter for x in cups].count(c.letter) == 2]
        assert len(twins) == 2 and twins[0] != twins[1]
        assert all(avoided_reason(c.code) is None for c in cups)


def test_a_panel_too_large_for_plan_wide_codes_can_use_codes_unique_within_sets():
    sets = _sets("triangle", 300, rng=9)
    with pytest.raises(TrialsError, match="cannot draw 900"):
        coded_sets(sets, rng=9)
    coded = coded_sets(sets, rng=9, scope="set")
    assert all(len({c.code for c in cups}) == 3 for cups in coded.sets)


def test_coded_sets_skip_codes_used_elsewhere_and_accept_plain_letters():
    used = ["559", "133"]
    coded = coded_sets([["A", "B"], ["B", "A"]], rng=10, exclude=used)
    assert not {c for s in coded.codes() for c in s} & set(used)
    with pytest.raises(TrialsError, match="'trial'"):
        coded_sets([["A", "B"]], scope="trial")
