"""The panelist's tasting screen under AppTest: only that panelist's codes, in serving
order, one step at a time; every answer saved at once; a reload resumes; a bad link
shows nothing."""

from __future__ import annotations

from tests.app.conftest import entry_test, page_test, page_text
from trials import service


def _token(store, trial_id: int, panelist: str) -> str:
    return service.panelist_token(store, trial_id, panelist)


def _open(token: str):
    at = page_test("taste")
    at.query_params["t"] = token
    return at.run()


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


def test_a_triangle_ballot_shows_this_panelists_codes_in_serving_order(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    mine = [e.code for e in sorted(service.plan(store, trial_id), key=lambda e: e.position)
            if e.panelist_code == "T02"]
    others = {e.code for e in service.plan(store, trial_id) if e.panelist_code != "T02"}
    at = _open(_token(store, trial_id, "T02"))
    assert not at.exception, [e.message for e in at.exception]
    assert [b.label for b in at.button] == mine
    text = page_text(at)
    assert not any(name in text for name in _sample_names(store, trial_id))
    assert not any(code in text for code in others - set(mine))


def test_a_triangle_choice_is_saved_at_once_and_the_panelist_is_thanked(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    at = _open(_token(store, trial_id, "T03"))
    pick = at.button[1].label
    at.button[1].click()
    at.run()
    got = [(r.panelist_code, r.code, r.attribute, r.mode.value)
           for r in service.list_answers(store, trial_id)]
    assert got == [("T03", pick, "choice", "tablet")]
    assert any("Thank you, you are done." in s.value for s in at.success)
    assert not at.button


def test_a_rating_ballot_steps_through_the_cups_and_resumes_after_a_reload(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    cups = [e.code for e in sorted(service.plan(store, trial_id), key=lambda e: e.position)
            if e.panelist_code == "T01"]
    token = _token(store, trial_id, "T01")
    at = _open(token)
    assert cups[0] in page_text(at) and cups[1] not in page_text(at)
    next(b for b in at.button if b.label == "8").click()
    at.run()
    assert [(r.code, r.value) for r in service.list_answers(store, trial_id)] == [(cups[0], "8")]
    assert cups[1] in page_text(at)

    again = _open(token)  # a reload: a fresh session, the state comes from the store
    assert cups[1] in page_text(again) and "Cup 2 of 2" in page_text(again)
    next(b for b in again.button if b.label == "3").click()
    again.run()
    assert sorted((r.code, r.value) for r in service.list_answers(store, trial_id)) == sorted(
        [(cups[0], "8"), (cups[1], "3")])
    assert any("Thank you, you are done." in s.value for s in again.success)
    assert not any(n in page_text(again) for n in _sample_names(store, trial_id))


def test_a_panelist_link_opens_the_tasting_screen_alone_through_the_entry_script(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    at = entry_test()
    at.query_params["t"] = _token(store, trial_id, "T04")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
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


def test_a_ranking_ballot_saves_each_rank_and_offers_each_rank_once(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Granola: three sweetness levels", method="ranking",
                                 samples=["Granola low sugar", "Granola mid sugar",
                                          "Granola high sugar"])
    service.draw_plan(store, study.id, panelist_codes=["T01", "T02"], seed=4)
    cups = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)
            if e.panelist_code == "T02"]
    at = _open(_token(store, study.id, "T02"))
    at.button(key=f"rank_1_{cups[0]}_1").click()
    at.run()
    assert at.button(key=f"rank_1_{cups[1]}_1").disabled  # rank 1 is taken
    at.button(key=f"rank_1_{cups[1]}_3").click()
    at.run()
    at.button(key=f"rank_1_{cups[2]}_2").click()
    at.run()
    got = sorted((r.code, r.value) for r in service.list_answers(store, study.id))
    assert got == sorted([(cups[0], "1"), (cups[1], "3"), (cups[2], "2")])
    assert any("Thank you, you are done." in s.value for s in at.success)
    assert not any(n in page_text(at) for n in _sample_names(store, study.id))


def test_a_paired_preference_ballot_accepts_no_preference(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Lemonade: two sugars", method="paired-preference",
                                 samples=["Cane sugar lemonade", "Honey lemonade"])
    service.draw_plan(store, study.id, panelist_codes=["T01", "T02"], seed=9)
    at = _open(_token(store, study.id, "T01"))
    assert "No preference" in [b.label for b in at.button]
    next(b for b in at.button if b.label == "No preference").click()
    at.run()
    assert [(r.code, r.value) for r in service.list_answers(store, study.id)] == [
        ("", "no preference")]
    assert any("Thank you, you are done." in s.value for s in at.success)
