"""Allergen checks: declared allergens matched without regard to case or spaces.

Common practice (no source): a panelist is never served a sample holding an allergen
they declared; the leader decides, with the local food code, what else applies.
"""

from __future__ import annotations

import pytest

from trials.design.allergens import allergen_conflicts, screen_orders, screen_plan
from trials.errors import TrialsError
from trials.model import Panelist, PlanEntry, Sample

SAMPLES = [
    Sample("Oat crumble", allergens=("Gluten ", "milk")),
    Sample("Rice crumble", allergens=()),
    Sample("Nut crumble", allergens=("tree nuts", "MILK")),
]
PANEL = [
    Panelist("P01", allergens=(" milk",)),
    Panelist("P02"),
    Panelist("P03", allergens=("Tree Nuts", "sesame")),
]


def test_conflicts_match_allergens_without_regard_to_case_or_spaces():
    found = allergen_conflicts(SAMPLES, PANEL)
    assert [(c.panelist_code, c.sample_name, c.allergens) for c in found] == [
        ("P01", "Oat crumble", ("milk",)),
        ("P01", "Nut crumble", ("milk",)),
        ("P03", "Nut crumble", ("tree nuts",)),
    ]


def test_no_declared_allergens_means_no_conflicts():
    assert allergen_conflicts(SAMPLES, [Panelist("P02")]) == []
    assert allergen_conflicts([Sample("Plain")], PANEL) == []


def test_a_different_word_for_an_allergen_is_not_guessed():
    assert allergen_conflicts([Sample("Bread", allergens=("wheat",))],
                              [Panelist("P9", allergens=("gluten",))]) == []


def _rating_plan():
    entries = []
    for p in PANEL:
        for pos, (s, code) in enumerate(zip(SAMPLES, ["415", "862", "307"]), start=1):
            entries.append(PlanEntry("1", p.code, pos, code, s.name))
    return entries


def test_omitting_takes_out_only_the_conflicting_cups_and_renumbers_positions():
    screen = screen_plan(_rating_plan(), SAMPLES, PANEL, mode="omit")
    assert screen.omitted == 3 and len(screen.conflicts) == 3
    p1 = [(e.position, e.sample_name) for e in screen.entries if e.panelist_code == "P01"]
    assert p1 == [(1, "Rice crumble")]
    p3 = [(e.position, e.sample_name) for e in screen.entries if e.panelist_code == "P03"]
    assert p3 == [(1, "Oat crumble"), (2, "Rice crumble")]
    assert len([e for e in screen.entries if e.panelist_code == "P02"]) == 3


def test_flagging_keeps_the_plan_and_lists_the_conflicts():
    plan = _rating_plan()
    screen = screen_plan(plan, SAMPLES, PANEL, mode="flag")
    assert screen.entries == plan and screen.omitted == 0 and len(screen.conflicts) == 3


def test_raising_names_every_conflict():
    with pytest.raises(TrialsError, match="'P01' and sample 'Oat crumble' \\(milk\\)"):
        screen_plan(_rating_plan(), SAMPLES, PANEL, mode="raise")


def test_a_forced_choice_set_with_one_conflicting_sample_is_taken_out_whole():
    plan = [
        PlanEntry("1", "P01", 1, "415", "Oat crumble", role="A"),
        PlanEntry("1", "P01", 2, "862", "Rice crumble", role="B"),
        PlanEntry("1", "P01", 3, "307", "Oat crumble", role="A"),
        PlanEntry("1", "P02", 1, "529", "Rice crumble", role="B"),
        PlanEntry("1", "P02", 2, "174", "Oat crumble", role="A"),
        PlanEntry("1", "P02", 3, "968", "Oat crumble", role="A"),
    ]
    screen = screen_plan(plan, SAMPLES, PANEL, mode="omit")
    assert {e.panelist_code for e in screen.entries} == {"P02"}
    assert screen.omitted == 3


def test_conflicts_with_samples_not_in_the_plan_are_not_reported():
    plan = [PlanEntry("1", "P01", 1, "862", "Rice crumble")]
    assert screen_plan(plan, SAMPLES, PANEL).conflicts == []


def test_index_orders_are_screened_the_same_way():
    orders = [[0, 1, 2], [2, 1, 0], [1, 2, 0]]
    screen = screen_orders(orders, SAMPLES, PANEL, mode="omit")
    assert screen.orders == [[1], [2, 1, 0], [1, 0]]
    assert screen.omitted == 3
    assert screen_orders(orders, SAMPLES, PANEL, mode="flag").orders == orders


@pytest.mark.parametrize("call, text", [
    (lambda: screen_plan([], SAMPLES, PANEL, mode="skip"), "'skip'"),
    (lambda: screen_orders([[0]], SAMPLES, PANEL), "1 orders for 3 panelists"),
    (lambda: screen_orders([[0], [5], [1]], SAMPLES, PANEL), "index 5"),
])
def test_bad_input_is_refused_with_the_value(call, text):
    with pytest.raises(TrialsError, match=text):
        call()
