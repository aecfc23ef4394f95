"""The panelist's tasting screen under AppTest: a first screen with the session's
allergens and the stop-at-any-time note; only that panelist's codes, in serving order,
one step at a time; a score or rank saved at the tap, a forced choice when confirmed;
back, change and a review until Finish; a reload resumes; a bad link shows nothing; a
method added to the registry at run time works with no other change."""

from __future__ import annotations

from tests.app.conftest import entry_test, page_test, page_text
from trials import service
from trials.model import Attribute, Sample


def _token(store, trial_id: int, panelist: str) -> str:
    return service.panelist_token(store, trial_id, panelist)


def _open(token: str, *, start: bool = False):
    at = page_test("taste")
    at.query_params["t"] = token
    at.run()
    if start:
        assert not at.exception, [e.message for e in at.exception]
        at.button(key="nav_start").click()
        at.run()
    return at


def _tap(at, key: str):
    at.button(key=key).click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def _done(at) -> bool:
    return any("Thank you, you are done." in s.value for s in at.success)


def _sample_names(store, trial_id: int) -> list[str]:
    return [x.name for x in service.get_trial(store, trial_id).samples]


def test_a_bad_token_shows_an_error_and_no_ballot(small_trials):
    at = _open("not-a-token")
    assert [e.value for e in at.error] == [
        "This link does not open a ballot. Ask the panel leader for a new one."]
    assert not at.button and not at.markdown and not at.metric


def test_the_tasting_screen_without_a_token_shows_an_error_only(small_trials):
    at = page_test("taste").run()
    assert len(at.error) == 1 and not at.button and not at.markdown


def test_the_first_screen_lists_the_allergens_and_says_a_panelist_may_stop(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Scones: two fats", method="triangle",
                                 samples=[Sample("Butter scone", allergens=("milk", "gluten")),
                                          Sample("Lard scone", allergens=("gluten",))])
    service.draw_plan(store, study.id, panelist_codes=["T01", "T02", "T03"], seed=2)
    at = _open(_token(store, study.id, "T02"))
    text = page_text(at)
    assert "you may stop at any time" in text
    assert len(at.warning) == 1 and "contain: **gluten, milk**." in text  # pooled, sorted
    assert "Tap the code" in text and "Circle" not in text
    assert [b.key for b in at.button] == ["nav_start"]  # no cup before Start
    assert not any(name in text for name in _sample_names(store, study.id))


def test_a_triangle_ballot_shows_this_panelists_codes_in_serving_order(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    mine = [e.code for e in sorted(service.plan(store, trial_id), key=lambda e: e.position)
            if e.panelist_code == "T02"]
    others = {e.code for e in service.plan(store, trial_id) if e.panelist_code != "T02"}
    at = _open(_token(store, trial_id, "T02"), start=True)
    assert not at.exception, [e.message for e in at.exception]
    assert [b.label for b in at.button if b.key.startswith("pick_")] == mine
    text = page_text(at)
    assert not any(name in text for name in _sample_names(store, trial_id))
    assert not any(code in text for code in others - set(mine))


def test_a_triangle_choice_is_confirmed_then_saved_changed_from_the_review_and_finished(
        small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    at = _open(_token(store, trial_id, "T03"), start=True)
    picks = [b for b in at.button if b.key.startswith("pick_")]
    first, second = picks[1].label, picks[2].label
    _tap(at, picks[1].key)
    assert service.list_answers(store, trial_id) == []  # a tap is not yet an answer
    assert f"Your choice: {first}" in page_text(at)
    _tap(at, "confirm_1_0")
    assert [(r.panelist_code, r.code, r.attribute, r.mode.value)
            for r in service.list_answers(store, trial_id)] == [("T03", first, "choice", "tablet")]
    assert "Check your answers" in page_text(at)
    _tap(at, "change_0")
    _tap(at, f"pick_1_0_{second}")
    _tap(at, "confirm_1_0")
    assert [r.code for r in service.list_answers(store, trial_id)] == [second]
    _tap(at, "nav_finish")
    assert _done(at) and not at.button
    assert [(e.old, e.new) for e in service.audit_log(store, trial_id)
            if e.field == "code"] == [(first, second)]


def test_a_rating_ballot_steps_through_the_cups_and_resumes_after_a_reload(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    cups = [e.code for e in sorted(service.plan(store, trial_id), key=lambda e: e.position)
            if e.panelist_code == "T01"]
    token = _token(store, trial_id, "T01")
    at = _open(token, start=True)
    assert cups[0] in page_text(at) and cups[1] not in page_text(at)
    labels = [b.label for b in at.button if b.key.startswith("score_")]
    # every point of the 9-point hedonic scale worded (Peryam and Pilgrim 1957), low to high
    assert labels[0] == "**1** Dislike extremely" and labels[-1] == "**9** Like extremely"
    assert len(labels) == 9
    assert at.button(key="nav_next").disabled
    _tap(at, f"score_1_{cups[0]}_0_8")
    assert [(r.code, r.value) for r in service.list_answers(store, trial_id)] == [(cups[0], "8")]
    assert cups[0] in page_text(at)  # the cup stays until Next
    at.text_area(key=f"comment_1_{cups[0]}").input("a touch dry")
    _tap(at, "nav_next")
    assert cups[1] in page_text(at)
    assert [r.comment for r in service.list_answers(store, trial_id)] == ["a touch dry"]

    again = _open(token)  # a reload: a fresh session, the state comes from the store
    assert cups[1] in page_text(again) and "Cup 2 of 2" in page_text(again)
    _tap(again, f"score_1_{cups[1]}_0_3")
    _tap(again, "nav_back")
    assert "Cup 1 of 2" in page_text(again) and "you gave" in page_text(again)
    _tap(again, f"score_1_{cups[0]}_0_6")
    _tap(again, "nav_next")
    _tap(again, "nav_next")
    assert "Check your answers" in page_text(again)
    _tap(again, "nav_finish")
    assert sorted((r.code, r.value) for r in service.list_answers(store, trial_id)) == sorted(
        [(cups[0], "6"), (cups[1], "3")])
    assert _done(again)
    assert not any(n in page_text(again) for n in _sample_names(store, trial_id))


def test_a_panelist_link_opens_the_tasting_screen_alone_through_the_entry_script(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    at = entry_test()
    at.query_params["t"] = _token(store, trial_id, "T04")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert "Before you start" in page_text(at)
    at.button(key="nav_start").click()
    at.run()
    assert "Which sample is different from the other two?" in page_text(at)
    assert "Trials" not in [t.value for t in at.title]


def test_the_link_listed_by_study_show_opens_this_screen(small_trials, capsys):
    import json

    from trials.cli import main

    trial_id = small_trials["triangle"]
    assert main(["study", "show", str(trial_id), "--json"]) == 0
    path = json.loads(capsys.readouterr().out)["study"]["links"]["T05"]
    assert path.startswith("/taste?t=")
    at = _open(path.split("t=", 1)[1])
    assert "Panelist T05" in page_text(at)


def test_a_ranking_ballot_saves_each_rank_offers_each_rank_once_and_swaps(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Granola: three sweetness levels", method="ranking",
                                 samples=["Granola low sugar", "Granola mid sugar",
                                          "Granola high sugar"])
    service.draw_plan(store, study.id, panelist_codes=["T01", "T02"], seed=4)
    cups = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)
            if e.panelist_code == "T02"]
    at = _open(_token(store, study.id, "T02"), start=True)
    _tap(at, f"rank_1_{cups[0]}_1")
    assert at.button(key=f"rank_1_{cups[1]}_1").disabled  # rank 1 is taken
    _tap(at, f"rank_1_{cups[1]}_3")
    _tap(at, f"rank_1_{cups[2]}_2")
    _tap(at, f"rank_1_{cups[0]}_3")  # a ranked cup takes a taken rank: the two swap
    got = sorted((r.code, r.value) for r in service.list_answers(store, study.id))
    assert got == sorted([(cups[0], "3"), (cups[1], "1"), (cups[2], "2")])
    assert len(got) == 3
    _tap(at, "nav_next")
    _tap(at, "nav_finish")
    assert _done(at)
    assert not any(n in page_text(at) for n in _sample_names(store, study.id))


def test_a_paired_preference_ballot_accepts_no_preference(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Lemonade: two sugars", method="paired-preference",
                                 samples=["Cane sugar lemonade", "Honey lemonade"])
    service.draw_plan(store, study.id, panelist_codes=["T01", "T02"], seed=9)
    at = _open(_token(store, study.id, "T01"), start=True)
    assert "No preference" in [b.label for b in at.button]
    _tap(at, "nopref_1_0")
    assert "Your choice: no preference" in page_text(at)
    _tap(at, "confirm_1_0")
    assert [(r.code, r.value) for r in service.list_answers(store, study.id)] == [
        ("", "no preference")]
    _tap(at, "nav_finish")
    assert _done(at)


def test_a_method_added_to_the_registry_runs_on_the_tablet_with_no_other_change(small_trials):
    from tests.unit.test_new_method import LEAST
    from trials.methods import register_method, unregister_method

    store = small_trials["store"]
    register_method(LEAST)
    try:
        study = service.create_trial(
            store, name="Stock: half the salt", method=LEAST.name,
            samples=[Sample("Full-salt stock", is_control=True), Sample("Half-salt stock")],
            attributes=[Attribute("saltiness", kind="intensity", low=1, high=5)],
            target_sample="Full-salt stock")
        service.draw_plan(store, study.id, panelist_codes=["T01", "T02", "T03"], seed=6)
        at = _open(_token(store, study.id, "T01"))
        assert LEAST.tablet_instructions in page_text(at)
        _tap(at, "nav_start")
        text = page_text(at)
        assert LEAST.question in text and "Attribute: **saltiness**" in text
        picks = [b for b in at.button if b.key.startswith("pick_")]
        assert len(picks) == 3
        _tap(at, picks[0].key)
        _tap(at, "confirm_1_0")
        _tap(at, "nav_finish")
        assert _done(at)
        assert [r.code for r in service.list_answers(store, study.id)] == [picks[0].label]
        assert not any(n in page_text(at) for n in _sample_names(store, study.id))
    finally:
        unregister_method(LEAST.name)
