"""AppTest fixtures: each test gets its own SQLite store named by TRIALS_DB."""

from __future__ import annotations

import re
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


@pytest.fixture(scope="session")
def _demo_template(tmp_path_factory) -> Path:
    """The demo store, seeded once per test run (seeding takes seconds here)."""
    from trials import service
    from trials.demo import seed_demo

    path = tmp_path_factory.mktemp("demo") / "demo.db"
    store = service.open_store(f"sqlite:///{path}")
    seed_demo(store)
    with store.engine.begin() as conn:
        conn.exec_driver_sql("PRAGMA wal_checkpoint(TRUNCATE)")
    store.close()
    return path


@pytest.fixture
def demo_db(app_db, _demo_template) -> str:
    """A private copy of the seeded demo store for one test."""
    import shutil

    shutil.copyfile(_demo_template, app_db.removeprefix("sqlite:///"))
    return app_db


def page_test(name: str):
    """An AppTest that runs one screen of pages/ on its own, as a deep link would."""
    from streamlit.testing.v1 import AppTest

    return AppTest.from_file(str(PAGES / f"{name}.py"), default_timeout=TIMEOUT)


def entry_test():
    from streamlit.testing.v1 import AppTest

    return AppTest.from_file(str(ENTRY), default_timeout=TIMEOUT)


def by_label(widgets, label: str):
    """The one widget of ``widgets`` whose label is ``label``."""
    found = [w for w in widgets if w.label == label]
    assert len(found) == 1, (
        f"expected one widget labelled {label!r}, found {[w.label for w in widgets]}")
    return found[0]


def shown(markdown: str) -> str:
    """What Markdown made by ``trials.ui.literal`` reads as on the screen: backslash
    escapes and the invisible word joiners dropped, hard line breaks as line breaks."""
    text = re.sub(r"\\([!-/:-@\[-`{-~])", r"\1", markdown).replace("\u2060", "")
    return text.replace("  \n", "\n")


def page_text(at) -> str:
    """Every piece of text a page shows (markdown, titles, captions, alerts, metrics, tables),
    as read on the screen (see :func:`shown`), so a check that a name is absent cannot be
    fooled by its escaped form."""
    parts = []
    for kind in ("title", "header", "subheader", "markdown", "caption", "text", "error",
                 "warning", "info", "success"):
        parts += [shown(str(getattr(x, "value", ""))) for x in getattr(at, kind)]
    parts += [shown(f"{m.label} {m.value}") for m in at.metric]
    parts += [shown(b.label) for b in at.button]
    for df in at.dataframe:
        parts.append(df.value.to_string())
    return "\n".join(parts)


@pytest.fixture
def small_trials(app_db):
    """Two small invented trials made through the service: a triangle (six panelists,
    plan drawn, no answers) and a rating of two samples on one scale (three panelists,
    plan drawn, no answers)."""
    import datetime as dt

    from trials import service
    from trials.model import Attribute, Sample

    store = service.open_store(app_db)
    for i in range(1, 7):
        service.add_panelist(store, f"T{i:02d}", consent_on=dt.date(2026, 1, 5))
    tri = service.create_trial(store, name="Pancake: buttermilk vs yoghurt", method="triangle",
                               pd=0.3, samples=[Sample("Buttermilk batter", is_control=True),
                                                Sample("Yoghurt batter")])
    service.draw_plan(store, tri.id, panelist_codes=[f"T{i:02d}" for i in range(1, 7)], seed=3)
    rat = service.create_trial(store, name="Flatbread: two flours", method="rating",
                               samples=[Sample("Spelt flatbread", is_control=True),
                                        Sample("Einkorn flatbread")],
                               attributes=[Attribute("overall liking", low=1, high=9)])
    service.draw_plan(store, rat.id, panelist_codes=["T01", "T02", "T03"], seed=5)
    return {"store": store, "triangle": tri.id, "rating": rat.id}
