"""A tablet's answer is checked before its short write transaction (issue 19, item 5):
the write confirms the panelist's cups are still those read, and falls back to doing
everything inside the transaction when they are not; SQLite writers of all processes
queue on a lock file beside the store."""

from __future__ import annotations

import fcntl
import os

import pytest
import sqlalchemy as sa

from tests.integration.store_builders import rating_trial, roster
from trials import service
from trials.errors import TrialsError
from trials.store import answers as answer_rows
from trials.store import engine


def _first_cup(store, trial):
    token = service.panelist_links(store, trial)["T01"].split("=", 1)[1]
    ballot = service.ballot_for_token(store, token)
    return token, ballot.sets[0].codes[0]


def test_an_answer_whose_cups_changed_after_the_read_is_checked_again_and_stored_once(
        store, monkeypatch):
    trial = rating_trial(store, roster(store, 3))
    token, code = _first_cup(store, trial)
    seen = []

    def changed(tx, book, session, panelist, *, token):  # as if the plan was redrawn
        seen.append(panelist)
        return []

    monkeypatch.setattr(answer_rows, "served_cups", changed)
    service.record_answer(store, token, code=code, attribute="sweetness", value=4)
    service.record_answer(store, token, code=code, attribute="sweetness", value=4)
    assert seen == ["T01", "T01"]  # the fallback ran, inside the write, both times
    mine = [a for a in service.list_answers(store, trial) if a.panelist_code == "T01"]
    assert [(a.code, a.attribute, a.value) for a in mine] == [(code, "sweetness", "4")]


def test_a_changed_answer_still_replaces_the_first_and_is_audited(store):
    trial = rating_trial(store, roster(store, 2))
    token, code = _first_cup(store, trial)
    service.record_answer(store, token, code=code, attribute="sweetness", value=4)
    service.record_answer(store, token, code=code, attribute="sweetness", value=6)
    mine = [a for a in service.list_answers(store, trial) if a.panelist_code == "T01"]
    assert [a.value for a in mine] == ["6"]
    changes = [(e.field, e.old, e.new) for e in service.audit_log(store, trial)
               if e.table == "response" and e.field == "value"]
    assert changes == [("value", "4", "6")]


def test_a_writer_of_another_process_holding_the_queue_makes_a_writer_wait_then_say_busy(
        tmp_path, monkeypatch):
    monkeypatch.setattr(engine, "BUSY_DEADLINE_S", 0.3)
    path = tmp_path / "queue.db"
    store = service.open_store(f"sqlite:///{path}")
    service.create_trial(store, name="Crust", method="triangle")
    # another process's writer: its own open file, so flock conflicts as between processes
    other = os.open(f"{path}.writer", os.O_RDWR)
    fcntl.flock(other, fcntl.LOCK_EX)
    try:
        with pytest.raises(TrialsError, match="the store is busy"):
            service.create_trial(store, name="Rye", method="triangle")
        assert [t.name for t in service.list_trials(store)] == ["Crust"]  # reads go on
    finally:
        fcntl.flock(other, fcntl.LOCK_UN)
        os.close(other)
    service.create_trial(store, name="Rye", method="triangle")
    assert sorted(t.name for t in service.list_trials(store)) == ["Crust", "Rye"]
    store.close()


def test_a_long_queue_that_keeps_moving_is_waited_out_not_called_busy(tmp_path, monkeypatch):
    # Another process takes the lock 12 times in a row for 0.1 s each, 1.2 s in all: four
    # times the deadline, but no single hold reaches it. (CI once saw 30 threads each
    # writing 24 times told "busy" though the lock changed hands all along.)
    import threading
    import time

    monkeypatch.setattr(engine, "BUSY_DEADLINE_S", 0.3)
    path = tmp_path / "queue.db"
    store = service.open_store(f"sqlite:///{path}")
    other = engine._WriterQueue(f"{path}.writer")  # its own open file, as another process
    started = threading.Event()

    def busy_neighbour() -> None:
        for _ in range(12):
            with other.held(10.0):
                started.set()
                time.sleep(0.1)

    neighbour = threading.Thread(target=busy_neighbour)
    neighbour.start()
    started.wait()
    try:
        service.create_trial(store, name="Rye", method="triangle")  # waits, then writes
    finally:
        neighbour.join()
        other.close()
    assert [t.name for t in service.list_trials(store)] == ["Rye"]
    store.close()


def test_a_link_replaced_after_an_answer_opens_nothing_though_its_ballot_was_kept(store):
    from trials.errors import AccessDenied
    from trials.store.schema import AccessTokenRow

    trial = rating_trial(store, roster(store, 2))
    token, code = _first_cup(store, trial)
    service.record_answer(store, token, code=code, attribute="sweetness", value=4)
    assert token in store.memo["tablet_books"]  # the ballot is kept for the next answer
    with store.engine.begin() as conn:  # the leader's link for T01 is replaced
        conn.execute(sa.update(AccessTokenRow).where(AccessTokenRow.token == token)
                     .values(token="replaced-link"))
    with pytest.raises(AccessDenied):
        service.record_answer(store, token, code=code, attribute="overall liking", value=7)
    mine = [a for a in service.list_answers(store, trial) if a.panelist_code == "T01"]
    assert [(a.attribute, a.value) for a in mine] == [("sweetness", "4")]
