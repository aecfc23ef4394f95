"""A whole session's serving plan from one call: forced choice and ratings."""

from __future__ import annotations

import warnings
from collections import Counter, defaultdict

import pytest

from trials.design.plan import serving_plan
from trials.errors import TrialsError, UnbalancedPlanWarning, UnknownMethodError

PANEL = [f"P{i:02d}" for i in range(1, 13)]


def _plan(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UnbalancedPlanWarning)
        return serving_plan(*args, **kwargs)


def _by_panelist(entries):
    out = defaultdict(list)
    for e in entries:
        out[e.panelist_code].append(e)
    return out


def test_a_triangle_plan_gives_each_panelist_three_coded_cups_in_the_iso_orders():
    entries = serving_plan("triangle", ["Control scone", "Low-sugar scone"], PANEL, rng=1)
    groups = _by_panelist(entries)
    assert list(groups) == PANEL
    patterns = Counter()
    for cups in groups.values():
        assert [c.position for c in cups] == [1, 2, 3]
        letters = "".join(c.role for c in cups)
        patterns[letters] += 1
        for c in cups:
            assert c.sample_name == {"A": "Control scone", "B": "Low-sugar scone"}[c.role]
    assert set(patterns.values()) == {2}  # ISO 4120: six orders equally often
    codes = [e.code for e in entries]
    assert len(codes) == len(set(codes)) == 36


@pytest.mark.parametrize("method", ["2afc", "3afc"])
@pytest.mark.parametrize("order", [("New", "Control"), ("Control", "New")], ids=["new-first",
                                                                                "control-first"])
def test_the_target_cups_carry_the_target_role_whatever_the_listing_order(method, order):
    # trials.methods: 2-AFC and 3-AFC score the cup of role B (target_role) as the target
    entries = serving_plan(method, list(order), PANEL, rng=3, target="New")
    assert {e.role for e in entries if e.sample_name == "New"} == {"B"}
    assert {e.role for e in entries if e.sample_name == "Control"} == {"A"}
    if method == "3afc":  # Frijters (1979): one target cup in each set of three
        for cups in _by_panelist(entries).values():
            assert [c.sample_name for c in cups].count("New") == 1
    with pytest.raises(TrialsError, match="'Other' is not one of"):
        serving_plan(method, list(order), PANEL, target="Other")


def test_a_target_is_ignored_by_methods_without_one():
    with_target = serving_plan("triangle", ["a", "b"], PANEL, rng=1, target="b")
    assert with_target == serving_plan("triangle", ["a", "b"], PANEL, rng=1)


def test_a_duo_trio_plan_marks_the_reference_cup():
    entries = _plan("duo-trio", ["Control", "Test"], PANEL[:4], rng=2, reference="constant")
    for cups in _by_panelist(entries).values():
        assert cups[0].role == "R" and cups[0].sample_name == "Control"
        assert sorted(c.sample_name for c in cups[1:]) == ["Control", "Test"]


def test_a_rating_plan_uses_one_code_per_sample_for_every_panelist():
    names = ["Brine 1", "Brine 2", "Brine 3", "Brine 4"]
    entries = serving_plan("rating", names, PANEL, rng=3)
    code_of = defaultdict(set)
    for e in entries:
        code_of[e.sample_name].add(e.code)
    assert all(len(c) == 1 for c in code_of.values())
    assert len({next(iter(c)) for c in code_of.values()}) == 4
    for cups in _by_panelist(entries).values():
        assert sorted(c.sample_name for c in cups) == sorted(names)
        assert [c.position for c in cups] == [1, 2, 3, 4]
        assert all(c.role == "" for c in cups)
    # 12 panelists = 3 Williams squares of 4: each sample 3 times at each position
    first = Counter(e.sample_name for e in entries if e.position == 1)
    assert set(first.values()) == {3}


def test_a_second_session_with_the_same_seed_changes_orders_and_codes():
    names = ["a", "b", "c", "d"]
    one = serving_plan("ranking", names, PANEL[:4], rng=4, session="1")
    two = serving_plan("ranking", names, PANEL[:4], rng=4, session="2",
                       exclude_codes=[e.code for e in one])
    assert not {e.code for e in one} & {e.code for e in two}
    o1 = {p: [e.sample_name for e in c] for p, c in _by_panelist(one).items()}
    o2 = {p: [e.sample_name for e in c] for p, c in _by_panelist(two).items()}
    assert all(o1[p] != o2[p] for p in o1)
    assert sorted(map(tuple, o1.values())) == sorted(map(tuple, o2.values()))


def test_fewer_samples_per_panelist_give_an_incomplete_block_plan():
    names = [f"Loaf {i}" for i in range(1, 8)]
    entries = serving_plan("rating", names, PANEL[:7], rng=5, per_panelist=3)
    groups = _by_panelist(entries)
    assert all(len(c) == 3 for c in groups.values())
    served = Counter(e.sample_name for e in entries)
    assert set(served.values()) == {3}  # the (7,3,1) design: r = 3


@pytest.mark.parametrize("call, error, text", [
    (lambda: serving_plan("triangle", ["a", "b", "c"], PANEL), TrialsError, "exactly two"),
    (lambda: serving_plan("rating", ["a", "b"], ["P1", "P1"]), TrialsError, "'P1' is listed twice"),
    (lambda: serving_plan("rating", ["a", "b"], []), TrialsError, "got none"),
    (lambda: serving_plan("rating", ["a"], ["P1"]), TrialsError, "1 sample"),
    (lambda: serving_plan("rating", ["a", "b"], ["P1"], per_panelist=3), TrialsError,
     "per_panelist=3"),
    (lambda: serving_plan("smell", ["a", "b"], ["P1"]), UnknownMethodError, "'smell'"),
])
def test_bad_input_is_refused_with_the_value(call, error, text):
    with pytest.raises(error, match=text):
        call()


def test_the_same_seed_gives_the_same_plan():
    a = _plan("tetrad", ["x", "y"], PANEL[:5], rng=6)
    assert a == _plan("tetrad", ["x", "y"], PANEL[:5], rng=6)
    assert a != _plan("tetrad", ["x", "y"], PANEL[:5], rng=7)


def test_a_panel_too_large_for_session_wide_codes_gets_codes_unique_within_each_set():
    panel = [f"P{i:03d}" for i in range(300)]  # 900 cups > 786 usable codes
    entries = _plan("triangle", ["Control", "Test"], panel, rng=8)
    groups = _by_panelist(entries)
    assert len(groups) == 300
    assert all(len({c.code for c in cups}) == 3 for cups in groups.values())
