"""Another process holding SQLite's write lock: readers go on, a writer says the store
is busy after a bounded wait and changes nothing (issue 15, item 6)."""

from __future__ import annotations

import sqlite3

import pytest

from trials import service
from trials.errors import TrialsError
from trials.store import engine


def test_a_held_write_lock_blocks_no_reader_and_a_writer_is_told_the_store_is_busy(
        tmp_path, monkeypatch):
    monkeypatch.setattr(engine, "BUSY_TIMEOUT_MS", 200)
    monkeypatch.setattr(engine, "BUSY_DEADLINE_S", 0.5)
    path = tmp_path / "busy.db"
    store = service.open_store(f"sqlite:///{path}")
    service.create_trial(store, name="Crust", method="triangle")
    other = sqlite3.connect(path, isolation_level=None)
    other.execute("BEGIN IMMEDIATE")  # another program takes the write lock and keeps it
    try:
        reopened = service.open_store(f"sqlite:///{path}")  # opening only reads
        assert [t.name for t in service.list_trials(reopened)] == ["Crust"]
        with pytest.raises(TrialsError, match="the store is busy"):
            service.create_trial(reopened, name="Rye", method="triangle")
    finally:
        other.execute("ROLLBACK")
        other.close()
    assert [t.name for t in service.list_trials(store)] == ["Crust"]


def test_a_read_only_store_refuses_a_change_with_a_message(tmp_path):
    path = tmp_path / "ro.db"
    service.open_store(f"sqlite:///{path}").close()
    store = service.open_store(f"sqlite:///file:{path}?mode=ro&uri=true")
    assert service.list_trials(store) == []  # reading works
    with pytest.raises(TrialsError, match="the store refused the change: attempt to write a "
                                          "readonly database"):
        service.create_trial(store, name="Rye", method="triangle")
