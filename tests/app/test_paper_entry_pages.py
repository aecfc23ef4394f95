"""The paper-entry screen under AppTest: a long session in pages of whole ballots, and
the "no preference" box of a paired preference."""

from __future__ import annotations

import datetime as dt

from tests.app.conftest import by_label, page_test, page_text
from trials import service
from trials.model import Attribute, Sample


def _entry(trial_id: int):
    at = page_test("entry")
    at.query_params["study"] = str(trial_id)
    return at.run()


def test_a_long_session_comes_in_pages_of_whole_ballots_saved_one_at_a_time(app_db):
    store = service.open_store(app_db)
    codes = [f"L{i:02d}" for i in range(1, 25)]
    for c in codes:
        service.add_panelist(store, c, consent_on=dt.date(2026, 4, 1))
    trial = service.create_trial(
        store, name="Brioche: two proofs", method="rating",
        samples=[Sample("Cold proof", is_control=True), Sample("Warm proof")],
        attributes=[Attribute("liking", low=1, high=9), Attribute("softness", low=1, high=7),
                    Attribute("sweetness", low=1, high=7)])
    service.draw_plan(store, trial.id, panelist_codes=codes, seed=2)
    at = _entry(trial.id)
    assert not at.exception, [e.message for e in at.exception]
    pages = by_label(at.selectbox, "Ballots")
    # 24 ballots of 2 cups and 3 scales: 40 rows (120 boxes) a page, ballots never split
    assert len(pages.options) == 2
    boxes = {w.key for w in at.text_input if w.key and w.key.startswith("paper_")}
    assert len(boxes) == 20 * 2 * 3
    assert {k.split("_")[4] for k in boxes} == {f"L{i:02d}" for i in range(1, 21)}
    pages.set_value(1).run()
    boxes = [w for w in at.text_input if w.key and w.key.startswith("paper_")]
    assert {w.key.split("_")[4] for w in boxes} == {"L21", "L22", "L23", "L24"}
    cup = next(e for e in service.plan(store, trial.id) if e.panelist_code == "L23")
    at.text_input(key=f"paper_{trial.id}_1_0_L23_{cup.code}_softness").input("5")
    by_label(at.button, "Check and save").click()
    at.run()
    assert not at.error, [e.value for e in at.error]
    got = [(a.panelist_code, a.code, a.attribute, a.value)
           for a in service.list_answers(store, trial.id)]
    assert got == [("L23", cup.code, "softness", "5")]
    assert "Saved 1 changed row(s)" in page_text(at)


def test_no_preference_and_a_chosen_code_are_saved_from_the_paired_preference_grid(app_db):
    store = service.open_store(app_db)
    for c in ("M01", "M02"):
        service.add_panelist(store, c, consent_on=dt.date(2026, 4, 1))
    trial = service.create_trial(
        store, name="Lemonade: two sugars", method="paired-preference",
        samples=[Sample("Cane sugar", is_control=True), Sample("Honey")])
    service.draw_plan(store, trial.id, panelist_codes=["M01", "M02"], seed=9)
    first = min((e for e in service.plan(store, trial.id) if e.panelist_code == "M01"),
                key=lambda e: e.position)
    at = _entry(trial.id)
    at.text_input(key=f"paper_{trial.id}_1_0_M01_1_chosen").input(first.code)
    at.checkbox(key=f"paper_{trial.id}_1_0_M02_1_no_preference").check()
    by_label(at.button, "Check and save").click()
    at.run()
    assert not at.error, [e.value for e in at.error]
    got = {a.panelist_code: (a.code, a.value) for a in service.list_answers(store, trial.id)}
    assert got == {"M01": (first.code, ""), "M02": ("", "no preference")}
