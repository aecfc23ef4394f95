"""Opening the store: URL choice, SQLite settings, schema versions and upgrades."""

from __future__ import annotations

import sqlite3

import pytest
import sqlalchemy as sa

from trials import service
from trials.errors import TrialsError
from trials.store import SCHEMA_VERSION, open_store, resolve_url

# The first schema (version 1), as its DDL stood before study.product was added.
V1_DDL = """
CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at DATETIME, note VARCHAR(200));
INSERT INTO schema_version VALUES (1, '2026-01-01 00:00:00', 'created');
CREATE TABLE study (id INTEGER PRIMARY KEY, name VARCHAR(200), objective TEXT, method VARCHAR(40),
  alpha FLOAT, beta FLOAT, pd FLOAT, delta FLOAT, status VARCHAR(20), decision TEXT,
  rationale TEXT, created_on DATE);
CREATE TABLE sample (id INTEGER PRIMARY KEY, study_id INTEGER REFERENCES study(id) \
ON DELETE CASCADE,
  position INTEGER, name VARCHAR(200), is_control BOOLEAN, allergens VARCHAR(400),
  description TEXT, CONSTRAINT uq_sample_name UNIQUE (study_id, name));
CREATE TABLE attribute (id INTEGER PRIMARY KEY, study_id INTEGER REFERENCES study(id) \
ON DELETE CASCADE,
  position INTEGER, name VARCHAR(200), kind VARCHAR(20), low INTEGER, high INTEGER, anchors TEXT,
  CONSTRAINT uq_attribute_name UNIQUE (study_id, name));
CREATE TABLE batch (id INTEGER PRIMARY KEY, sample_id INTEGER REFERENCES sample(id) \
ON DELETE CASCADE,
  label VARCHAR(100), prepared_on DATE, prepared_by VARCHAR(200), safety_signed_by VARCHAR(200),
  safety_signed_on DATE, notes TEXT, CONSTRAINT uq_batch_label UNIQUE (sample_id, label));
CREATE TABLE batch_value (id INTEGER PRIMARY KEY, batch_id INTEGER REFERENCES batch(id) \
ON DELETE CASCADE,
  kind VARCHAR(10), position INTEGER, name VARCHAR(200), value VARCHAR(200), is_number BOOLEAN,
  unit VARCHAR(40), CONSTRAINT uq_batch_value UNIQUE (batch_id, kind, name));
CREATE TABLE panelist (id INTEGER PRIMARY KEY, code VARCHAR(40) UNIQUE, allergens VARCHAR(400),
  restrictions TEXT, consent_on DATE);
CREATE TABLE tasting_session (id INTEGER PRIMARY KEY, study_id INTEGER REFERENCES study(id) \
ON DELETE CASCADE,
  name VARCHAR(40), held_on DATE, CONSTRAINT uq_session_name UNIQUE (study_id, name));
CREATE TABLE plan_entry (id INTEGER PRIMARY KEY,
  session_id INTEGER REFERENCES tasting_session(id) ON DELETE CASCADE,
  panelist_id INTEGER REFERENCES panelist(id), position INTEGER, code VARCHAR(10),
  sample_id INTEGER REFERENCES sample(id) ON DELETE CASCADE, set_index INTEGER, role VARCHAR(4),
  batch_id INTEGER REFERENCES batch(id) ON DELETE SET NULL,
  CONSTRAINT uq_plan_position UNIQUE (session_id, panelist_id, position),
  CONSTRAINT uq_plan_code UNIQUE (session_id, panelist_id, code));
CREATE TABLE access_token (id INTEGER PRIMARY KEY, study_id INTEGER REFERENCES study(id) \
ON DELETE CASCADE,
  panelist_id INTEGER REFERENCES panelist(id), token VARCHAR(64) UNIQUE,
  CONSTRAINT uq_token_owner UNIQUE (study_id, panelist_id));
CREATE TABLE response (id INTEGER PRIMARY KEY, study_id INTEGER REFERENCES study(id) \
ON DELETE CASCADE,
  session_id INTEGER REFERENCES tasting_session(id) ON DELETE CASCADE,
  panelist_id INTEGER REFERENCES panelist(id), question VARCHAR(240), code VARCHAR(40),
  attribute VARCHAR(200), value VARCHAR(200), comment TEXT, entered_by VARCHAR(200),
  entered_at DATETIME, mode VARCHAR(10),
  CONSTRAINT uq_response_question UNIQUE (session_id, panelist_id, question));
CREATE TABLE audit_log (id INTEGER PRIMARY KEY, study_id INTEGER, at DATETIME, who VARCHAR(200),
  table_name VARCHAR(40), row_id INTEGER, field VARCHAR(200), old_value TEXT, new_value TEXT);
INSERT INTO study VALUES (1, 'Old trial', 'kept from v1', 'triangle', 0.05, 0.2, NULL, NULL,
  'planning', '', '', '2026-01-01');
INSERT INTO sample VALUES (1, 1, 0, 'Old', 1, '', ''), (2, 1, 1, 'New', 0, 'gluten', '');
"""


def test_the_url_comes_from_the_argument_then_the_environment_then_the_default(monkeypatch):
    monkeypatch.delenv("TRIALS_DB", raising=False)
    assert resolve_url() == "sqlite:///trials.db"
    monkeypatch.setenv("TRIALS_DB", "sqlite:///from-env.db")
    assert resolve_url() == "sqlite:///from-env.db"
    assert resolve_url("sqlite:///arg.db") == "sqlite:///arg.db"
    assert resolve_url("postgresql://u@h/db") == "postgresql+psycopg://u@h/db"


def test_every_sqlite_connection_has_wal_foreign_keys_and_a_busy_timeout(sqlite_url):
    store = open_store(sqlite_url)
    for _ in range(2):  # two pooled connections, checked out together
        with store.engine.connect() as a, store.engine.connect() as b:
            for conn in (a, b):
                assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
                assert conn.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
                # 5 s a wait (issue 15: a writer says the store is busy rather than hang)
                assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() == 5000
    store.close()


def test_a_fresh_store_records_the_current_schema_version_once(db_url):
    for _ in range(2):
        store = open_store(db_url)
        with store.engine.connect() as conn:
            rows = conn.execute(sa.text("SELECT version FROM schema_version")).scalars().all()
        store.close()
        assert rows == [SCHEMA_VERSION]


def test_a_version_1_database_is_upgraded_and_keeps_its_trials(tmp_path):
    path = tmp_path / "v1.db"
    with sqlite3.connect(path) as conn:
        conn.executescript(V1_DDL)
    store = open_store(f"sqlite:///{path}")
    with store.engine.connect() as conn:
        versions = conn.execute(
            sa.text("SELECT version, note FROM schema_version ORDER BY version")).all()
    assert [tuple(v) for v in versions] == [(1, "created"), (2, "study.product"),
                                            (3, "study.aim"), (4, "study.target_sample"),
                                            (5, "experiment, experiment_factor, experiment_run"),
                                            (6, "ballot_finish")]
    study = service.get_trial(store, 1)
    assert (study.name, study.objective, study.product, study.aim, study.target_sample) == (
        "Old trial", "kept from v1", "", "", "")
    assert [s.allergens for s in study.samples] == [(), ("gluten",)]
    service.update_trial(store, 1, by="test", product="brioche")
    assert service.get_trial(store, 1).product == "brioche"
    # version 4's column takes a target, one of the trial's samples
    service.update_trial(store, 1, by="test", target_sample="New")
    assert service.get_trial(store, 1).target_sample == "New"
    store.close()
    again = open_store(f"sqlite:///{path}")  # reopening applies nothing more
    with again.engine.connect() as conn:
        assert conn.execute(sa.text("SELECT count(*) FROM schema_version")).scalar() == 6
        # version 5's tables exist on the upgraded file
        names = set(sa.inspect(conn).get_table_names())
        assert {"experiment", "experiment_factor", "experiment_run"} <= names
        # version 6's table is there and empty
        assert conn.execute(sa.text("SELECT count(*) FROM ballot_finish")).scalar() == 0
    again.close()


def test_a_database_from_a_newer_program_or_a_foreign_one_is_refused(tmp_path):
    newer = tmp_path / "newer.db"
    with sqlite3.connect(newer) as conn:
        conn.executescript("CREATE TABLE schema_version (version INTEGER PRIMARY KEY, "
                           "applied_at DATETIME, note TEXT); "
                           "INSERT INTO schema_version VALUES (99, '2030-01-01', 'x');")
    with pytest.raises(TrialsError, match="schema version 99, newer"):
        open_store(f"sqlite:///{newer}")
    foreign = tmp_path / "foreign.db"
    with sqlite3.connect(foreign) as conn:
        conn.execute("CREATE TABLE study (x INTEGER)")
    with pytest.raises(TrialsError, match="no 'schema_version'"):
        open_store(f"sqlite:///{foreign}")


def test_a_bad_url_is_a_clear_error():
    with pytest.raises(TrialsError, match="not a database URL"):
        open_store("no url at all")
