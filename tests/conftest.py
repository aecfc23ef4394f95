"""Shared fixtures: a temporary SQLite store and, by marker, a PostgreSQL one.

``TRIALS_TEST_PG_URL`` names a PostgreSQL database (scripts/test.sh starts a throwaway
cluster and sets it). Where it is missing the PostgreSQL tests skip and say why; with
``TRIALS_REQUIRE_PG=1`` (set by .ci/run) a missing server is a failure instead.
"""

from __future__ import annotations

import os
import uuid

import pytest


def _pg_url_or_skip() -> str:
    url = os.environ.get("TRIALS_TEST_PG_URL")
    if url:
        return url
    message = "no PostgreSQL server: TRIALS_TEST_PG_URL is not set (scripts/test.sh starts one)"
    if os.environ.get("TRIALS_REQUIRE_PG"):
        pytest.fail(message + "; TRIALS_REQUIRE_PG=1 makes this a failure")
    pytest.skip(message)


@pytest.fixture
def sqlite_url(tmp_path) -> str:
    """A fresh SQLite file for one test."""
    return f"sqlite:///{tmp_path / 'trials.db'}"


@pytest.fixture
def pg_url() -> str:
    """A fresh, empty schema on the PostgreSQL test server, dropped afterwards."""
    import sqlalchemy as sa

    base = _pg_url_or_skip()
    schema = "t_" + uuid.uuid4().hex[:12]
    engine = sa.create_engine(base)
    with engine.begin() as conn:
        conn.execute(sa.text(f'CREATE SCHEMA "{schema}"'))
    sep = "&" if "?" in base else "?"
    yield f"{base}{sep}options=-csearch_path%3D{schema}"
    with engine.begin() as conn:
        conn.execute(sa.text(f'DROP SCHEMA "{schema}" CASCADE'))
    engine.dispose()


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def db_url(request) -> str:
    """Each store test runs on SQLite and on PostgreSQL."""
    if request.param == "sqlite":
        return request.getfixturevalue("sqlite_url")
    return request.getfixturevalue("pg_url")
