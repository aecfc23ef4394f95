"""The tablet's answers until Finish: a change is an update of the one answer, audited
with both values, and the analysis reads the last; the same request sent again (a
reload, a resent tap after a lost connection) records nothing twice; a cup's comment is
set and cleared, audited; Finish is refused while a step is open, and after it the
tablet can change nothing (the leader still can). On SQLite and PostgreSQL."""

from __future__ import annotations

import threading

import pytest

from tests.integration.store_builders import rating_trial, roster, triangle_trial
from trials import service
from trials.errors import AccessDenied, TrialsError


def _rating(store):
    sid = rating_trial(store, roster(store, 3))
    token = service.panelist_token(store, sid, "T02")
    return sid, token, service.ballot_for_token(store, token).sets[0].codes


def test_a_changed_answer_is_one_row_audited_with_both_values_and_analysed_as_the_last(store):
    sid, token, cups = _rating(store)
    service.record_answer(store, token, code=cups[0], attribute="overall liking", value=3)
    service.record_answer(store, token, code=cups[0], attribute="overall liking", value=6)
    service.record_answer(store, token, code=cups[0], attribute="overall liking", value=8)
    rows = [r for r in service.list_answers(store, sid) if r.code == cups[0]]
    assert [(r.attribute, r.value) for r in rows] == [("overall liking", "8")]
    log = [(e.field, e.old, e.new) for e in service.audit_log(store, sid)
           if e.table == "response"]
    assert log == [("created", None, f"{cups[0]}:overall liking = {cups[0]} 3"),
                   ("value", "3", "6"), ("value", "6", "8")]
    frame = service.answers_frame(store, sid)  # what the analysis reads
    assert frame.loc[frame["code"] == cups[0], "score"].tolist() == [8.0]


def test_the_same_answer_sent_again_at_once_is_recorded_once(store):
    sid, token, cups = _rating(store)
    barrier = threading.Barrier(4)
    errors: list[BaseException] = []

    def send() -> None:  # a double tap and two resends after a dropped connection
        try:
            barrier.wait()
            service.record_answer(store, token, code=cups[1], attribute="sweetness", value=4)
        except BaseException as exc:  # noqa: BLE001 - reported below
            errors.append(exc)

    threads = [threading.Thread(target=send) for _ in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    rows = service.list_answers(store, sid)
    assert [(r.code, r.attribute, r.value) for r in rows] == [(cups[1], "sweetness", "4")]
    created = [e for e in service.audit_log(store, sid) if e.table == "response"]
    assert [e.field for e in created] == ["created"]


def test_a_cups_comment_is_kept_on_its_answer_set_changed_and_cleared_audited(store):
    sid, token, cups = _rating(store)
    with pytest.raises(TrialsError, match=f"answer cup {cups[0]} before commenting"):
        service.record_comment(store, token, code=cups[0], comment="soft crust")
    with pytest.raises(TrialsError, match="'999' is not one of your cups"):
        service.record_comment(store, token, code="999", comment="soft crust")
    service.record_answer(store, token, code=cups[0], attribute="sweetness", value=2)
    service.record_answer(store, token, code=cups[0], attribute="overall liking", value=5)
    service.record_comment(store, token, code=cups[0], comment="soft crust")
    service.record_comment(store, token, code=cups[0], comment="soft crust")  # again: no-op
    by_attr = {r.attribute: r.comment for r in service.list_answers(store, sid)}
    # the cup's comment is kept on its first attribute's answer (trials.answers)
    assert by_attr == {"overall liking": "soft crust", "sweetness": ""}
    # an answer repeated without its comment keeps the comment
    service.record_answer(store, token, code=cups[0], attribute="overall liking", value=5)
    service.record_comment(store, token, code=cups[0], comment="")
    assert {r.comment for r in service.list_answers(store, sid)} == {""}
    log = [(e.old, e.new) for e in service.audit_log(store, sid) if e.field == "comment"]
    assert log == [("", "soft crust"), ("soft crust", "")]
    ballot = service.ballot_for_token(store, token)
    assert all(a.comment == "" for a in ballot.answers)


def test_finish_waits_for_every_step_then_closes_the_tablet_but_not_the_leader(store):
    sid, token, cups = _rating(store)
    for code in cups[:-1]:
        for name, v in (("overall liking", 6), ("sweetness", 3)):
            service.record_answer(store, token, code=code, attribute=name, value=v)
    with pytest.raises(TrialsError, match=f"1 of {len(cups)} steps are not answered yet"):
        service.finish_ballot(store, token)
    service.record_answer(store, token, code=cups[-1], attribute="overall liking", value=7)
    service.record_answer(store, token, code=cups[-1], attribute="sweetness", value=9)
    assert service.ballot_for_token(store, token).finished == ()
    assert service.finish_ballot(store, token) is True
    assert service.finish_ballot(store, token) is False  # a repeated Finish: nothing new
    assert service.ballot_for_token(store, token).finished == ("1",)
    with pytest.raises(AccessDenied, match="finished this tasting"):
        service.record_answer(store, token, code=cups[0], attribute="sweetness", value=1)
    with pytest.raises(AccessDenied, match="finished this tasting"):
        service.record_comment(store, token, code=cups[0], comment="late")
    service.enter_answer(store, sid, panelist_code="T02", code=cups[0], attribute="sweetness",
                         value=1, entered_by="leader")
    values = {(r.code, r.attribute): r.value for r in service.list_answers(store, sid)}
    assert values[(cups[0], "sweetness")] == "1"
    finished = [e for e in service.audit_log(store, sid) if e.field == "finished"]
    assert [(e.table, e.who, e.new) for e in finished] == [
        ("ballot_finish", "T02", "session 1, panelist T02")]
    # another panelist's ballot is still open
    other = service.panelist_token(store, sid, "T01")
    assert service.ballot_for_token(store, other).finished == ()


def test_a_forced_choice_changed_before_finish_keeps_one_answer_and_the_sets_comment(store):
    sid = triangle_trial(store, roster(store, 6))
    token = service.panelist_token(store, sid, "T04")
    cups = service.ballot_for_token(store, token).sets[0].codes
    service.record_answer(store, token, code=cups[2], attribute="choice")
    service.record_comment(store, token, code=cups[0], comment="all three tasted alike")
    service.record_answer(store, token, code=cups[1], attribute="choice")
    [r] = service.list_answers(store, sid)
    assert (r.code, r.comment) == (cups[1], "all three tasted alike")
    assert [(e.old, e.new) for e in service.audit_log(store, sid) if e.field == "code"] == [
        (cups[2], cups[1])]
    assert service.finish_ballot(store, token) is True


def test_the_ballot_carries_the_paper_ballots_scale_words_and_the_sessions_allergens(store):
    sid, token, _cups = _rating(store)
    ballot = service.ballot_for_token(store, token)
    liking, sweetness = ballot.attributes
    # the 9-point hedonic scale's words, Peryam and Pilgrim (1957), as the paper prints them
    assert liking.anchors[0] == "Dislike extremely" and liking.anchors[-1] == "Like extremely"
    assert len(liking.anchors) == 9
    assert sweetness.anchors == ("Very weak", "Very strong")  # common practice, no source
    assert ballot.allergens == {"1": ()}
    assert "Glaze" not in repr(ballot)  # no sample name on the ballot
