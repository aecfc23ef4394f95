"""AppTest fixtures: each test gets its own SQLite store named by TRIALS_DB."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
ENTRY = ROOT / "trials" / "app.py"
PAGES = ROOT / "pages"
TIMEOUT = 60  # seconds: the first import of statsmodels alone takes several here


@pytest.fixture
def app_db(tmp_path, monkeypatch) -> str:
    url = f"sqlite:///{tmp_path / 'app.db'}"
    monkeypatch.setenv("TRIALS_DB", url)
    monkeypatch.delenv("TRIALS_PASSCODE", raising=False)
    return url


@pytest.fixture
def demo_db(app_db) -> str:
    from trials import service

    service.seed_demo(service.open_store(app_db))
    return app_db


def page_test(name: str):
    """An AppTest that runs one screen of pages/ on its own, as a deep link would."""
    from streamlit.testing.v1 import AppTest

    return AppTest.from_file(str(PAGES / f"{name}.py"), default_timeout=TIMEOUT)


def entry_test():
    from streamlit.testing.v1 import AppTest

    return AppTest.from_file(str(ENTRY), default_timeout=TIMEOUT)
