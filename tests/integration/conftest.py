"""Fixtures of the store tests: an open store on each database of ``db_url``."""

from __future__ import annotations

import pytest

from trials import service


@pytest.fixture
def store(db_url):
    s = service.open_store(db_url)
    yield s
    s.close()
